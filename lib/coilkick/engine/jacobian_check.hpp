#pragma once
// Test and debugging utility: compares the analytic Jacobian (∂ẋ/∂x) and time derivative
// (∂ẋ/∂t) of a circuit with central finite differences. Never used in the integration path.
#include <string>

#include "coilkick/engine/circuit.hpp"

namespace coilkick::engine {

struct JacobianComparison {
  // Largest |analytic − numeric| / scale over all entries, where scale is the largest
  // analytic magnitude in the entry's row (so tiny entries are judged against their row).
  double worst_error = 0.0;
  int row = -1, column = -1;  // column = -1: the time-derivative column
  double analytic = 0.0, numeric = 0.0;
  std::string row_name, column_name;
};

// Evaluated at (t, x); t must not sit on a waveform corner.
JacobianComparison compare_jacobian(const Circuit& circuit, double t_s, const double* x);

}  // namespace coilkick::engine
