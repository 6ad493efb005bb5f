#pragma once
// The integrator options of a driver run (switch-off, switch-on) from the description's analysis
// settings: tolerances, wall-time budget, and the energy tolerance scaled to ½·L·I² of the coil.
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/engine/transient.hpp"

namespace coilkick::drivers {

engine::TransientOptions driver_transient_options(const DriverSpec& spec, double stop_time_s, double coil_current_A);

}  // namespace coilkick::drivers
