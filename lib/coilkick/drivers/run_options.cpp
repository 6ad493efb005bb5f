#include "coilkick/drivers/run_options.hpp"

#include <algorithm>

namespace coilkick::drivers {

engine::TransientOptions driver_transient_options(const DriverSpec& spec, double stop_time_s, double coil_current_A) {
  engine::TransientOptions o;
  o.stop_time_s = stop_time_s;
  o.relative_tolerance = spec.analysis.relative_tolerance;
  o.voltage_tolerance_V = spec.analysis.voltage_tolerance_V;
  o.current_tolerance_A = spec.analysis.current_tolerance_A;
  o.energy_tolerance_J = std::max(1e-15, 1e-9 * 0.5 * spec.coil.inductance_H * coil_current_A * coil_current_A);
  o.maximum_wall_time_s = spec.analysis.maximum_wall_time_s;
  return o;
}

}  // namespace coilkick::drivers
