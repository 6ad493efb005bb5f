#pragma once
// A switch-off fitted to a bench capture: the chosen numeric scenario keys (coil.inductance,
// coil.resistance, coil.core_loss_resistance ...) adjusted by least squares (least_squares.hpp)
// so that the normal engine's coil current matches the capture's, each residual a run of the
// whole switch-off. Times: the capture's zero is its switch-voltage edge (capture.hpp), the
// model's the same point of its own switch voltage (half way from its first value to its peak,
// on the dense output), and the shift between the two is fitted with the keys (an edge found on
// a scope's samples is only as sharp as their spacing). Keys whose standard error is not below
// their value are reported as undetermined.
#include <string>
#include <vector>

#include "coilkick/analyses/least_squares.hpp"
#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/scenario/capture.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::analyses {

struct SwitchOffFit {
  std::vector<std::string> keys;
  LeastSquaresResult result;              // parameters and standard errors in the keys' SI units, then the time shift
  double time_shift_s = 0.0;              // fitted shift of the capture's clock against the model's edge
  double time_shift_error_s = 0.0;
  std::vector<std::string> undetermined;  // keys whose standard error is not below their value (or NaN)
  std::vector<double> model_current_A;    // at the capture's times, at the optimum
};

// current_noise_A: the capture's noise (weights 1/σ; the residual RMS is then about 1 for a
// good fit). Throws ScenarioError for unknown keys, std::invalid_argument for a capture without
// a current or a voltage channel or a time zero, engine::SimulationError for a run that fails.
SwitchOffFit fit_switch_off(const scenario::Scenario& s, const catalogue::Catalogue& parts, const scenario::Capture& capture,
                            const std::vector<std::string>& keys, double current_noise_A);

}  // namespace coilkick::analyses
