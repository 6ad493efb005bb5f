#pragma once
// Nonlinear least squares for fits to bench captures: Levenberg–Marquardt with the damping
// scaled by the diagonal of JᵀJ (Nocedal & Wright, Numerical Optimization, 2nd ed., §10.3;
// section from memory), the Jacobian by forward differences on each parameter's own scale, and the parameters' standard errors from the Jacobian at the
// optimum: covariance s²·(JᵀJ)⁻¹ with s² the residual sum of squares over (residuals −
// parameters) — the usual linearised estimate (e.g. Press et al., Numerical Recipes, 3rd ed.,
// §15.5; section from memory).
#include <functional>
#include <string>
#include <vector>

#include <Eigen/Dense>

namespace coilkick::analyses {

struct LeastSquaresProblem {
  Eigen::VectorXd initial;  // parameter start values
  Eigen::VectorXd scale;    // each parameter's typical size (finite differences and the trust region)
  // Fills the (weighted) residuals at the parameters; their count never changes. Throwing ends
  // the fit with that error.
  std::function<void(const Eigen::VectorXd& parameters, Eigen::VectorXd& residuals)> residuals;
};

struct LeastSquaresOptions {
  int maximum_iterations = 100;
  double relative_step_tolerance = 1e-10;  // converged when a step moves every scaled parameter less
  double relative_reduction_tolerance = 1e-12;  // ... or the sum of squares falls by less than this
  // ... or by less than this in absolute terms: for residuals weighted by their noise, a fall of
  // 1e-3 in the sum (χ²) is statistically nothing (0 = off).
  double absolute_reduction_tolerance = 0.0;
  double difference_step = 1e-6;           // forward-difference step, relative to each scale
  // Called after each iteration with its number (from 1) and the sum of squares reached.
  std::function<void(int iteration, double sum_of_squares)> on_iteration;
};

struct LeastSquaresResult {
  Eigen::VectorXd parameters;
  Eigen::VectorXd standard_errors;  // NaN where the fit cannot tell the parameter (singular JᵀJ)
  Eigen::MatrixXd covariance;
  double sum_of_squares = 0.0;
  double residual_rms = 0.0;
  int iterations = 0;
  int evaluations = 0;
  bool converged = false;
  std::string message;
};

// Throws std::invalid_argument for an ill-posed problem (no parameters, fewer residuals than
// parameters, sizes that disagree, non-finite start or scale).
LeastSquaresResult levenberg_marquardt(const LeastSquaresProblem& problem, const LeastSquaresOptions& options = {});

}  // namespace coilkick::analyses
