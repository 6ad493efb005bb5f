#pragma once
// Where an armature rests on one of its stops, and networks whose armatures are held there.
//  - resting_gap_closed_m: the gap at which the armature, pressed onto its closed stop by the net
//    force at this coil current (magnet minus springs), is carried by the stop: the residual gap
//    less the Hertz penetration (F/k_s)^(2/3) (armature_coil.hpp); NaN where the springs win (the
//    current does not hold the armature closed).
//  - resting_gap_open_m: the same on the open (back) stop, where the springs push the armature
//    against the magnet; NaN where the magnet wins.
//  - with_armatures_held: the network with every armature coil held at the gap `gap_of` gives it
//    (ArmatureCoilParameters::hold_closed; NaN: the residual gap). The states keep their names
//    and order, so a state of one network is a state of the other.
#include <functional>

#include "coilkick/engine/network.hpp"
#include "coilkick/relay/armature_coil.hpp"

namespace coilkick::relay {

double resting_gap_closed_m(const ArmatureCoilParameters& p, double current_A);
double resting_gap_open_m(const ArmatureCoilParameters& p, double current_A);
engine::Network with_armatures_held(const engine::Network& network, const std::function<double(const ArmatureCoil&)>& gap_of);

}  // namespace coilkick::relay
