#pragma once
// The circuit as the transient's stepper sees it: full evaluations (rates, Jacobian, ∂ẋ/∂t),
// each point evaluated once, and stage rates. `step_start` is the start of the step being
// attempted: waveform slopes are taken from the segment between it and the evaluation time, so
// a step ending on a corner uses the slope before the corner.
#include <algorithm>
#include <limits>
#include <vector>

#include <Eigen/Dense>

#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/transient_result.hpp"

namespace coilkick::engine {

struct OdeSystem {
  const Circuit& circuit;
  Workspace& w;
  SolverStatistics& stats;
  double step_start = 0.0;

  double slope_time(double t) const { return t > step_start ? 0.5 * (step_start + t) : t; }

  // The last full evaluation and the point it was taken at: a step's start after a rejected
  // attempt, and an accepted end point (recorded, probed, then the next step's start), are each
  // evaluated once. A full evaluation is always at a step's start or end, so its waveform slopes
  // are those at t itself.
  Eigen::VectorXd full_at;
  double full_time = std::numeric_limits<double>::quiet_NaN();
  Eigen::VectorXd full_rate, full_time_rate;
  Eigen::MatrixXd full_jacobian;
  std::vector<unsigned char> full_pieces;  // the pieces it decided (Circuit::choose_pieces)

  void full_evaluation(const Eigen::VectorXd& x, double t) {
    if (full_time == t && full_at.size() == x.size() && full_at == x) return;
    circuit.evaluate(t, t, x.data(), w, true);
    ++stats.jacobian_evaluations;
    full_at = x;
    full_time = t;
    full_rate = w.rate;
    full_time_rate = w.time_rate;
    full_jacobian = w.jacobian;
    if (!w.pieces.empty()) full_pieces = w.pieces;
  }
  // Rates at a stage of the step being attempted, or at a point inside an accepted step however
  // long ago (events): no corner lies inside a step, so the slope time falls in t's segment.
  void stage_rates(double t, const double* x, double* rate) {
    circuit.evaluate(t, slope_time(t), x, w, false);
    ++stats.rate_evaluations;
    std::copy(w.rate.data(), w.rate.data() + w.rate.size(), rate);
  }
};

}  // namespace coilkick::engine
