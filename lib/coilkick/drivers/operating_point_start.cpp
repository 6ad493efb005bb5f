#include "coilkick/drivers/operating_point_start.hpp"

#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/operating_point.hpp"

namespace coilkick::drivers {

std::optional<engine::CircuitState> solve_from_start(const BuiltDriver& b, const engine::Circuit& c,
                                                     const engine::CircuitState* start, double time_s) {
  if (!start || b.armature || start->values.size() != c.state_count()) return std::nullopt;
  engine::CircuitState guess = *start;
  guess.time_s = time_s;
  // The start has no nodes' minimum conductance where the circuit needs none
  // (engine/operating_point.hpp): Newton without it first, then as a cold solve would.
  engine::OperatingPointOptions exact;
  exact.minimum_conductance_S = 0.0;
  exact.maximum_iterations = 20;  // from a neighbouring solution a handful; failing fast otherwise
  try {
    return engine::solve_by_newton(c, guess, exact);
  } catch (const engine::SimulationError&) {
  }
  try {
    return engine::solve_operating_point(c, guess);
  } catch (const engine::SimulationError&) {
    return std::nullopt;
  }
}

}  // namespace coilkick::drivers
