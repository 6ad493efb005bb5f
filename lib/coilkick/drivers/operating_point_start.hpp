#pragma once
// A driver's DC point solved from a point of a circuit of the same shape — a tolerance
// analysis's nominal point for each of its samples: Newton from there takes a few iterations
// instead of the dozens it takes from the cold guess.
#include <optional>

#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/state.hpp"

namespace coilkick::drivers {

// The on-state and the off point of one driver (switch_off.hpp solves both).
struct OperatingPoints {
  engine::CircuitState on, off;
};

// The DC point at time_s from `start`. Empty when there is no start, when it is of another
// circuit's shape, when Newton does not converge from it, or when it puts an armature on the
// other side of its make gap than the start (its two stable points are found from their own
// starts, relay/armature_operating_point.hpp) — the caller then solves from the cold guess, as
// without a start.
// Whether two circuits have the same states in the same order (a point of one can start the other:
// the same board at the two device levels).
bool same_state_names(const engine::Circuit& a, const engine::Circuit& b);

std::optional<engine::CircuitState> solve_from_start(const BuiltDriver& b, const engine::Circuit& c,
                                                     const engine::CircuitState* start, double time_s);

}  // namespace coilkick::drivers
