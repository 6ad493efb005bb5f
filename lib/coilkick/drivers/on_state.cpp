#include "coilkick/drivers/on_state.hpp"

#include <algorithm>
#include <cmath>

#include "coilkick/drivers/operating_point_start.hpp"
#include "coilkick/relay/armature_operating_point.hpp"

namespace coilkick::drivers {

double switch_voltage_V(const BuiltDriver& b, const engine::Circuit& c, double t_s, const double* x) {
  return SwitchVoltage(b, c)(t_s, x);
}

OnState solve_on_state(const DriverSpec& spec, const BuiltDriver& b, const engine::Circuit& c, const engine::CircuitState* start) {
  auto warm = solve_from_start(b, c, start, 0.0);
  const engine::CircuitState on = warm ? *warm : relay::operating_point_with_armatures_closed(b.network, c, 0.0);
  relay::require_armatures_closed(b.network, c, on);  // a switch-off of a relay that never operated means nothing
  return read_on_state(spec, b, c, on);
}

OnState read_on_state(const DriverSpec& spec, const BuiltDriver& b, const engine::Circuit& c, const engine::CircuitState& state) {
  OnState s;
  s.state = state;
  const double* x = s.state.values.data();
  engine::Workspace w = c.make_workspace();
  s.coil_current_A = x[c.state_index(b.local("coil.current"))];
  s.switch_voltage_V = switch_voltage_V(b, c, 0.0, x);
  const auto control = c.terminal_currents_A(c.element_index(b.switch_control_terminal_element), 0.0, x, w);
  s.drive_current_A = b.high_side || b.mosfet ? std::abs(control[1])
                                              : std::abs(c.terminal_currents_A(c.element_index(b.local("base_resistor")), 0.0, x, w)[0]);
  c.evaluate(0.0, 0.0, x, w, false);
  const auto& sources = c.voltage_sources();
  const auto logic = std::find_if(sources.begin(), sources.end(), [&](const auto& v) { return v.name == b.local("logic"); });
  s.logic_pin_current_A = std::abs(w.source_current_A[logic - sources.begin()]);
  const double vs = spec.supply.voltage_V;
  s.coil_voltage_V = b.high_side ? c.node_voltage_V(b.local("switch"), 0.0, x) : vs - c.node_voltage_V(b.local("switch"), 0.0, x);
  s.control_voltage_V = std::abs(c.node_voltage_V(b.local("base"), 0.0, x) - (b.high_side ? vs : 0.0));
  return s;
}

}  // namespace coilkick::drivers
