#pragma once
// One accepted step's dense output (rosenbrock_step.hpp) with its time derivative for probes
// that read rates. A copy stays valid after the step (events refine extrema after the run,
// EventLocator::finish).
#include <Eigen/Dense>

namespace coilkick::engine {

struct DenseStep {
  double t0 = 0.0, t1 = 0.0;
  Eigen::VectorXd x0, x1, c3, c4;

  // x and, unless `rate` is null, the dense output's time derivative.
  void at(double t, double* x, double* rate) const {
    const double h = t1 - t0, s = (t - t0) / h, s1 = 1.0 - s;
    for (Eigen::Index i = 0; i < x0.size(); ++i) x[i] = x0[i] * s1 + s * (x1[i] + s1 * (c3[i] + s * c4[i]));
    if (!rate) return;
    for (Eigen::Index i = 0; i < x0.size(); ++i) {
      rate[i] = (x1[i] - x0[i] + (1.0 - 2.0 * s) * c3[i] + s * (2.0 - 3.0 * s) * c4[i]) / h;
    }
  }
};

}  // namespace coilkick::engine
