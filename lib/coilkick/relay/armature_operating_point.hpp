#pragma once
// The DC operating point of a network whose relays have operated, or are released. An
// armature's force balance has two stable solutions for coil currents between release and
// operate current (the relay's hysteresis); a plain Newton iteration may land on either.
//  - closed: solves first with every armature held closed (ArmatureCoilParameters::hold_closed),
//    then frees them from that state, so the iteration starts next to the closed solution;
//  - open: starts every armature at its open stop.
// Networks without an armature coil get the plain operating point.
#include "coilkick/engine/network.hpp"
#include "coilkick/engine/operating_point.hpp"

namespace coilkick::relay {

engine::CircuitState operating_point_with_armatures_closed(const engine::Network& network, const engine::Circuit& circuit,
                                                           double time_s);
engine::CircuitState operating_point_with_armatures_open(const engine::Network& network, const engine::Circuit& circuit,
                                                         double time_s);

}  // namespace coilkick::relay
