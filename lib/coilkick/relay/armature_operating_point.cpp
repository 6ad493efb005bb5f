#include "coilkick/relay/armature_operating_point.hpp"

#include <cmath>
#include <memory>
#include <optional>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

#include "coilkick/engine/state.hpp"

#include "coilkick/relay/armature_coil.hpp"
#include "coilkick/relay/armature_rest.hpp"

namespace coilkick::relay {

namespace {

// The magnet's pull goes with i² (F = ½·i²·dL/dg at a fixed gap), so the current that just
// balances the spring at the closed gap is |i|·√(spring / pull).
std::string not_held_message(const std::string& name, double current_A, double spring_N, double magnet_N) {
  std::ostringstream os;
  os.precision(3);
  os << "relay.armature_model: the on-state current of '" << name << "', " << std::abs(current_A) * 1e3
     << " mA, does not hold its armature closed";
  if (magnet_N < 0.0 && spring_N > 0.0) os << " (that needs " << std::abs(current_A) * std::sqrt(spring_N / -magnet_N) * 1e3 << " mA)";
  os << ": this driver never pulls the relay in, so there are no contacts to open. Check the switch's drive "
        "(switch_saturation_voltage_V, forced_beta without the armature model) and the supply";
  return os.str();
}

}  // namespace

engine::CircuitState operating_point_with_armatures_closed(const engine::Network& network, const engine::Circuit& circuit,
                                                           double time_s) {
  std::vector<const ArmatureCoil*> armatures;
  for (const auto& e : network.elements()) {
    if (const auto* arm = dynamic_cast<const ArmatureCoil*>(e.get())) armatures.push_back(arm);
  }
  if (armatures.empty()) return engine::solve_operating_point(circuit, time_s);
  const engine::Circuit held_circuit(with_armatures_held(network, [](const ArmatureCoil&) { return std::nan(""); }));
  engine::CircuitState guess = engine::solve_operating_point(held_circuit, time_s);
  // Start each armature at the stop penetration that carries its net holding force,
  // F_hold = k_s·p^1.5: there the stop's stiffness dominates the magnet's negative stiffness and
  // Newton converges to the closed solution. Below the release current there is none to find:
  // the armature starts at its open stop, the only solution left (a coil the driver does not
  // energise enough; require_armatures_closed tells an on-state so).
  for (const auto* arm : armatures) {
    const double i = guess.values[circuit.state_index(arm->name() + ".current")];
    const double rest = resting_gap_closed_m(arm->parameters(), i);
    guess.values[circuit.state_index(arm->name() + ".gap")] = std::isnan(rest) ? arm->parameters().mechanics.open_gap_m : rest;
  }
  return engine::solve_operating_point(circuit, guess);
}

std::optional<std::string> armature_not_held(const engine::Network& network, const engine::Circuit& circuit,
                                             const engine::CircuitState& on) {
  for (const auto& e : network.elements()) {
    const auto* arm = dynamic_cast<const ArmatureCoil*>(e.get());
    if (!arm) continue;
    const auto& m = arm->parameters().mechanics;
    if (on.values[circuit.state_index(arm->name() + ".gap")] < m.make_gap_m) continue;
    const double i = on.values[circuit.state_index(arm->name() + ".current")];
    return not_held_message(arm->name(), i, m.spring_force_N(m.residual_gap_m), arm->parameters().magnetic.force_N(i, m.residual_gap_m));
  }
  return std::nullopt;
}

void require_armatures_closed(const engine::Network& network, const engine::Circuit& circuit, const engine::CircuitState& on) {
  if (const auto message = armature_not_held(network, circuit, on)) throw std::invalid_argument(*message);
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
