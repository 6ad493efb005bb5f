#include "coilkick/relay/armature_operating_point.hpp"

#include <cmath>
#include <memory>
#include <vector>

#include "coilkick/engine/state.hpp"

#include "coilkick/relay/armature_coil.hpp"

namespace coilkick::relay {

engine::CircuitState operating_point_with_armatures_closed(const engine::Network& network, const engine::Circuit& circuit,
                                                           double time_s) {
  engine::Network held = network;
  std::vector<const ArmatureCoil*> armatures;
  for (const auto& e : network.elements()) {
    const auto* arm = dynamic_cast<const ArmatureCoil*>(e.get());
    if (!arm) continue;
    ArmatureCoilParameters p = arm->parameters();
    p.hold_closed = true;
    held.replace(arm->name(), std::make_shared<ArmatureCoil>(arm->name(), arm->terminals()[0], arm->terminals()[1], p));
    armatures.push_back(arm);
  }
  if (armatures.empty()) return engine::solve_operating_point(circuit, time_s);
  const engine::Circuit held_circuit(held);
  engine::CircuitState guess = engine::solve_operating_point(held_circuit, time_s);
  // Start each armature at the stop penetration that carries its net holding force,
  // F_hold = k_s·p^1.5: there the stop's stiffness dominates the magnet's negative stiffness and
  // Newton converges to the closed solution. Below the release current there is none to find.
  for (const auto* arm : armatures) {
    const auto& m = arm->parameters().mechanics;
    const double i = guess.values[circuit.state_index(arm->name() + ".current")];
    const double hold = -(m.spring_force_N(m.residual_gap_m) + arm->parameters().magnetic.force_N(i, m.residual_gap_m));
    const double p = hold > 0.0 ? std::pow(hold / m.stop_stiffness_N_per_m1_5, 2.0 / 3.0) : 0.0;
    guess.values[circuit.state_index(arm->name() + ".gap")] = m.residual_gap_m - p;
  }
  return engine::solve_operating_point(circuit, guess);
}

engine::CircuitState operating_point_with_armatures_open(const engine::Network& network, const engine::Circuit& circuit,
                                                         double time_s) {
  engine::CircuitState guess = engine::guess_state(circuit, time_s);
  for (const auto& e : network.elements()) {
    if (const auto* arm = dynamic_cast<const ArmatureCoil*>(e.get())) {
      guess.values[circuit.state_index(arm->name() + ".gap")] = arm->parameters().mechanics.open_gap_m;
    }
  }
  return engine::solve_operating_point(circuit, guess);
}

}  // namespace coilkick::relay
