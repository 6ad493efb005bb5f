#include "coilkick/engine/step_controller.hpp"

#include <algorithm>
#include <cmath>

namespace coilkick::engine {

StepError scaled_step_error(const Eigen::VectorXd& x, const Eigen::VectorXd& x_new, const Eigen::VectorXd& x_err,
                            const Eigen::VectorXd& rate, double dt, const std::vector<double>& absolute_tolerance,
                            double relative_tolerance) {
  StepError e;
  for (Eigen::Index i = 0; i < x.size(); ++i) {
    if (!std::isfinite(x_new[i]) || !std::isfinite(x_err[i])) {
      e.finite = false;
      e.worst_state = static_cast<int>(i);
      return e;
    }
    const double sk = absolute_tolerance[static_cast<std::size_t>(i)] + relative_tolerance * (std::max(std::abs(x[i]), std::abs(x_new[i])) + dt * std::abs(rate[i]));
    const double r = std::abs(x_err[i]) / sk;
    if (r > e.norm) {
      e.norm = r;
      e.worst_state = static_cast<int>(i);
    }
  }
  return e;
}

double StepController::after_rejection(double dt, const StepError& e) {
  last_rejected_ = true;
  return dt * (e.finite ? std::max(0.2, 0.9 * std::pow(e.norm, -0.25)) : 0.25);
}

double StepController::after_acceptance(double dt, double err, double proposed_dt) {
  const bool cut_short = proposed_dt > dt;
  double fac = std::max(1.0 / 6.0, std::min(5.0, std::pow(err, 0.25) / 0.9));
  if (!first_accepted_ && !cut_short && dt_old_ > 0.0) {
    const double pred = std::max(1.0 / 6.0, std::min(5.0, (dt_old_ / dt) * std::pow(err * err / err_old_, 0.25) / 0.9));
    fac = std::max(fac, pred);
  }
  double dt_next = dt / fac;
  if (last_rejected_) dt_next = std::min(dt_next, cut_short ? proposed_dt : dt);
  first_accepted_ = false;
  last_rejected_ = false;
  dt_old_ = dt;
  err_old_ = std::max(0.01, err);
  return dt_next;
}

}  // namespace coilkick::engine
