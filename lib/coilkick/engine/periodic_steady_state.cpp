#include "coilkick/engine/periodic_steady_state.hpp"

#include <algorithm>
#include <chrono>
#include <complex>
#include <cmath>
#include <sstream>
#include <stdexcept>

#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/interrupt.hpp"

namespace coilkick::engine {
namespace {

// A converged shooting whose largest multiplier of one period exceeds 1 by more than this is a
// periodic state that repels (see the header). The sensitivities are finite differences of
// 1e-5 of each state's size along replayed steps (Shooter::fd_step), good to ~1e-5 of the
// multipliers; a slowly decaying coil's multiplier is e^(−T·R/L), just below 1.
constexpr double kRepellingMultiplier = 1.0 + 1e-3;
// A converged shooting's state: one period moves it by at most this many times the tolerance (a
// last Newton step within the tolerance leaves a residual of (Φ − I) times what is left, a few
// tolerances at most; integration noise adds less).
constexpr double kResidualOfConverged = 10.0;
// The periods one by one are given up as not settling where the largest change of one window of
// this many periods is no smaller than the window's before and far above the tolerance (more than
// kUnsettledScales times it): a period map that contracts, however slowly, makes each window's
// largest change smaller than the last (a coil of τ = 6,000 periods: by 15 %), whereas a response
// that repeats only every few periods, or never (a pwl driver whose pieces chatter), keeps its
// changes. Measured on such a driver (campaign seed 1675): ~5e5 error scales per period, with the
// ratios between periods from 0.1 to 3.8, for 27,000 periods until the wall-time budget ran out.
constexpr long kSettleWindow = 1000;
constexpr double kUnsettledScales = 100.0;

// The coupled circuit states (not the energy accumulators).
Eigen::Index coupled_count(const Circuit& c) { return static_cast<Eigen::Index>(c.circuit_state_count()); }

// The direct periods' changes, state by state in error scales, over the last
// kContractionBaseline periods; and the distance left, state by state, from each state's own
// contraction over a baseline of periods (kContractionBaseline at most, half the periods run): a
// slow mode (a coil whose L/R is thousands of periods) moves its state by little each period, and
// while a faster mode still decays in another state, the largest change's ratio between two
// periods is the fast mode's — read alone it had taken a coil 5e-6 short of its periodic state as arrived (tested). Only a
// state that has moved the same way for kCoherentPeriods periods counts: one whose changes
// flip sign is at the runs' noise (or turns with a complex pair of multipliers, which the
// largest change's ratio still judges). docs/derivations.md, "Coil under a square-wave drive",
// section "When the periods one by one have arrived".
struct DirectPeriodChanges {
  static constexpr long kContractionBaseline = 1000;
  static constexpr int kCoherentPeriods = 8;
  static constexpr long kLeastJudgedPeriods = 2 * kCoherentPeriods;  // before any arrival with changes left
  std::vector<Eigen::VectorXd> ring = std::vector<Eigen::VectorXd>(kContractionBaseline + 1);
  long periods = 0;  // recorded
  Eigen::VectorXd last;
  std::vector<int> streak;
  // Period k's change d (k = 0, 1, ... in turn); returns its largest, in error scales.
  template <class Scales>
  double record(long k, const Eigen::VectorXd& d, const Scales& sc) {
    periods = k + 1;
    if (streak.size() != static_cast<std::size_t>(d.size())) streak.assign(static_cast<std::size_t>(d.size()), 0);
    for (Eigen::Index i = 0; i < d.size(); ++i) {
      auto& n = streak[static_cast<std::size_t>(i)];
      n = last.size() == d.size() && d[i] != 0.0 && (d[i] > 0.0) == (last[i] > 0.0) ? n + 1 : 0;
    }
    last = d;
    Eigen::VectorXd& now = scaled_ago(0);
    now.resize(d.size());
    for (Eigen::Index i = 0; i < d.size(); ++i) now[i] = std::abs(d[i]) / sc.scale_of(i);
    return largest_ago(0);
  }
  // The scaled change of `ago` periods before the last recorded (ago ≤ kContractionBaseline).
  Eigen::VectorXd& scaled_ago(long ago) { return ring[static_cast<std::size_t>((periods - 1 - ago) % (kContractionBaseline + 1))]; }
  const Eigen::VectorXd& scaled_ago(long ago) const { return ring[static_cast<std::size_t>((periods - 1 - ago) % (kContractionBaseline + 1))]; }
  double largest_ago(long ago) const {
    double m = 0.0;
    if (periods > ago) {
      for (const double v : scaled_ago(ago)) m = std::max(m, v);
    }
    return m;
  }
  // The largest distance left of the last recorded period's states.
  double left() const {
    const long baseline = std::min(kContractionBaseline, (periods - 1) / 2);
    if (baseline < 1) return 0.0;
    const Eigen::VectorXd& now = scaled_ago(0);
    const Eigen::VectorXd& then = scaled_ago(baseline);
    double worst = 0.0;
    for (Eigen::Index i = 0; i < now.size(); ++i) {
      if (now[i] == 0.0 || streak[static_cast<std::size_t>(i)] < kCoherentPeriods) continue;
      const double rho = then[i] > 0.0 ? std::pow(now[i] / then[i], 1.0 / static_cast<double>(baseline)) : HUGE_VAL;
      worst = std::max(worst, rho < 1.0 ? now[i] * rho / (1.0 - rho) : HUGE_VAL);
    }
    return worst;
  }
};

struct Shooter {
  const Circuit& c;
  const TransientOptions& o;
  const PeriodicOptions& p;
  const std::vector<double> atol;
  const double t0;
  PeriodicSteadyState out;

