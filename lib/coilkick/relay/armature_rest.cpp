#include "coilkick/relay/armature_rest.hpp"

#include <cmath>
#include <limits>
#include <memory>

namespace coilkick::relay {

double resting_gap_closed_m(const ArmatureCoilParameters& p, double current_A) {
  const auto& m = p.mechanics;
  const double closing = -(m.spring_force_N(m.residual_gap_m) + p.magnetic.force_N(current_A, m.residual_gap_m));
  if (!(closing > 0.0)) return std::numeric_limits<double>::quiet_NaN();
  return m.residual_gap_m - std::pow(closing / m.stop_stiffness_N_per_m1_5, 2.0 / 3.0);
}

double resting_gap_open_m(const ArmatureCoilParameters& p, double current_A) {
  const auto& m = p.mechanics;
  const double opening = m.spring_force_N(m.open_gap_m) + p.magnetic.force_N(current_A, m.open_gap_m);
  if (!(opening > 0.0)) return std::numeric_limits<double>::quiet_NaN();
  return m.open_gap_m + std::pow(opening / m.stop_stiffness_N_per_m1_5, 2.0 / 3.0);
}

engine::Network with_armatures_held(const engine::Network& network, const std::function<double(const ArmatureCoil&)>& gap_of) {
  engine::Network held = network;
  for (const auto& e : network.elements()) {
    const auto* arm = dynamic_cast<const ArmatureCoil*>(e.get());
    if (!arm) continue;
    ArmatureCoilParameters p = arm->parameters();
    p.hold_closed = true;
    p.hold_gap_m = gap_of(*arm);
    held.replace(arm->name(), std::make_shared<ArmatureCoil>(arm->name(), arm->terminals()[0], arm->terminals()[1], p));
  }
  return held;
}

}  // namespace coilkick::relay
