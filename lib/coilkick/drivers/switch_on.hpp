#pragma once
// The switch-on: from the off state (drive low, armature resting on its open stop) the drive
// rises at drive.switch_off_at_s over drive.rise_time_s. Two uses: the operate time (IEC 61810-1:
// from energising the coil to the make contact closing, bounce excluded), where the run ends at
// contact make, and a switch-on waveform over a given span (a fit to a bench capture of the
// switch-on, with or without the armature model).
#include <memory>

#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/engine/transient_result.hpp"

namespace coilkick::drivers {

// Seconds from the start of the drive's rising edge to contact make; NaN if the contact does not
// make within 20 data-sheet operate times (the coil current stays below pick-up). Requires
// built.armature. Throws engine::SimulationError if the run fails.
double simulate_operate_time_s(const DriverSpec& spec, const BuiltDriver& built);

struct SwitchOnRun {
  std::shared_ptr<const engine::TransientResult> transient;  // from 0 to the edge + span
  double edge_time_s = 0.0;                                   // start of the drive's rising edge
  double make_time_s = 0.0;  // contact make after edge_time_s; NaN without armature or no make in the span
};

// The switch-on over span_s after the start of the drive's rising edge, the waveforms recorded;
// the armature (if the driver has one) moves freely through make. Throws engine::SimulationError
// if the run fails, std::invalid_argument for a span that is not > 0.
SwitchOnRun simulate_switch_on(const DriverSpec& spec, const BuiltDriver& built, double span_s);

}  // namespace coilkick::drivers
