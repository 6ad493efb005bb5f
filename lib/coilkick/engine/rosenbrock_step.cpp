#include "coilkick/engine/rosenbrock_step.hpp"

#include "coilkick/engine/small_lu.hpp"

#include <array>
#include <boost/numeric/odeint/stepper/rosenbrock4.hpp>

namespace coilkick::engine {
namespace {

using Coefficients = boost::numeric::odeint::default_rosenbrock_coefficients<double>;

// The method on the block structure. In the autonomous form (time as state n + 1 with
// dτ/dt = 1, ∂ẋ/∂t as the Jacobian's last column) the stage equations (I/(γh) − J)·g = r split:
//   time:        g_t = γh·r_t
//   coupled:     (I/(γh) − J_cc)·g_c = r_c + (∂ẋ_c/∂t)·g_t                  (one LU per attempt)
//   quadrature:  g_q = γh·(r_q + J_qc·g_c + (∂ẋ_q/∂t)·g_t)
class Blockwise final : public RosenbrockStep {
 public:
  Blockwise(int n, int coupled)
      : n_(n), nc_(coupled), a_(coupled, coupled), xtmp_(n), f_(n), r_(n), rc_(coupled), rq_(n - coupled) {
    for (auto& g : g_) g = Eigen::VectorXd::Zero(n);
  }

  void attempt(const Eigen::VectorXd& x, double t, double dt, const StepStart& s,
               const StageRates& rates, Eigen::VectorXd& x_new, Eigen::VectorXd& x_err) override {
    const Coefficients& k = k_;
    const double h = dt, gh = k.gamma * h;
    a_ = -s.jacobian.topLeftCorner(nc_, nc_);
    a_.diagonal().array() += 1.0 / gh;
    lu_.compute(a_);
    auto solve = [&](const Eigen::VectorXd& r, double rt, Eigen::VectorXd& g) {
      const double gt = gh * rt;
      rc_.noalias() = r.head(nc_) + s.time_rate.head(nc_) * gt;
      lu_.solve_in_place(rc_);
      g.head(nc_) = rc_;
      const int nq = n_ - nc_;
      quadrature_product(s.jacobian, g, rq_);
      g.tail(nq) = gh * (r.tail(nq) + rq_ + s.time_rate.tail(nq) * gt);
      return gt;
    };
    auto stage = [&](double tau) { rates(tau, xtmp_.data(), f_.data()); };
    auto& [g1, g2, g3, g4, g5] = g_;
    const double gt1 = solve(s.rate, 1.0, g1);

    xtmp_ = x + k.a21 * g1;
    stage(t + k.a21 * gt1);
    r_ = f_ + (k.c21 / h) * g1;
    const double gt2 = solve(r_, 1.0 + k.c21 * gt1 / h, g2);

    xtmp_ = x + k.a31 * g1 + k.a32 * g2;
    stage(t + k.a31 * gt1 + k.a32 * gt2);
    r_ = f_ + (k.c31 * g1 + k.c32 * g2) / h;
    const double gt3 = solve(r_, 1.0 + (k.c31 * gt1 + k.c32 * gt2) / h, g3);

    xtmp_ = x + k.a41 * g1 + k.a42 * g2 + k.a43 * g3;
    stage(t + k.a41 * gt1 + k.a42 * gt2 + k.a43 * gt3);
    r_ = f_ + (k.c41 * g1 + k.c42 * g2 + k.c43 * g3) / h;
    const double gt4 = solve(r_, 1.0 + (k.c41 * gt1 + k.c42 * gt2 + k.c43 * gt3) / h, g4);

    xtmp_ = x + k.a51 * g1 + k.a52 * g2 + k.a53 * g3 + k.a54 * g4;
    const double t5 = t + k.a51 * gt1 + k.a52 * gt2 + k.a53 * gt3 + k.a54 * gt4;
    stage(t5);
    r_ = f_ + (k.c51 * g1 + k.c52 * g2 + k.c53 * g3 + k.c54 * g4) / h;
    const double gt5 = solve(r_, 1.0 + (k.c51 * gt1 + k.c52 * gt2 + k.c53 * gt3 + k.c54 * gt4) / h, g5);

    xtmp_ += g5;
    stage(t5 + gt5);
    r_ = f_ + (k.c61 * g1 + k.c62 * g2 + k.c63 * g3 + k.c64 * g4 + k.c65 * g5) / h;
    solve(r_, 1.0 + (k.c61 * gt1 + k.c62 * gt2 + k.c63 * gt3 + k.c64 * gt4 + k.c65 * gt5) / h, x_err);
    x_new = xtmp_ + x_err;
  }

  void dense_output(Eigen::VectorXd& c3, Eigen::VectorXd& c4) override {
    const Coefficients& k = k_;
    const auto& [g1, g2, g3, g4, g5] = g_;
    c3 = k.d21 * g1 + k.d22 * g2 + k.d23 * g3 + k.d24 * g4 + k.d25 * g5;
    c4 = k.d31 * g1 + k.d32 * g2 + k.d33 * g3 + k.d34 * g4 + k.d35 * g5;
  }

