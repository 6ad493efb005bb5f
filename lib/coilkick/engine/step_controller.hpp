#pragma once
// Error norm and step-size control of the transient: a per-state scale (absolute tolerance of
// the state's unit + relative tolerance × its size) in a max norm, and the predictive controller
// of Gustafsson (as in Hairer & Wanner, Solving ODEs II, 2nd ed., §IV.8) for the fourth-order step.
#include <vector>

#include <Eigen/Dense>

namespace coilkick::engine {

struct StepError {
  double norm = 0.0;     // max over states of |error| / scale; a step is accepted at <= 1
  bool finite = true;    // false: a state or its error became NaN or infinite
  int worst_state = 0;   // where the norm is largest (or the first non-finite one)
};

// Each state's scale is absolute + relative·(max(|x|, |x_new|) + dt·|ẋ|), ẋ at the step's start:
// a state that moves by a large amount within the step is judged relative to that movement, as
// odeint's default error checker does (its a_dxdt term). Measured on the reference switch-off:
// 52 → 44 steps at relative tolerance 1e-2 with the same errors against the tight reference.
StepError scaled_step_error(const Eigen::VectorXd& x, const Eigen::VectorXd& x_new, const Eigen::VectorXd& x_err,
                            const Eigen::VectorXd& rate, double dt, const std::vector<double>& absolute_tolerance,
                            double relative_tolerance);

class StepController {
 public:
  // The step to try after a rejection of `dt`.
  double after_rejection(double dt, const StepError& e);
  // The step to propose after accepting `dt` with error norm `err`. `proposed_dt`, where given:
  // the step was shortened from that, this controller's own proposal, to land on a target (a
  // corner, a change of piece, the stop). Then its predictive part, which reads the ratio of the
  // last two steps as its own answer to the error, stays out (a step of 1e-10 s cut to 5e-15 s
  // had shrunk the next one fivefold, and the next, below the minimum step), and after a
  // rejection the next step may grow back up to the proposal, not only to the cut step (a cut to
  // 1e-16 s after rejections had held every next step there: tests/engine/test_step_controller.cpp).
  double after_acceptance(double dt, double err, double proposed_dt = 0.0);

 private:
  double err_old_ = 1.0, dt_old_ = 0.0;
  bool last_rejected_ = false, first_accepted_ = true;
};

}  // namespace coilkick::engine
