#include "coilkick/drivers/operating_point_start.hpp"

#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/operating_point.hpp"

namespace coilkick::drivers {

bool same_state_names(const engine::Circuit& a, const engine::Circuit& b) {
  if (a.states().size() != b.states().size()) return false;
  for (std::size_t i = 0; i < a.states().size(); ++i) {
    if (a.states()[i].name != b.states()[i].name) return false;
  }
  return true;
}

std::optional<engine::CircuitState> solve_from_start(const BuiltDriver& b, const engine::Circuit& c,
                                                     const engine::CircuitState* start, double time_s) {
  if (!start || start->values.size() != c.state_count()) return std::nullopt;
  // An armature has two stable points between its release and operate currents: a point found
  // from the start counts only on the start's side of the make gap (closed stays closed, open
  // stays open); on the other side the caller's own start for that side decides.
  const int gap = b.armature ? c.state_index(b.local("coil.gap")) : -1;
  const auto closed = [&](const engine::CircuitState& x) { return x.values[gap] < b.armature->mechanics.make_gap_m; };
  const auto same_side = [&](engine::CircuitState x) -> std::optional<engine::CircuitState> {
    if (gap >= 0 && closed(x) != closed(*start)) return std::nullopt;
    return x;
  };
  engine::CircuitState guess = *start;
  guess.time_s = time_s;
  // The start has no nodes' minimum conductance where the circuit needs none
  // (engine/operating_point.hpp): Newton without it first, then as a cold solve would.
  engine::OperatingPointOptions exact;
  exact.minimum_conductance_S = 0.0;
  exact.maximum_iterations = 20;  // from a neighbouring solution a handful; failing fast otherwise
  try {
    return same_side(engine::solve_by_newton(c, guess, exact));
  } catch (const engine::SimulationError&) {
  }
  try {
    return same_side(engine::solve_operating_point(c, guess));
  } catch (const engine::SimulationError&) {
    return std::nullopt;
  }
}

}  // namespace coilkick::drivers