  Shooter(const Circuit& circuit, const TransientOptions& options, const PeriodicOptions& periodic, double start_s)
      : c(circuit), o(options), p(periodic), atol(absolute_tolerances(circuit, options)), t0(start_s) {}

  // A Newton iterate far from any periodic state the circuit settles in (a node pushed past a
  // junction's breakdown by a linear step) can make a period take millions of tiny steps: a
  // period is given a hundred times the attempts of the first one (at least 20,000), and fails
  // past that like any run (shooting then gives way to the periods one by one). The budget is
  // set by the first period shot (the direct periods keep the run's own budget), and every run
  // gets what is left of the wall-time budget.
  static constexpr long kStepBudgetFactor = 100, kLeastStepBudget = 20'000;
  long step_budget = o.maximum_steps;

  // One period from x; `steps` (if given) receives the run's step times, and `replay` (if
  // non-empty) makes the run take exactly those steps.
  Eigen::VectorXd map(const Eigen::VectorXd& x, std::vector<double>* steps = nullptr, const std::vector<double>& replay = {}) {
    CircuitState s{t0, Eigen::VectorXd::Zero(static_cast<Eigen::Index>(c.state_count()))};
    s.values.head(x.size()) = x;
    ++out.period_runs;
    TransientOptions run = o;
    run.stop_time_s = t0 + p.period_s;
    run.record_waveforms = steps != nullptr;
    run.progress = nullptr;
    run.replay_step_times_s = replay;
    run.maximum_wall_time_s = std::max(p.maximum_wall_time_s - elapsed_s(), 1e-3);
    run.maximum_steps = std::min(run.maximum_steps, step_budget);
    const TransientResult r = run_period(s, run);
    if (steps && step_budget == o.maximum_steps) {
      const long attempts = r.statistics().accepted_steps + r.statistics().rejected_steps;
      step_budget = std::max(kLeastStepBudget, kStepBudgetFactor * attempts);
    }
    if (steps) *steps = r.times_s();
    return r.states().row(r.states().rows() - 1).transpose().head(x.size());
  }
  // One period's run; one stopped by what was left of the wall-time budget fails as the whole
  // search's budget (the run's own share, down to its floor of 1 ms, says nothing to the user).
  TransientResult run_period(const CircuitState& s, const TransientOptions& run) {
    try {
      return simulate(c, s, run);
    } catch (const SimulationError& e) {
      if (!out_of_time()) throw;
      std::ostringstream m;
      m << "periodic steady state not reached within the wall-time budget of " << p.maximum_wall_time_s << " s (" << out.period_runs
        << " period runs; the last stopped at: " << e.what() << ")";
      throw SimulationError(m.str());
    }
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
  // Newton–Picard: a state the period forgets by more than a tenth (|∂Φ_i/∂x_i| below kFast: a
  // node behind picoseconds of stray capacitance, an armature pressed on its stop and ringing
  // there) is not one of the slow modes shooting exists for. It takes the value the period gives
  // it (a Picard step) and stays out of the line search and the convergence test: its residual
  // carries the adaptive runs' own error of a stiff oscillation (an armature's velocity on its
  // stop differs by ~1e-4 m/s between two step sequences), which no Newton step removes. Once
  // the slow states have converged, Picard periods bring the fast ones within 1e-3 of their
  // distance (settle()). All states count until a sensitivity matrix has been taken.
  static constexpr double kFast = 0.9;
  double slowest_fast = 0.0;  // the largest |∂Φ_i/∂x_i| among the fast states
  std::vector<bool> fast;
  double scale_of(Eigen::Index i) const { return atol[static_cast<std::size_t>(i)] + o.relative_tolerance * typical[i]; }
  // The largest |v_i| in error scales, over the slow states (every state with skip_fast false).
  double scaled_norm(const Eigen::VectorXd& v, bool skip_fast = true) const {
    double m = 0.0;
    for (Eigen::Index i = 0; i < v.size(); ++i) {
      if (skip_fast && !fast.empty() && fast[static_cast<std::size_t>(i)]) continue;
      m = std::max(m, std::abs(v[i]) / scale_of(i));
    }
    return m;
  }
  // Finite-difference step of state i: 1e-5 of its typical size. Along replayed steps the map
  // is one smooth discrete map, so only rounding (~1e-16 of the size) and the map's curvature
  // limit the difference quotient; 1e-5 balances the two.
  double fd_step(Eigen::Index i) const { return 1e-5 * typical[i]; }

  // Column j of ∂Φ/∂x − I along the unperturbed run's steps. A replay whose perturbed state
  // meets a stiff turn (a junction switching, an avalanche) a step earlier or later than the
  // unperturbed one can go non-finite on those fixed steps: the column is then taken again with
  // a hundredth of the difference step, twice at most (at 1e-9 of the size, rounding is still
  // ~1e-7 of the column).
  // A replay can also go astray and stay finite: a column that grows the perturbation by more
  // than kLargestGrowth (both in error scales of every state) is taken again the same way — a
  // period of a dissipative circuit does not multiply a disturbance a millionfold, and such a
  // column (measured: 2.8e24 on a base node, campaign seed 1864) swamps the Newton solve, whose
  // step then vanishes for every other state. Still astray at the smallest step: a SimulationError
  // (shooting gives way to the periods one by one).
  static constexpr int kSmallerSteps = 2;
  static constexpr double kLargestGrowth = 1e6;
  Eigen::VectorXd sensitivity(const Eigen::VectorXd& x, Eigen::Index j, const std::vector<double>& steps, const Eigen::VectorXd& f_replayed) {
    double h = fd_step(j);
    for (int k = 0; k <= kSmallerSteps; ++k, h *= 1e-2) {
      Eigen::VectorXd xp = x;
      xp[j] += h;
      Eigen::VectorXd change;
      try {
        change = map(xp, nullptr, steps) - f_replayed;
      } catch (const SimulationError&) {
        if (k == kSmallerSteps || out_of_time()) throw;
        continue;
      }
      if (scaled_norm(change, false) <= kLargestGrowth * std::abs(h) / scale_of(j)) {
        Eigen::VectorXd col = change / h;
        col[j] -= 1.0;
        return col;
      }
      if (out_of_time()) break;
    }
    std::ostringstream m;
    m << "a sensitivity column of '" << c.states()[static_cast<std::size_t>(j)].name << "' replayed along the period's steps grew its "
      << "perturbation more than " << kLargestGrowth << "-fold";
    throw SimulationError(m.str());
  }

  // The last sensitivity matrix ∂Φ/∂x (the multipliers are its eigenvalues).
  Eigen::MatrixXd monodromy;

  // Multipliers above kRepellingMultiplier read from the sensitivity matrix, measured again on
  // their modes, and the largest one always: the converged state x* pushed along the mode's
  // eigenvector by kModePush error scales, one period run with its own steps, and the mode's
  // component of the result (from the left eigenvectors) against the push. Finite differences of
  // 1e-5 along replayed steps are good to ~1e-5 of most multipliers, but a column replayed
  // through a stiff turn (a switch's avalanche, a TVS, a pwl piece change) can be off by percent
  // or more, and a fast mode or a slow coil's e^(−T·R/L) just below 1 then reads above it; a push
  // of a thousand error scales is measured to ~1e-3 by the run's own tolerance. Returns the
  // largest multiplier, the repelling candidates as measured. A real mode measured far from its
  // reading (kMisread) is put right in `monodromy`, and `misread` says so: Newton's last step,
  // taken with the misread sensitivities, is then no measure of the distance left (polish()).
  static constexpr double kModePush = 1e3;
  bool misread = false;
  double largest_multiplier_measured(const Eigen::VectorXd& x_star, const Eigen::VectorXd& f_star) {
    using Complex = std::complex<double>;
    Eigen::ComplexEigenSolver<Eigen::MatrixXcd> es(monodromy.cast<Complex>());
    const Eigen::MatrixXcd left = es.eigenvectors().inverse();  // rows: left eigenvectors
    Eigen::VectorXd magnitude = es.eigenvalues().cwiseAbs();
    if (!left.allFinite()) return magnitude.maxCoeff();
    Eigen::Index largest = 0;
    magnitude.maxCoeff(&largest);
    Eigen::MatrixXcd correction = Eigen::MatrixXcd::Zero(monodromy.rows(), monodromy.cols());
    for (Eigen::Index k = 0; k < magnitude.size(); ++k) {
      const bool repelling = magnitude[k] > kRepellingMultiplier;
      if (!repelling && k != largest) continue;
      Eigen::VectorXd mode = es.eigenvectors().col(k).real();
      if (!(scaled_norm(mode) > 0.0)) mode = es.eigenvectors().col(k).imag();
      const double size = scaled_norm(mode);
      if (!(size > 0.0)) continue;
      const Eigen::VectorXd push = mode * (kModePush / size);
      const Complex before = (left.row(k) * push.cast<Complex>())(0, 0);
      Eigen::VectorXd moved;
      try {
        moved = map(x_star + push);
      } catch (const SimulationError&) {
        continue;  // the push ran into a failure: the multiplier stays as read
      }
      const Complex ratio = (left.row(k) * (moved - f_star).cast<Complex>())(0, 0) / before;
      const Complex read = es.eigenvalues()[k];
      const bool real_mode = std::abs(read.imag()) <= 1e-12 * std::abs(read);
      if (real_mode && std::abs(ratio.real() - read.real()) > kMisread) {
        correction += (ratio.real() - read.real()) * es.eigenvectors().col(k) * left.row(k);
        misread = true;
      }
      if (!repelling) continue;  // the largest, read below the bar: measured for the misreading only
      const double measured = std::abs(ratio);
      // A complex pair is one mode: its partner takes the same measurement.
      for (Eigen::Index j = 0; j < magnitude.size(); ++j) {
        if (j == k || std::abs(es.eigenvalues()[j] - std::conj(es.eigenvalues()[k])) <= 1e-12 * magnitude[k]) magnitude[j] = measured;
      }
    }
    if (misread) monodromy += correction.real();
    return magnitude.maxCoeff();
  }
  // A multiplier measured this far from its reading was misread (the measurement's own error is
  // ~1e-3: the push of kModePush error scales against the run's tolerance).
  static constexpr double kMisread = 1e-2;

  // The fast states (Newton–Picard, above) take the values a period gave them.
  void take_fast_from(const Eigen::VectorXd& f, Eigen::VectorXd& x) const {
    for (Eigen::Index i = 0; i < x.size(); ++i) {
      if (!fast.empty() && fast[static_cast<std::size_t>(i)]) x[i] = f[i];
    }
  }

  // Chord steps with the sensitivities put right by the measured multipliers, where Newton ran on
  // misread ones: a slow coil's multiplier e^(−T·R/L) = 0.9973 read as 1.65 across a pwl piece
  // change makes Newton's step −r/0.65 instead of r/0.0027, so a residual of a few error scales —
  // a warm start one duty away — passed as converged, 0.5 mA (2,000 error scales) from the steady
  // state (campaign seed 2695, a pwl high-side P-MOSFET hold), and from farther away Newton does
  // not converge at all. Each step runs one period; the fast states take the period's values, as
  // in Newton. `fx` is the period already run from x.
  static constexpr int kPolishSteps = 64;
  bool polish(Eigen::VectorXd& x, Eigen::VectorXd fx) {
    const Eigen::Index n = x.size();
    const Eigen::FullPivLU<Eigen::MatrixXd> lu(monodromy - Eigen::MatrixXd::Identity(n, n));
    double previous = 0.0;
    for (int it = 0; it < kPolishSteps; ++it) {
      throw_if_interrupted();
      if (it > 0) fx = map(x);
      const Eigen::VectorXd step = lu.solve(x - fx);
      if (!step.allFinite()) return false;
      x += step;
      take_fast_from(fx, x);
      const double size = scaled_norm(step);
      out.distance_in_error_scales = size;
      // Far from the state the chord steps converge linearly (the sensitivities are right only
      // along the measured mode, and only near where it was measured): the distance left after a
      // step of contraction q is step·q/(1 − q), within the tolerance before it is taken.
      const double q = it > 0 && previous > 0.0 ? size / previous : 0.0;
      if (q < 1.0 && size * std::max(1.0, q / (1.0 - q)) <= p.tolerance_in_error_scales) {
        settle(x);
        return true;
      }
      previous = size;
    }
    return false;
  }

  bool shoot(Eigen::VectorXd& x) {
    const Eigen::Index n = x.size();
    std::vector<double> steps;
    Eigen::VectorXd fx = map(x, &steps);
    Eigen::VectorXd r = fx - x;
    Eigen::VectorXd recorded = x;
    for (int it = 0; it < p.maximum_newton_iterations; ++it) {
      throw_if_interrupted();
      set_typical(x);
      set_typical(fx);
      out.newton_iterations = it + 1;
      // Sensitivities along the unperturbed run's own steps (internal numerical differentiation).
      // Where the last Newton step carried the fast states forward (Picard), x is not the state
      // the steps were recorded from, and a replay of x along another state's steps can go
      // non-finite through a stiff turn: x's own run is recorded first. The columns are taken
      // against that run itself (a replay of x along its own steps gives it again to rounding,
      // ~1e-14 V measured, against differences of 1e-5 of the states).
      if (recorded != x) {
        fx = map(x, &steps);
        r = fx - x;
        recorded = x;
      }
      const Eigen::VectorXd& f_replayed = fx;
      Eigen::MatrixXd jac(n, n);  // ∂Φ/∂x − I
      for (Eigen::Index j = 0; j < n; ++j) jac.col(j) = sensitivity(x, j, steps, f_replayed);
      fast.assign(static_cast<std::size_t>(n), false);
      slowest_fast = 0.0;
      bool any_slow = false;
      for (Eigen::Index i = 0; i < n; ++i) {
        const double memory = std::abs(jac(i, i) + 1.0);
        fast[static_cast<std::size_t>(i)] = memory < kFast;
        if (memory < kFast) slowest_fast = std::max(slowest_fast, memory);
        any_slow = any_slow || memory >= kFast;
      }
      // Far from the steady state every state may look fast (a coil at zero current behind a
      // diode's megohms of dynamic resistance): then every state counts, and Newton goes on.
      if (!any_slow) fast.assign(static_cast<std::size_t>(n), false);
      // The multipliers of one period: the eigenvalues of ∂Φ/∂x = jac + I.
      monodromy = jac + Eigen::MatrixXd::Identity(n, n);
      out.largest_multiplier = monodromy.eigenvalues().cwiseAbs().maxCoeff();
      const Eigen::VectorXd step = jac.fullPivLu().solve(-r);
      if (!step.allFinite()) return false;
      // Halving line search on the scaled residual.
      const double r_norm = scaled_norm(r);
      double lambda = 1.0;
      Eigen::VectorXd x_new, f_new, r_new;
      bool accepted = false;
      for (int ls = 0; ls < 8; ++ls, lambda *= 0.5) {
        x_new = x + lambda * step;
        f_new = map(x_new, &steps);
        r_new = f_new - x_new;
        if (scaled_norm(r_new) < r_norm || scaled_norm(lambda * step) <= p.tolerance_in_error_scales) {
          accepted = true;
          break;
        }
      }
      if (!accepted) return false;
      const double moved = scaled_norm(lambda * step);
      recorded = x_new;
      take_fast_from(f_new, x_new);
      x = x_new;
      fx = f_new;
      r = r_new;
      out.distance_in_error_scales = moved;
      if (lambda == 1.0 && moved <= p.tolerance_in_error_scales) {
        // A vanishing Newton step is convergence only where one period also maps the state onto
        // itself: a step swamped by wrong sensitivities vanishes too, wherever the state is
        // (campaign seed 1864 had been reported held at 366 mA, one period moving it by 1.8 mA,
        // 5,000 error scales, where its hold in truth collapses to 0.4 mA).
        const double left = scaled_norm(r);
        if (left > kResidualOfConverged * p.tolerance_in_error_scales) {
          std::ostringstream m;
          m << "shooting's Newton step vanished while one period still moved the state by " << left << " error scales";
          out.note = m.str();
          return false;
        }
        settle(x);
        return true;
      }
    }
    return false;
  }

  // Picard periods for the fast states after Newton: enough that their slowest contraction has
  // shrunk what is left of their distance to 1e-3 (at most 30 periods).
  void settle(Eigen::VectorXd& x) {
    int periods = 1;
    if (slowest_fast > 1e-3) periods = std::min(30, static_cast<int>(std::ceil(std::log(1e-3) / std::log(slowest_fast))));
    for (int k = 0; k < periods; ++k) {
      throw_if_interrupted();
      const Eigen::VectorXd next = map(x);
      for (Eigen::Index i = 0; i < x.size(); ++i) {
        if (fast[static_cast<std::size_t>(i)]) x[i] = next[i];
      }
    }
  }

  const std::chrono::steady_clock::time_point started = std::chrono::steady_clock::now();
  double elapsed_s() const { return std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count(); }
  bool out_of_time() const { return elapsed_s() > p.maximum_wall_time_s; }

  // The direct periods' changes (also for outlook()).
  DirectPeriodChanges changes;
  double last_change() const { return changes.largest_ago(0); }

  // For a search that ran out of periods or time: how fast its periods were converging — one
  // period's factor ρ on the change, from the change now against kOutlookBaseline periods (at most;
  // half the periods run) before — and, for 0 < ρ < 1, how many more periods would bring the
  // estimated distance left, change·ρ/(1 − ρ), within the tolerance: n = ln(tol/left)/ln ρ. Empty
  // with fewer than kLeastOutlookPeriods periods run.
  static constexpr long kOutlookBaseline = DirectPeriodChanges::kContractionBaseline, kLeastOutlookPeriods = 20;
  std::string outlook() const {
    const long k = changes.periods;
    if (k < kLeastOutlookPeriods) return "";
    const long baseline = std::min(kOutlookBaseline, k / 2);
    const double now = changes.largest_ago(0), then = changes.largest_ago(baseline);
    if (!(now > 0.0 && then > 0.0)) return "";
    const double rho = std::pow(now / then, 1.0 / static_cast<double>(baseline));
    std::ostringstream m;
    m.precision(7);
    m << "; over the last " << baseline << " periods each shrank the change by the factor " << rho;
    if (!(rho < 1.0)) {
      m << " (it did not shrink)";
      return m.str();
    }
    const double left = now * rho / (1.0 - rho);
    const double more = std::ceil(std::log(p.tolerance_in_error_scales / left) / std::log(rho));
    m.precision(3);
    m << ": about " << static_cast<long>(std::max(more, 1.0)) << " more periods would bring the distance left (" << left << " error scales) within the tolerance";
    return m.str();
  }

  bool direct(Eigen::VectorXd& x) {
    fast.clear();  // every state counts here
    step_budget = o.maximum_steps;
    changes = DirectPeriodChanges{};
    double previous_change = 0.0;
    double window_largest = 0.0, previous_window_largest = HUGE_VAL;
    for (long k = 0; k < p.maximum_direct_periods; ++k) {
      throw_if_interrupted();
      if (out_of_time()) {
        std::ostringstream m;
        m << "periodic steady state not reached within the wall-time budget of " << p.maximum_wall_time_s << " s (" << k
          << " periods simulated one by one, still moving by " << last_change() << " error scales per period" << outlook() << ")";
        throw SimulationError(m.str());
      }
      const Eigen::VectorXd next = map(x);
      const double change = changes.record(k, next - x, *this);  // every state: none is fast here
      // Distance left from the contraction ρ between periods: change·ρ/(1 − ρ).
      const double rho = previous_change > 0.0 ? change / previous_change : 1.0;
      // A period that maps the state onto itself bit for bit (a pwl circuit's exact fixed point)
      // has arrived: nothing is left, whatever the last contraction was.
      double left = change == 0.0 ? 0.0 : rho < 1.0 ? change * rho / (1.0 - rho) : HUGE_VAL;
      if (change > 0.0) left = std::max(left, changes.left());
      x = next;
      previous_change = change;
      out.distance_in_error_scales = std::max(change, left);
      if (p.progress && k % 64 == 0) p.progress(static_cast<double>(k) / static_cast<double>(p.maximum_direct_periods));
      // Arrived: bit for bit, or within the tolerance once every state could be judged by its
      // own contraction (a faster mode's first few ratios say nothing of a slow one; tested).
      const bool judged = change == 0.0 ? k >= 2 : k + 1 >= DirectPeriodChanges::kLeastJudgedPeriods;
      if (judged && out.distance_in_error_scales <= p.tolerance_in_error_scales) return true;
      window_largest = std::max(window_largest, change);
      if ((k + 1) % kSettleWindow == 0) {
        if (window_largest >= previous_window_largest && window_largest > kUnsettledScales * p.tolerance_in_error_scales) {
          std::ostringstream m;
          m << "periodic steady state not reached: the periods do not settle (after " << k + 1
            << " periods simulated one by one the state still moves by up to " << window_largest << " error scales per period, as much as "
            << kSettleWindow << " periods before: a response that repeats only every few periods, or never)";
          if (!out.note.empty()) m << "; " << out.note;
          throw SimulationError(m.str());
        }
        previous_window_largest = window_largest;
        window_largest = 0.0;
      }
    }
    return false;
  }
};

}  // namespace

PeriodicSteadyState periodic_steady_state(const Circuit& c, const CircuitState& guess, const TransientOptions& step_options,
                                          const PeriodicOptions& options) {
  if (!(options.period_s > 0.0) || !std::isfinite(options.period_s)) {
    throw std::invalid_argument("periodic steady state: period_s must be finite and > 0");
  }
  check_state(c, guess);
  if (c.has_history()) {
    // A line's waves in transit are state too, which a period map of x alone would miss.
    throw std::invalid_argument("periodic steady state: not available for a circuit with a cable (a transmission line)");
  }
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
    // The largest multiplier measured on its mode (and any read above 1): where the sensitivities
    // misread one, it is put right and chord steps decide — after a converged Newton, whose last
    // step was no measure of the distance left, and after one that did not converge, whose steps
    // the misread mode sent the wrong way (a slow coil's read above 1 across pwl pieces); from
    // its last iterate, and where they do not converge either the periods one by one go on from
    // that iterate.
    bool repels = false;
    if (s.out.note.empty() && s.monodromy.size() > 0) {
      const Eigen::VectorXd last = trial;
      const bool newton_converged = done;
      try {
        const Eigen::VectorXd f_trial = s.map(trial);
        const double measured = s.largest_multiplier_measured(trial, f_trial);
        if (!newton_converged || s.out.largest_multiplier > kRepellingMultiplier) s.out.largest_multiplier = measured;
        repels = measured > kRepellingMultiplier;
        if (s.misread && !repels) done = s.polish(trial, f_trial);
        if (newton_converged && !done) s.out.note = "shooting's sensitivities misread a multiplier of one period, and steps with it measured did not converge";
      } catch (const SimulationError&) {
        trial = last;  // a measuring or chord period failed: Newton's own verdict stands
      }
      if (!done) trial = last;
      repels = repels && done;
    }
    if (repels) {
      done = false;
      std::ostringstream m;
      m << "shooting converged to a periodic state the circuit does not settle in (a multiplier of one period of magnitude "
        << s.out.largest_multiplier << ": it repels, like an armature balanced off its stop)";
      s.out.note = m.str();
    }
    if (done) {
      s.out.method = PeriodicMethod::shooting;
    }
    // The direct periods go on from the last Newton iterate (closer than the guess, unless a
    // run failed or the iterate is a repelling state).
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
        << " periods of " << options.period_s << " s left the state moving by " << s.last_change()
        << " error scales per period" << s.outlook();
      throw SimulationError(m.str());
    }
  }
  s.out.state.time_s = guess.time_s;
  s.out.state.values = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(c.state_count()));
  s.out.state.values.head(x.size()) = x;
  return s.out;
}

}  // namespace coilkick::engine
