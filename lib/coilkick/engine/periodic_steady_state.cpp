#include "coilkick/engine/periodic_steady_state.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <sstream>
#include <stdexcept>

#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/interrupt.hpp"

namespace coilkick::engine {
namespace {

// The coupled circuit states (not the energy accumulators).
Eigen::Index coupled_count(const Circuit& c) { return static_cast<Eigen::Index>(c.circuit_state_count()); }

struct Shooter {
  const Circuit& c;
  const TransientOptions& o;
  const PeriodicOptions& p;
  const std::vector<double> atol;
  const double t0;
  PeriodicSteadyState out;

  Shooter(const Circuit& circuit, const TransientOptions& options, const PeriodicOptions& periodic, double start_s)
      : c(circuit), o(options), p(periodic), atol(absolute_tolerances(circuit, options)), t0(start_s) {}

  Eigen::VectorXd map(const Eigen::VectorXd& x) {
    CircuitState s{t0, Eigen::VectorXd::Zero(static_cast<Eigen::Index>(c.state_count()))};
    s.values.head(x.size()) = x;
    ++out.period_runs;
    return period_map(c, s, o, p.period_s).values.head(x.size());
  }
  // Size of each state: the largest state of its kind seen so far (volts against volts, amperes
  // against amperes), at least a thousand absolute tolerances. It never shrinks, so that a step
  // towards a small current is not judged on a shrinking scale.
  // Grows with every state seen (a guess of zero has no size yet; its first period has).
  Eigen::VectorXd typical;
  void set_typical(const Eigen::VectorXd& x) {
    const auto& info = c.states();
    if (typical.size() != x.size()) typical = Eigen::VectorXd::Zero(x.size());
    for (Eigen::Index i = 0; i < x.size(); ++i) {
      double t = std::max(typical[i], 1e3 * atol[static_cast<std::size_t>(i)]);
      for (Eigen::Index j = 0; j < x.size(); ++j) {
        if (info[static_cast<std::size_t>(j)].unit == info[static_cast<std::size_t>(i)].unit) t = std::max(t, std::abs(x[j]));
      }
      typical[i] = t;
    }
  }
  // The error scale of the runs (absolute + relative tolerance of the typical size).
  double scaled_norm(const Eigen::VectorXd& v) const {
    double m = 0.0;
    for (Eigen::Index i = 0; i < v.size(); ++i) {
      m = std::max(m, std::abs(v[i]) / (atol[static_cast<std::size_t>(i)] + o.relative_tolerance * typical[i]));
    }
    return m;
  }
  // Finite-difference step of state i: a thousandth of its typical size, so that the runs' own
  // error (relative tolerance × size) stays a small part of the difference.
  double fd_step(Eigen::Index i) const { return 1e-3 * typical[i]; }

  bool shoot(Eigen::VectorXd& x) {
    const Eigen::Index n = x.size();
    Eigen::VectorXd fx = map(x);
    Eigen::VectorXd r = fx - x;
    for (int it = 0; it < p.maximum_newton_iterations; ++it) {
      throw_if_interrupted();
      set_typical(x);
      set_typical(fx);
      out.newton_iterations = it + 1;
      Eigen::MatrixXd jac(n, n);  // ∂Φ/∂x − I
      for (Eigen::Index j = 0; j < n; ++j) {
        Eigen::VectorXd xp = x;
        const double h = fd_step(j);
        xp[j] += h;
        jac.col(j) = (map(xp) - fx) / h;
        jac(j, j) -= 1.0;
      }
      const Eigen::VectorXd step = jac.fullPivLu().solve(-r);
      if (!step.allFinite()) return false;
      // Halving line search on the scaled residual.
      const double r_norm = scaled_norm(r);
      double lambda = 1.0;
      Eigen::VectorXd x_new, f_new, r_new;
      bool accepted = false;
      for (int ls = 0; ls < 8; ++ls, lambda *= 0.5) {
        x_new = x + lambda * step;
        f_new = map(x_new);
        r_new = f_new - x_new;
        if (scaled_norm(r_new) < r_norm || scaled_norm(lambda * step) <= p.tolerance_in_error_scales) {
          accepted = true;
          break;
        }
      }
      if (!accepted) return false;
      const double moved = scaled_norm(lambda * step);
      x = x_new;
      fx = f_new;
      r = r_new;
      out.distance_in_error_scales = moved;
      if (lambda == 1.0 && moved <= p.tolerance_in_error_scales) return true;
    }
    return false;
  }

