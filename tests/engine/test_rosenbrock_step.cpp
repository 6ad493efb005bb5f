// The blockwise Rosenbrock step against Boost.Odeint's rosenbrock4 (the same method on dense
// linear algebra, an implementation outside this project), and its order of accuracy against
// a closed-form solution.
// Method: fourth-order L-stable Rosenbrock method with embedded third-order estimate — Hairer &
// Wanner, "Solving Ordinary Differential Equations II", 2nd ed. (Springer 1996), §IV.7: the
// local error of an order-4 method falls as h⁵.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "coilkick/coilkick.hpp"
#include "coilkick/engine/rosenbrock_step.hpp"

using namespace coilkick::engine;

namespace {
// A stiff, nonlinear, explicitly time-dependent test system: three coupled states and two
// quadratures (nothing depends on them), as the circuit ODE with its energy accumulators.
//   ẋ0 = −1e4·(x0 − sin 3t) + x1·x2,   ẋ1 = x0 − x1³,   ẋ2 = −50·x2 + t·x0
//   q̇0 = x0²,                           q̇1 = x1·x2 + t
struct TestSystem {
  static void rates(double t, const double* x, double* f) {
    f[0] = -1e4 * (x[0] - std::sin(3 * t)) + x[1] * x[2];
    f[1] = x[0] - x[1] * x[1] * x[1];
    f[2] = -50 * x[2] + t * x[0];
    f[3] = x[0] * x[0];
    f[4] = x[1] * x[2] + t;
  }
  static void start(double t, const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd& j, Eigen::VectorXd& ft) {
    f.resize(5);
    rates(t, x.data(), f.data());
    j = Eigen::MatrixXd::Zero(5, 5);
    j(0, 0) = -1e4, j(0, 1) = x[2], j(0, 2) = x[1];
    j(1, 0) = 1, j(1, 1) = -3 * x[1] * x[1];
    j(2, 0) = t, j(2, 2) = -50;
    j(3, 0) = 2 * x[0];
    j(4, 1) = x[2], j(4, 2) = x[1];
    ft = Eigen::VectorXd::Zero(5);
    ft[0] = 3e4 * std::cos(3 * t);
    ft[2] = x[0];
    ft[4] = 1;
  }
};

struct Attempt {
  Eigen::VectorXd x_new, x_err, c3, c4;
};

Attempt attempt(StepMethod method, const Eigen::VectorXd& x, double t, double dt) {
  Eigen::VectorXd f, ft;
  Eigen::MatrixXd j;
  TestSystem::start(t, x, f, j, ft);
  auto step = make_rosenbrock_step(method, 5, 3);
  Attempt a{Eigen::VectorXd(5), Eigen::VectorXd(5), {}, {}};
  step->attempt(x, t, dt, {f, j, ft}, TestSystem::rates, a.x_new, a.x_err);
  step->dense_output(a.c3, a.c4);
  return a;
}

void check_close(const Eigen::VectorXd& a, const Eigen::VectorXd& b, double eps) {
  REQUIRE(a.size() == b.size());
  for (Eigen::Index i = 0; i < a.size(); ++i) {
    CAPTURE(i);
    CHECK(a[i] == rel_or_abs(b[i], eps, eps));
  }
}
}  // namespace

TEST_CASE("blockwise Rosenbrock step equals Boost.Odeint's rosenbrock4 on a stiff time-dependent system") {
  Eigen::VectorXd x(5);
  x << 0.2, 0.8, -0.3, 0.0, 0.0;
  for (double dt : {1e-5, 1e-3, 3e-2}) {  // from non-stiff (h·1e4 = 0.1) to very stiff (300)
    CAPTURE(dt);
    const Attempt b = attempt(StepMethod::rosenbrock4_blockwise, x, 0.7, dt);
    const Attempt o = attempt(StepMethod::rosenbrock4_odeint, x, 0.7, dt);
    // The same formula; only the order of rounding differs (block LU against a dense LU of the
    // autonomous system, condition ~1e4): agreement to 1e-10 of each value (or absolute, near 0).
    check_close(b.x_new, o.x_new, 1e-10);
    check_close(b.x_err, o.x_err, 1e-10 * b.x_new.cwiseAbs().maxCoeff());
    // odeint's dense vectors are recovered from its interpolant (two samples), which costs a few
    // more digits on small values.
    check_close(b.c3, o.c3, 1e-8 * b.x_new.cwiseAbs().maxCoeff());
    check_close(b.c4, o.c4, 1e-8 * b.x_new.cwiseAbs().maxCoeff());
  }
}

