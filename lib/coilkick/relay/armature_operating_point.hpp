#pragma once
// The DC operating point of a network whose relays have operated, or are released. An
// armature's force balance has two stable solutions for coil currents between release and
// operate current (the relay's hysteresis); a plain Newton iteration may land on either.
//  - closed: solves first with every armature held closed (ArmatureCoilParameters::hold_closed),
//    then frees them from that state, so the iteration starts next to the closed solution;
//  - open: starts every armature at its open stop.
// Networks without an armature coil get the plain operating point.
// armature_not_held: for an on-state whose armature rests open (the driver does not energise the
// coil enough to hold it), a message naming relay.armature_model, the coil's current and the
// current that would hold it; require_armatures_closed throws it as std::invalid_argument.
#include <optional>
#include <string>

#include "coilkick/engine/network.hpp"
#include "coilkick/engine/operating_point.hpp"

namespace coilkick::relay {

engine::CircuitState operating_point_with_armatures_closed(const engine::Network& network, const engine::Circuit& circuit,
                                                           double time_s);
std::optional<std::string> armature_not_held(const engine::Network& network, const engine::Circuit& circuit,
                                             const engine::CircuitState& on);
void require_armatures_closed(const engine::Network& network, const engine::Circuit& circuit, const engine::CircuitState& on);
engine::CircuitState operating_point_with_armatures_open(const engine::Network& network, const engine::Circuit& circuit,
                                                         double time_s);

}  // namespace coilkick::relay
