#pragma once
// The switch-on of a driver with the armature model, for the operate time (IEC 61810-1: from
// energising the coil to the make contact closing, bounce excluded): from the off state (drive
// low, armature resting on its open stop) the drive rises at drive.switch_off_at_s over
// drive.rise_time_s; the run ends when the armature reaches the contact's make position.
#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"

namespace coilkick::drivers {

// Seconds from the start of the drive's rising edge to contact make; NaN if the contact does not
// make within 20 data-sheet operate times (the coil current stays below pick-up). Requires
// built.armature. Throws engine::SimulationError if the run fails.
double simulate_operate_time_s(const DriverSpec& spec, const BuiltDriver& built);

}  // namespace coilkick::drivers
