#pragma once
// One attempted step of the fourth-order L-stable Rosenbrock method with an embedded third-order
// error estimate and a third-order dense output — the coefficients of Boost.Odeint's
// rosenbrock4 (Hairer & Wanner, Solving ODEs II, 2nd ed., §IV.7) — in two implementations:
//
//  * rosenbrock4_blockwise (default): exploits the shape of the circuit ODE. Of the n states the
//    first `coupled` (node voltages, coil currents ...) couple among themselves; the rest are
//    energy accumulators (quadratures: nothing depends on them). Each stage solves one LU of
//    the coupled block only, the quadrature rows follow in closed form. Time enters as in the
//    autonomous form (see transient.cpp), so the result is odeint's up to rounding.
//  * rosenbrock4_odeint: Boost.Odeint's rosenbrock4 itself, on the autonomous system of n + 1
//    states with dense ublas linear algebra. Kept as the reference the blockwise stepper is
//    tested against (tests/engine/test_rosenbrock_step.cpp) and selectable for comparison.
//
// With the stage vectors g_i of an attempt from (x0, t0) to (x1, t1), the dense output is
//   x(s) = x0·(1 − s) + s·(x1 + (1 − s)·(c3 + s·c4)),   s = (t − t0)/(t1 − t0).
#include <Eigen/Dense>
#include <functional>
#include <memory>

namespace coilkick::engine {

enum class StepMethod { rosenbrock4_blockwise, rosenbrock4_odeint };

// What the caller evaluated at the step's start (rates, Jacobian with zero quadrature columns,
// and ∂ẋ/∂t), and how it evaluates the rates at a stage point (t, x).
struct StepStart {
  const Eigen::VectorXd& rate;
  const Eigen::MatrixXd& jacobian;
  const Eigen::VectorXd& time_rate;
};
using StageRates = std::function<void(double t_s, const double* x, double* rate)>;

class RosenbrockStep {
 public:
  virtual ~RosenbrockStep() = default;
  // One attempt from (x, t) over dt: the new states and the embedded error estimate.
  virtual void attempt(const Eigen::VectorXd& x, double t, double dt, const StepStart& start,
                       const StageRates& rates, Eigen::VectorXd& x_new, Eigen::VectorXd& x_err) = 0;
  // The dense-output vectors c3, c4 of the last attempt.
  virtual void dense_output(Eigen::VectorXd& c3, Eigen::VectorXd& c4) = 0;
};

// n states, of which the first `coupled` are not quadratures.
std::unique_ptr<RosenbrockStep> make_rosenbrock_step(StepMethod method, int n, int coupled);

}  // namespace coilkick::engine
