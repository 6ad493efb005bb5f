#pragma once
// A snapshot of all states of a circuit at one instant, with named access.
#include <Eigen/Dense>
#include <string>

#include "coilkick/engine/circuit.hpp"

namespace coilkick::engine {

struct CircuitState {
  double time_s = 0.0;
  Eigen::VectorXd values;  // Circuit::states() order; energy accumulators start at 0
};

// All states zero at time_s.
CircuitState zero_state(const Circuit& circuit, double time_s);
// Zero except the internal states that declare an operating-point guess.
CircuitState guess_state(const Circuit& circuit, double time_s);
// Sets one state by name (e.g. "valve.current", "node:sw"); throws for unknown names.
void set_state(const Circuit& circuit, CircuitState& state, const std::string& name, double value);
double get_state(const Circuit& circuit, const CircuitState& state, const std::string& name);
// Throws std::invalid_argument if the size is wrong or a value is not finite.
void check_state(const Circuit& circuit, const CircuitState& state);

}  // namespace coilkick::engine
