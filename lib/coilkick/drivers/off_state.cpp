#include "coilkick/drivers/off_state.hpp"

#include <cmath>
#include <sstream>

#include "coilkick/drivers/operating_point_start.hpp"
#include "coilkick/drivers/si_format.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/relay/armature_operating_point.hpp"

namespace coilkick::drivers {

engine::CircuitState solve_off_point(const DriverSpec& spec, const BuiltDriver& b, const engine::Circuit& c,
                                     const engine::CircuitState* start) {
  const double t = last_edge_end_s(spec);  // every drive has reached its low level
  if (auto warm = solve_from_start(b, c, start, t)) return *warm;
  // Relays released is the usual off-state; where the coil stays energised (a shorted switch) the
  // armature stays operated, and Newton is started from that side instead.
  engine::CircuitState off;
  try {
    off = relay::operating_point_with_armatures_open(b.network, c, t);
  } catch (const engine::SimulationError& released_failed) {
    if (!b.armature) throw;
    try {
      off = relay::operating_point_with_armatures_closed(b.network, c, t);
    } catch (const engine::SimulationError&) {
      throw released_failed;
    }
  }
  return off;
}

OffState read_off_state(const DriverSpec& spec, const BuiltDriver& b, const engine::Network& board, const engine::Circuit& c,
                        const engine::CircuitState& off, double on_coil_current_A) {
  OffState s;
  const double t = off.time_s;
  const double* x = off.values.data();
  s.coil_current_A = x[c.state_index(b.local("coil.current"))];
  if (std::abs(s.coil_current_A) < kBlockingCurrentFraction * std::abs(on_coil_current_A)) return s;
  s.blocks = false;
  // Name the part that carries it: the switch or clamp element with the largest current.
  engine::Workspace w = c.make_workspace();
  std::string who;
  double most = -1.0, across = 0.0;
  std::vector<std::string> candidates = b.switch_elements;
  candidates.insert(candidates.end(), b.clamp_elements.begin(), b.clamp_elements.end());
  for (const auto& name : candidates) {
    const int e = c.element_index(name);
    const double i = std::abs(c.terminal_currents_A(e, t, x, w)[0]);
    if (i > most) {
      const auto& terms = board.element(name).terminals();
      most = i;
      who = name;
      across = std::abs(c.node_voltage_V(terms[0], t, x) - c.node_voltage_V(terms[terms.size() > 2 ? 2 : 1], t, x));
    }
  }
  std::ostringstream o;
  o << "with the drive off the supply (" << format_si(spec.supply.voltage_V, "V") << ") still drives "
    << format_si(std::abs(s.coil_current_A), "A") << " through the coil ("
    << std::lround(100.0 * std::abs(s.coil_current_A / on_coil_current_A)) << " % of the on-state current)";
  if (!who.empty()) o << "; '" << who << "' conducts " << format_si(most, "A") << " at " << format_si(across, "V");
  o << ": the driver does not block the supply, so the coil never de-energises";
  s.reason = o.str();
  return s;
}

}  // namespace coilkick::drivers
