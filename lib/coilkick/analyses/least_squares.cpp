#include "coilkick/analyses/least_squares.hpp"

#include <cmath>
#include <limits>
#include <stdexcept>

#include "coilkick/engine/interrupt.hpp"

namespace coilkick::analyses {
namespace {

struct Evaluator {
  const LeastSquaresProblem& p;
  int count = 0;
  Eigen::VectorXd operator()(const Eigen::VectorXd& x) {
    Eigen::VectorXd r;
    p.residuals(x, r);
    ++count;
    if (!r.allFinite()) throw std::invalid_argument("least squares: a residual is not finite at these parameters");
    return r;
  }
};

}  // namespace

LeastSquaresResult levenberg_marquardt(const LeastSquaresProblem& problem, const LeastSquaresOptions& o) {
  const Eigen::Index n = problem.initial.size();
  if (n == 0) throw std::invalid_argument("least squares: no parameters to fit");
  if (problem.scale.size() != n) throw std::invalid_argument("least squares: one scale per parameter is needed");
  if (!problem.initial.allFinite() || !problem.scale.allFinite() || (problem.scale.array() <= 0.0).any()) {
    throw std::invalid_argument("least squares: start values must be finite and scales finite and > 0");
  }
  if (!problem.residuals) throw std::invalid_argument("least squares: no residual function");
  Evaluator f{problem};
  LeastSquaresResult out;
  Eigen::VectorXd x = problem.initial;
  Eigen::VectorXd r = f(x);
  const Eigen::Index m = r.size();
  if (m < n) throw std::invalid_argument("least squares: fewer residuals than parameters");
  auto jacobian = [&](const Eigen::VectorXd& at, const Eigen::VectorXd& r_at) {
    Eigen::MatrixXd j(m, n);
    for (Eigen::Index k = 0; k < n; ++k) {
      Eigen::VectorXd xp = at;
      const double h = o.difference_step * std::max(std::abs(at[k]), problem.scale[k]);
      xp[k] += h;
      Eigen::VectorXd rp = f(xp);
      if (rp.size() != m) throw std::invalid_argument("least squares: the residual count changed between evaluations");
      j.col(k) = (rp - r_at) / h;
    }
    return j;
  };
  double ss = r.squaredNorm();
  double mu = -1.0;  // damping; set from the first JᵀJ
  Eigen::MatrixXd j = jacobian(x, r);
  for (int it = 0; it < o.maximum_iterations; ++it) {
    engine::throw_if_interrupted();
    out.iterations = it + 1;
    const Eigen::MatrixXd a = j.transpose() * j;
    const Eigen::VectorXd g = j.transpose() * r;
    // Scaled damping: the damping term uses the diagonal of JᵀJ.
    Eigen::VectorXd d = a.diagonal().cwiseMax(1e-300);
    if (mu < 0.0) mu = 1e-3 * d.maxCoeff();
    bool improved = false;
    for (int tries = 0; tries < 30; ++tries) {
      Eigen::MatrixXd damped = a;
      damped.diagonal() += (mu / d.maxCoeff()) * d;
      const Eigen::VectorXd step = damped.ldlt().solve(-g);
      if (!step.allFinite()) {
        mu *= 10.0;
        continue;
      }
      const Eigen::VectorXd x_new = x + step;
      Eigen::VectorXd r_new;
      try {
        r_new = f(x_new);
      } catch (const std::invalid_argument&) {
        mu *= 10.0;  // outside where the model can be evaluated: a shorter step
        continue;
      }
      const double ss_new = r_new.squaredNorm();
      if (ss_new < ss) {
        const double reduction = (ss - ss_new) / std::max(ss, std::numeric_limits<double>::min());
        const double ss_before = ss;
        const double moved = (step.array() / x_new.array().abs().max(problem.scale.array())).abs().maxCoeff();
        x = x_new;
        r = r_new;
        ss = ss_new;
        mu = std::max(mu / 3.0, 1e-300);
        improved = true;
        if (moved < o.relative_step_tolerance || reduction < o.relative_reduction_tolerance ||
            ss_before - ss_new < o.absolute_reduction_tolerance) {
          out.converged = true;
        }
        break;
      }
      mu *= 4.0;
    }
    if (!improved) {
      // No step lowers the sum any more: at a minimum to the precision of the residuals.
      out.converged = true;
      out.message = "no step lowers the sum of squares further";
    }
    j = jacobian(x, r);
    if (o.on_iteration) o.on_iteration(out.iterations, ss);
    if (out.converged) break;
  }
  if (!out.converged) out.message = "not converged in " + std::to_string(o.maximum_iterations) + " iterations";
  out.parameters = x;
  out.sum_of_squares = ss;
  out.residual_rms = std::sqrt(ss / static_cast<double>(m));
  out.evaluations = f.count;
  // (JᵀJ)⁻¹ in parameters scaled to their typical sizes: a henry, kilohms and milliseconds side
  // by side make JᵀJ's entries span many decades, and the rank test must see the shape of the
  // problem, not its units.
  const Eigen::VectorXd size = x.array().abs().max(problem.scale.array()).matrix();
  const Eigen::MatrixXd js = j * size.asDiagonal();
  const Eigen::MatrixXd a = js.transpose() * js;
  const double s2 = m > n ? ss / static_cast<double>(m - n) : std::numeric_limits<double>::quiet_NaN();
  Eigen::FullPivLU<Eigen::MatrixXd> lu(a);
  lu.setThreshold(1e-12);
  out.standard_errors = Eigen::VectorXd::Constant(n, std::numeric_limits<double>::quiet_NaN());
  if (lu.isInvertible()) {
    out.covariance = s2 * size.asDiagonal() * lu.inverse() * size.asDiagonal();
    for (Eigen::Index k = 0; k < n; ++k) out.standard_errors[k] = std::sqrt(std::max(0.0, out.covariance(k, k)));
  } else {
    out.covariance = Eigen::MatrixXd::Constant(n, n, std::numeric_limits<double>::quiet_NaN());
  }
  return out;
}

}  // namespace coilkick::analyses