 private:
  // rq = J_qc·g_c (the quadrature rows' Jacobian times the coupled block), by columns in plain
  // loops: the same sums in the same order as the general product, without its call's cost on
  // these few rows.
  void quadrature_product(const Eigen::MatrixXd& j, const Eigen::VectorXd& g, Eigen::VectorXd& rq) const {
    const int nq = n_ - nc_;
    const Eigen::Index ld = j.rows();
    double* out = rq.data();
    for (int i = 0; i < nq; ++i) out[i] = 0.0;
    for (int c = 0; c < nc_; ++c) {
      const double gc = g[c];
      const double* col = j.data() + c * ld + nc_;
      for (int i = 0; i < nq; ++i) out[i] += col[i] * gc;
    }
  }

  const Coefficients k_;
  int n_, nc_;
  Eigen::MatrixXd a_;
  SmallLu lu_;
  std::array<Eigen::VectorXd, 5> g_;
  Eigen::VectorXd xtmp_, f_, r_, rc_, rq_;
};

// Boost.Odeint's rosenbrock4 on the autonomous system (states then time). Its own ∂f/∂t
// argument stays zero: odeint 1.74 mishandles it — measured on ẋ = k·(t − t0), the one-step
// error fell only as dt² — while the autonomous form is integrated exactly.
class WithOdeint final : public RosenbrockStep {
  using Vector = boost::numeric::ublas::vector<double>;
  using Matrix = boost::numeric::ublas::matrix<double>;

 public:
  explicit WithOdeint(int n) : n_(static_cast<std::size_t>(n)), x_(n_ + 1), x_new_(n_ + 1), x_err_(n_ + 1), x_dense_(n_ + 1) {}

  void attempt(const Eigen::VectorXd& x, double t, double dt, const StepStart& s,
               const StageRates& rates, Eigen::VectorXd& x_new, Eigen::VectorXd& x_err) override {
    const std::size_t n = n_;
    for (std::size_t i = 0; i < n; ++i) x_[i] = x[static_cast<Eigen::Index>(i)];
    x_[n] = t;
    t0_ = t;
    t1_ = t + dt;
    auto f = [&](const Vector& xa, Vector& dxdt, double) {
      if (&xa == &x_) {  // the start: evaluated by the caller
        for (std::size_t i = 0; i < n; ++i) dxdt[i] = s.rate[static_cast<Eigen::Index>(i)];
      } else {
        rates(xa[n], &xa[0], &dxdt[0]);
      }
      dxdt[n] = 1.0;
    };
    auto jac = [&](const Vector&, Matrix& j, double, Vector& dfdt) {
      // Every entry of j and dfdt is written: the buffer still holds the previous LU factors.
      const auto nn = static_cast<Eigen::Index>(n);
      Eigen::Map<Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>> jm(&j.data()[0], nn + 1, nn + 1);
      jm.topLeftCorner(nn, nn) = s.jacobian;
      jm.col(nn).head(nn) = s.time_rate;
      jm.row(nn).setZero();
      for (std::size_t i = 0; i < dfdt.size(); ++i) dfdt[i] = 0.0;
    };
    stepper_.do_step(std::make_pair(f, jac), x_, t, x_new_, dt, x_err_);
    for (std::size_t i = 0; i < n; ++i) {
      x_new[static_cast<Eigen::Index>(i)] = x_new_[i];
      x_err[static_cast<Eigen::Index>(i)] = x_err_[i];
    }
  }

  // odeint keeps its dense-output vectors private: recovered from its interpolant at s = 1/3
  // and 2/3 (the interpolant is cubic in s, so this is exact up to rounding).
  void dense_output(Eigen::VectorXd& c3, Eigen::VectorXd& c4) override {
    stepper_.prepare_dense_output();
    const std::size_t n = n_;
    Eigen::VectorXd y[2] = {Eigen::VectorXd(static_cast<Eigen::Index>(n)), Eigen::VectorXd(static_cast<Eigen::Index>(n))};
    for (int q = 0; q < 2; ++q) {
      const double sq = (q + 1) / 3.0;
      stepper_.calc_state(t0_ + sq * (t1_ - t0_), x_dense_, x_, t0_, x_new_, t1_);
      for (std::size_t i = 0; i < n; ++i) {
        y[q][static_cast<Eigen::Index>(i)] = (x_dense_[i] - x_[i] * (1.0 - sq) - sq * x_new_[i]) / (sq * (1.0 - sq));
      }
    }
    c4 = 3.0 * (y[1] - y[0]);
    c3 = y[0] - c4 / 3.0;
  }

 private:
  std::size_t n_;
  boost::numeric::odeint::rosenbrock4<double> stepper_;
  Vector x_, x_new_, x_err_, x_dense_;
  double t0_ = 0.0, t1_ = 0.0;
};

}  // namespace

std::unique_ptr<RosenbrockStep> make_rosenbrock_step(StepMethod method, int n, int coupled) {
  if (method == StepMethod::rosenbrock4_odeint) return std::make_unique<WithOdeint>(n);
  return std::make_unique<Blockwise>(n, coupled);
}

}  // namespace coilkick::engine
