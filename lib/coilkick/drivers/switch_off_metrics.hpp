#pragma once
// Stage 4 of a switch-off: the named metrics (metrics.hpp, README "Metrics") and the waveforms
// of a finished transient. Energies are differences of the energy accumulators between the
// switch-off instant and the end of the run; a driver whose off-state does not block gets none
// (NaN): its conduction never ends, so a sum would only measure the simulated time.
#include <vector>

#include <Eigen/Dense>

#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/drivers/metrics.hpp"
#include "coilkick/drivers/off_state.hpp"
#include "coilkick/drivers/on_state.hpp"
#include "coilkick/engine/transient_result.hpp"

namespace coilkick::drivers {

struct SwitchOffWaveforms {
  Eigen::VectorXd time_s;            // accepted time points, from the run's start in the on-state (run_time_origin.hpp) to the end
  Eigen::VectorXd switch_voltage_V;  // across the switch (collector–emitter / drain–source magnitude)
  Eigen::VectorXd coil_current_A;
  Eigen::VectorXd clamp_current_A;   // through the first clamp part (0 if there is none)
  Eigen::VectorXd armature_gap_m;    // armature model only (empty otherwise)
};

struct SwitchOffMeasures {
  Metrics metrics;
  std::vector<double> clamp_part_energy_J;  // heat of each of BuiltDriver::clamp_parts (NaN: not measured)
};

SwitchOffMeasures measure_switch_off(const DriverSpec& spec, const BuiltDriver& b, const OnState& on, const OffState& off,
                                     const engine::TransientResult& r);

// The board's common clamp pin (BuiltDriver::common_clamp_element): its Zener's heat from t_off_s
// to the end (every channel that switches off in the run) and its peak current; NaN without one
// (energy NaN too where the off-state does not block).
void measure_common_clamp(const BuiltDriver& board, const engine::TransientResult& r, double t_off_s, bool blocks, Metrics& m);

SwitchOffWaveforms switch_off_waveforms(const BuiltDriver& b, const engine::TransientResult& r);

}  // namespace coilkick::drivers