TEST_CASE("blockwise Rosenbrock step: local error falls as h^5 with explicit time dependence and quadrature") {
  // ẋ = −k·(x − cos t), q̇ = x. Exact: x = A·e^(−kt) + (k²·cos t + k·sin t)/(k² + 1),
  // q = −(A/k)·e^(−kt) + (k²·sin t − k·cos t)/(k² + 1) + const (integrating by hand).
  const double k = 50.0, amp = 0.4;
  auto xs = [&](double t) { return amp * std::exp(-k * t) + (k * k * std::cos(t) + k * std::sin(t)) / (k * k + 1); };
  auto qs = [&](double t) { return -amp / k * std::exp(-k * t) + (k * k * std::sin(t) - k * std::cos(t)) / (k * k + 1); };
  auto rates = [&](double t, const double* x, double* f) {
    f[0] = -k * (x[0] - std::cos(t));
    f[1] = x[0];
  };
  const double t0 = 0.02;
  auto local_error = [&](double h) {
    Eigen::VectorXd x(2), f(2), ft(2), x_new(2), x_err(2);
    x << xs(t0), 0.0;
    rates(t0, x.data(), f.data());
    Eigen::MatrixXd j(2, 2);
    j << -k, 0, 1, 0;
    ft << -k * std::sin(t0), 0;
    auto step = make_rosenbrock_step(StepMethod::rosenbrock4_blockwise, 2, 1);
    step->attempt(x, t0, h, {f, j, ft}, rates, x_new, x_err);
    return std::array<double, 2>{std::abs(x_new[0] - xs(t0 + h)), std::abs(x_new[1] - (qs(t0 + h) - qs(t0)))};
  };
  const auto e1 = local_error(2e-3), e2 = local_error(1e-3);
  // Ratio 2⁵ = 32 in the asymptotic range; k·h = 0.1 and 0.05 leave a few per cent of higher
  // terms, so accept 24..40 (an order-3 error would give 16, order 5 would give 64).
  CHECK(e1[0] / e2[0] > 24.0);
  CHECK(e1[0] / e2[0] < 40.0);
  CHECK(e1[1] / e2[1] > 24.0);
  CHECK(e1[1] / e2[1] < 40.0);
}

TEST_CASE("a whole transient with either step implementation gives the same waveform") {
  // Coil switched into a capacitor (invented values): an RLC ring-down with a ramped source, so
  // the stages see explicit time dependence.
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::edge(12.0, 6.0, 1e-4, 2e-4));
  net.add_coil("coil", "supply", "sw", {0.6, 400.0});
  net.add_capacitor("c", "sw", Network::ground, 100e-9);
  net.add_resistor("r", "sw", Network::ground, 1e5);
  const Circuit c(net);
  CircuitState s0 = zero_state(c, 0.0);
  set_state(c, s0, "coil.current", 0.03);
  TransientOptions o;
  o.stop_time_s = 3e-3;
  o.relative_tolerance = 1e-9;
  auto run = [&](StepMethod m) {
    o.step_method = m;
    return simulate(c, s0, o, {EventSpec::maximum("peak", Probe::node_voltage(c, "sw"))});
  };
  const auto b = run(StepMethod::rosenbrock4_blockwise);
  const auto d = run(StepMethod::rosenbrock4_odeint);
  // Rounding differences may shift the step sequence; each run is within its error control
  // (1e-9 relative per step), so the results agree well inside 1e-7.
  CHECK(b.event("peak").value == rel(d.event("peak").value).epsilon(1e-7));
  CHECK(*b.event("peak").time_s == rel(*d.event("peak").time_s).epsilon(1e-7));
  CHECK(b.sample(2.5e-3)[c.state_index("coil.current")] ==
        rel_or_abs(d.sample(2.5e-3)[c.state_index("coil.current")], 1e-7, 1e-12));
  CHECK(std::abs(b.energy().balance_error) < 1e-8);  // energies: the quadrature rows
}