  const std::chrono::steady_clock::time_point started = std::chrono::steady_clock::now();
  bool out_of_time() const {
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count() > p.maximum_wall_time_s;
  }

  bool direct(Eigen::VectorXd& x) {
    double previous_change = 0.0;
    for (long k = 0; k < p.maximum_direct_periods; ++k) {
      throw_if_interrupted();
      if (out_of_time()) {
        std::ostringstream m;
        m << "periodic steady state not reached within the wall-time budget of " << p.maximum_wall_time_s << " s (" << k
          << " periods simulated one by one, still moving by " << out.distance_in_error_scales << " error scales per period)";
        throw SimulationError(m.str());
      }
      const Eigen::VectorXd next = map(x);
      const double change = scaled_norm(next - x);
      // Distance left from the contraction ρ between periods: change·ρ/(1 − ρ).
      const double rho = previous_change > 0.0 ? change / previous_change : 1.0;
      const double left = rho < 1.0 ? change * rho / (1.0 - rho) : HUGE_VAL;
      x = next;
      previous_change = change;
      out.distance_in_error_scales = std::max(change, left);
      if (p.progress && k % 64 == 0) p.progress(static_cast<double>(k) / static_cast<double>(p.maximum_direct_periods));
      if (k >= 2 && out.distance_in_error_scales <= p.tolerance_in_error_scales) return true;
    }
    return false;
  }
};

}  // namespace

CircuitState period_map(const Circuit& c, const CircuitState& start, const TransientOptions& step_options, double period_s) {
  TransientOptions o = step_options;
  o.stop_time_s = start.time_s + period_s;
  o.record_waveforms = false;
  o.progress = nullptr;
  CircuitState s = start;
  s.values.tail(s.values.size() - coupled_count(c)).setZero();
  const TransientResult r = simulate(c, s, o);
  return {r.end_time_s(), r.states().row(r.states().rows() - 1).transpose()};
}

PeriodicSteadyState periodic_steady_state(const Circuit& c, const CircuitState& guess, const TransientOptions& step_options,
                                          const PeriodicOptions& options) {
  if (!(options.period_s > 0.0) || !std::isfinite(options.period_s)) {
    throw std::invalid_argument("periodic steady state: period_s must be finite and > 0");
  }
  check_state(c, guess);
  Shooter s(c, step_options, options, guess.time_s);
  Eigen::VectorXd x = guess.values.head(coupled_count(c));
  s.set_typical(x);
  bool done = false;
  if (options.allow_shooting) {
    Eigen::VectorXd trial = x;
    try {
      done = s.shoot(trial);
    } catch (const SimulationError& e) {
      s.out.note = std::string("a shooting period failed (") + e.what() + ")";
    }
    if (done) {
      s.out.method = PeriodicMethod::shooting;
    }
    // The direct periods go on from the last Newton iterate (closer than the guess, unless a
    // run failed).
    if (s.out.note.empty()) x = trial;
    if (!done) {
      std::ostringstream m;
      if (s.out.note.empty()) m << "shooting did not converge in " << s.out.newton_iterations << " Newton steps";
      else m << s.out.note;
      m << "; the periods were simulated one by one";
      s.out.note = m.str();
    }
  }
  if (!done) {
    s.out.method = PeriodicMethod::direct;
    if (!s.direct(x)) {
      std::ostringstream m;
      m << "periodic steady state not reached: " << (s.out.note.empty() ? "" : s.out.note + ", and ") << options.maximum_direct_periods
        << " periods of " << options.period_s << " s left the state moving by " << s.out.distance_in_error_scales
        << " error scales per period";
      throw SimulationError(m.str());
    }
  }
  s.out.state.time_s = guess.time_s;
  s.out.state.values = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(c.state_count()));
  s.out.state.values.head(x.size()) = x;
  return s.out;
}

}  // namespace coilkick::engine
