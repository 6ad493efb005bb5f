#include "coilkick/engine/state.hpp"

#include <cmath>
#include <sstream>
#include <stdexcept>

namespace coilkick::engine {

CircuitState zero_state(const Circuit& circuit, double time_s) {
  CircuitState s;
  s.time_s = time_s;
  s.values = Eigen::VectorXd::Zero(circuit.state_count());
  return s;
}

CircuitState guess_state(const Circuit& circuit, double time_s) {
  CircuitState s = zero_state(circuit, time_s);
  for (int i = 0; i < circuit.circuit_state_count(); ++i) s.values[i] = circuit.states()[static_cast<std::size_t>(i)].operating_point_guess;
  return s;
}

void set_state(const Circuit& circuit, CircuitState& state, const std::string& name, double value) {
  if (!std::isfinite(value)) throw std::invalid_argument("state '" + name + "': value must be finite");
  state.values[circuit.state_index(name)] = value;
}

double get_state(const Circuit& circuit, const CircuitState& state, const std::string& name) {
  return state.values[circuit.state_index(name)];
}

void check_state(const Circuit& circuit, const CircuitState& state) {
  if (state.values.size() != circuit.state_count()) {
    std::ostringstream m;
    m << "state: expected " << circuit.state_count() << " values, got " << state.values.size();
    throw std::invalid_argument(m.str());
  }
  if (!std::isfinite(state.time_s)) throw std::invalid_argument("state: time_s must be finite");
  for (int i = 0; i < state.values.size(); ++i) {
    if (!std::isfinite(state.values[i])) {
      throw std::invalid_argument("state: '" + circuit.states()[static_cast<std::size_t>(i)].name +
                                  "' is not finite");
    }
  }
}

}  // namespace coilkick::engine
