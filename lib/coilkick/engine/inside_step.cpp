#include "coilkick/engine/inside_step.hpp"

#include <algorithm>
#include <limits>
#include <memory>

#include "coilkick/engine/step_controller.hpp"

namespace coilkick::engine {

void InsideStep::hold(const std::vector<unsigned char>& pieces) {
  if (pieces.empty()) return;
  sys_.w.pieces = pieces;
  sys_.w.hold_pieces = true;
}

bool InsideStep::integrate(const DenseStep& d, const std::vector<unsigned char>& pieces, double t_end, double cap_from, double cap,
                           Eigen::VectorXd& x, std::vector<DenseStep>* sub_steps) {
  const Eigen::Index n = d.x0.size();
  x = d.x0;
  Eigen::VectorXd x_new(n), x_err(n);
  double tc = d.t0, h = t_end - tc;
  StepController control;
  sys_.full_time = std::numeric_limits<double>::quiet_NaN();  // the cached point may hold other pieces
  bool settled = true;
  for (int attempts = 0; tc < t_end; ++attempts) {
    if (attempts == kAttempts) {
      settled = false;
      break;
    }
    const double limit = tc < cap_from ? cap_from : std::min(t_end, tc + cap);
    const bool lands = h >= limit - tc;
    if (lands) h = limit - tc;
    sys_.step_start = tc;
    hold(pieces);
    sys_.full_evaluation(x, tc);
    stepper_.attempt(x, tc, h, {sys_.full_rate, sys_.full_jacobian, sys_.full_time_rate}, stage_rates_, x_new, x_err);
    sys_.w.hold_pieces = false;
    const StepError e = scaled_step_error(x, x_new, x_err, sys_.full_rate, h, atol_, rtol_);
    if (!e.finite || e.norm > 1.0) {
      h = control.after_rejection(h, e);
      continue;
    }
    const double t_next = lands ? limit : tc + h;
    if (sub_steps) {
      DenseStep s;
      s.t0 = tc;
      s.t1 = t_next;
      s.x0 = x;
      s.x1 = x_new;
      stepper_.dense_output(s.c3, s.c4);
      sub_steps->push_back(std::move(s));
    }
    x.swap(x_new);
    tc = t_next;
    h = control.after_acceptance(h, e.norm);
  }
  sys_.full_time = std::numeric_limits<double>::quiet_NaN();
  return settled;
}

void InsideStep::state_at(const DenseStep& d, const std::vector<unsigned char>& pieces, double t, double* x, double* rates) {
  Eigen::VectorXd xs;
  if (!integrate(d, pieces, t, d.t0, std::numeric_limits<double>::infinity(), xs, nullptr)) d.at(t, xs.data(), nullptr);
  std::copy(xs.data(), xs.data() + xs.size(), x);
  if (!rates) return;
  sys_.step_start = d.t0;
  hold(pieces);
  sys_.stage_rates(t, x, rates);
  sys_.w.hold_pieces = false;
}

EventLocator::Interpolant InsideStep::finer(const DenseStep& d, const std::vector<unsigned char>& pieces, double a, double b) {
  auto subs = std::make_shared<std::vector<DenseStep>>();
  Eigen::VectorXd x;
  if (!integrate(d, pieces, b, a, (b - a) / kFinerSubSteps, x, subs.get()) || subs->empty()) subs->assign(1, d);
  OdeSystem* sys = &sys_;
  const double t0 = d.t0;
  return [subs, sys, t0](double t, double* xo, double* ro) {
    auto it = std::lower_bound(subs->begin(), subs->end(), t, [](const DenseStep& s, double tq) { return s.t1 < tq; });
    if (it == subs->end()) --it;
    it->at(t, xo, nullptr);
    if (!ro) return;
    sys->step_start = t0;
    sys->stage_rates(t, xo, ro);
  };
}

}  // namespace coilkick::engine
