#include "coilkick/engine/transient.hpp"

#include <chrono>
#include <cmath>
#include <limits>
#include <memory>
#include <sstream>

#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/event_locator.hpp"
#include "coilkick/engine/rosenbrock_step.hpp"
#include "coilkick/engine/interrupt.hpp"

namespace coilkick::engine {
namespace {

// Evaluations of the circuit for the stepper. `step_start` is the start of the step being
// attempted: waveform slopes are taken from the segment between it and the evaluation time, so
// a step ending on a corner uses the slope before the corner.
struct OdeSystem {
  const Circuit& circuit;
  Workspace& w;
  SolverStatistics& stats;
  double step_start = 0.0;

  double slope_time(double t) const { return t > step_start ? 0.5 * (step_start + t) : t; }

  // The last full evaluation (rates, Jacobian, ∂ẋ/∂t) and the point it was taken at: a step's
  // start after a rejected attempt, and an accepted end point (recorded, probed, then the next
  // step's start), are each evaluated once. A full evaluation is always at a step's start or
  // end, so its waveform slopes are those at t itself.
  Eigen::VectorXd full_at;
  double full_time = std::numeric_limits<double>::quiet_NaN();
  Eigen::VectorXd full_rate, full_time_rate;
  Eigen::MatrixXd full_jacobian;

  void full_evaluation(const Eigen::VectorXd& x, double t) {
    if (full_time == t && full_at.size() == x.size() && full_at == x) return;
    circuit.evaluate(t, t, x.data(), w, true);
    ++stats.jacobian_evaluations;
    full_at = x;
    full_time = t;
    full_rate = w.rate;
    full_time_rate = w.time_rate;
    full_jacobian = w.jacobian;
  }
  // Rates at a stage of the step being attempted, or at a point inside an accepted step however
  // long ago (events): no corner lies inside a step, so the slope time falls in t's segment.
  void stage_rates(double t, const double* x, double* rate) {
    circuit.evaluate(t, slope_time(t), x, w, false);
    ++stats.rate_evaluations;
    std::copy(w.rate.data(), w.rate.data() + w.rate.size(), rate);
  }
};

// One accepted step's dense output (rosenbrock_step.hpp) with its time derivative for probes
// that read rates. A copy stays valid after the step (events refine extrema after the run,
// EventLocator::finish).
struct DenseStep {
  double t0 = 0.0, t1 = 0.0;
  Eigen::VectorXd x0, x1, c3, c4;

  // x and, unless `rate` is null, the dense output's time derivative.
  void at(double t, double* x, double* rate) const {
    const double h = t1 - t0, s = (t - t0) / h, s1 = 1.0 - s;
    for (Eigen::Index i = 0; i < x0.size(); ++i) x[i] = x0[i] * s1 + s * (x1[i] + s1 * (c3[i] + s * c4[i]));
    if (!rate) return;
    for (Eigen::Index i = 0; i < x0.size(); ++i) {
      rate[i] = (x1[i] - x0[i] + (1.0 - 2.0 * s) * c3[i] + s * (2.0 - 3.0 * s) * c4[i]) / h;
    }
  }
};

void check_options(const TransientOptions& o, double t0) {
  auto bad = [](const char* field, const char* rule, double v) {
    std::ostringstream m;
    m << "transient options: " << field << " must be " << rule << ", got " << v;
    throw std::invalid_argument(m.str());
  };
  if (!std::isfinite(o.stop_time_s) || !(o.stop_time_s > t0)) {
    std::ostringstream m;
    m << "transient options: stop_time_s (" << o.stop_time_s
      << " s) must be finite and after the initial time " << t0 << " s";
    throw std::invalid_argument(m.str());
  }
  if (!(o.relative_tolerance > 0.0) || !(o.relative_tolerance < 1.0)) bad("relative_tolerance", "in (0, 1)", o.relative_tolerance);
  if (!(o.voltage_tolerance_V > 0.0) || !std::isfinite(o.voltage_tolerance_V)) bad("voltage_tolerance_V", "finite and > 0", o.voltage_tolerance_V);
  if (!(o.current_tolerance_A > 0.0) || !std::isfinite(o.current_tolerance_A)) bad("current_tolerance_A", "finite and > 0", o.current_tolerance_A);
  if (!(o.energy_tolerance_J > 0.0) || !std::isfinite(o.energy_tolerance_J)) bad("energy_tolerance_J", "finite and > 0", o.energy_tolerance_J);
  if (!(o.initial_step_s > 0.0) || !std::isfinite(o.initial_step_s)) bad("initial_step_s", "finite and > 0", o.initial_step_s);
  if (!(o.minimum_step_s > 0.0) || !std::isfinite(o.minimum_step_s)) bad("minimum_step_s", "finite and > 0", o.minimum_step_s);
  if (!(o.maximum_step_s >= 0.0) || !std::isfinite(o.maximum_step_s)) bad("maximum_step_s", "finite and >= 0 (0: none)", o.maximum_step_s);
  if (o.maximum_steps < 1) bad("maximum_steps", ">= 1", static_cast<double>(o.maximum_steps));
  if (!(o.maximum_wall_time_s > 0.0)) bad("maximum_wall_time_s", "> 0", o.maximum_wall_time_s);
  if (o.maximum_consecutive_rejections < 1) bad("maximum_consecutive_rejections", ">= 1", o.maximum_consecutive_rejections);
  if (!(o.event_time_tolerance_s > 0.0)) bad("event_time_tolerance_s", "> 0", o.event_time_tolerance_s);
}

std::vector<double> absolute_tolerances(const Circuit& c, const TransientOptions& o) {
  std::vector<double> a;
  for (const auto& s : c.states()) {
    if (s.is_energy) a.push_back(o.energy_tolerance_J);
    else if (s.kind == StateKind::node_voltage) a.push_back(o.voltage_tolerance_V);
    else if (s.kind == StateKind::branch_current) a.push_back(o.current_tolerance_A);
    else a.push_back(s.absolute_tolerance);
  }
  return a;
}

std::string describe_state(const Circuit& c, int i, const Eigen::VectorXd& x, const Workspace& w) {
  const auto& s = c.states()[static_cast<std::size_t>(i)];
  std::ostringstream m;
  m << "'" << s.name << "' (value " << x[i] << " " << s.unit
    << ", rate " << w.rate[i] << " " << s.unit << "/s)";
  return m.str();
}

EnergyReport make_energy_report(const Circuit& c, const CircuitState& initial, double t_end,
                                const Eigen::VectorXd& x_end, Workspace& w) {
  EnergyReport r;
  const int nc = c.circuit_state_count();
  const auto& ch = c.power_channels();
  for (std::size_t k = 0; k < ch.size(); ++k) {
    const double e = x_end[nc + static_cast<Eigen::Index>(k)];
    r.channels.push_back({ch[k].name, ch[k].kind, e});
    if (ch[k].kind == PowerChannelSpec::Kind::supplied) r.supplied_J += e;
    else r.dissipated_J += e;
  }
  r.stored_initial_J = c.stored_energy_J(-1, initial.time_s, initial.values.data(), w);
  r.stored_final_J = c.stored_energy_J(-1, t_end, x_end.data(), w);
  const double in = r.supplied_J + r.stored_initial_J;
  const double out = r.dissipated_J + r.stored_final_J;
  const double scale = std::max(std::abs(in), std::abs(out));
  r.balance_error = scale > 0.0 ? (in - out) / scale : 0.0;
  return r;
}

}  // namespace

TransientResult simulate(const Circuit& circuit, const CircuitState& initial,
                         const TransientOptions& options, const std::vector<EventSpec>& events) {
  check_state(circuit, initial);
  check_options(options, initial.time_s);
  const auto n = static_cast<Eigen::Index>(circuit.state_count());
  const int nc = circuit.circuit_state_count();
  const std::vector<double> atol = absolute_tolerances(circuit, options);
  const double rtol = options.relative_tolerance;
  const double t_stop = options.stop_time_s;
  const auto wall_start = std::chrono::steady_clock::now();

  Workspace w = circuit.make_workspace();
  SolverStatistics stats;
  OdeSystem sys{circuit, w, stats, initial.time_s, {}, std::numeric_limits<double>::quiet_NaN(), {}, {}, {}};
  const StageRates stage_rates = [&sys](double tq, const double* xq, double* rate) { sys.stage_rates(tq, xq, rate); };
  const auto stepper = make_rosenbrock_step(options.step_method, static_cast<int>(n), nc);

  Eigen::VectorXd x = initial.values, x_new(n), x_err(n), rate_old(n);
  x.tail(n - nc).setZero();  // energies start at 0
  double t = initial.time_s;
  DenseStep dense;

  std::vector<double> times;
  std::vector<double> rec_x, rec_rate;
  // Recording evaluates the point in full: the next step starts there.
  auto record = [&](double tr, const Eigen::VectorXd& xr) {
    sys.full_evaluation(xr, tr);
    times.push_back(tr);
    rec_x.insert(rec_x.end(), xr.data(), xr.data() + n);
    rec_rate.insert(rec_rate.end(), sys.full_rate.data(), sys.full_rate.data() + n);
  };
  record(t, x);

  EventLocator locator(events, static_cast<int>(n), options.event_time_tolerance_s);
  locator.start(t, x.data(), sys.full_rate.data());

  double dt = std::min(options.initial_step_s, t_stop - t);
  double next_corner = circuit.next_corner_after_s(t);
  double err_old = 1.0, dt_old = 0.0;
  bool last_rejected = false, first_accepted = true;
  int rejections_in_a_row = 0;
  double next_progress = 0.01;
  int worst_state = 0;
  bool last_nonfinite = false;

  auto fail = [&](const std::string& why) {
    std::ostringstream m;
    m << "transient failed at t = " << t << " s (step " << dt << " s): " << why
      << "; the error is largest in " << describe_state(circuit, worst_state, x, w);
    throw SimulationError(m.str());
  };

  while (t < t_stop) {
    throw_if_interrupted();
    if (stats.accepted_steps + stats.rejected_steps >= options.maximum_steps) {
      fail("the step budget of " + std::to_string(options.maximum_steps) + " steps is used up");
    }
    const double elapsed =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - wall_start).count();
    if (elapsed > options.maximum_wall_time_s) {
      std::ostringstream m;
      m << "the wall-time budget of " << options.maximum_wall_time_s << " s is used up";
      fail(m.str());
    }
    const double target = std::min(next_corner, t_stop);
    const double remaining = target - t;
    const double min_step = std::max(options.minimum_step_s, 64.0 * std::numeric_limits<double>::epsilon() * std::abs(t));
    if (options.maximum_step_s > 0.0) dt = std::min(dt, options.maximum_step_s);
    bool lands_on_target = false;
    if (dt >= remaining) {
      dt = remaining;
      lands_on_target = true;
    }
    if (dt < min_step && !lands_on_target) {
      std::ostringstream m;
      if (last_nonfinite) m << "the states became non-finite (NaN or infinite) at every step size tried, down to ";
      else m << "the step size fell below the minimum ";
      m << min_step << " s";
      fail(m.str());
    }

    sys.step_start = t;
    sys.full_evaluation(x, t);
    stepper->attempt(x, t, dt, {sys.full_rate, sys.full_jacobian, sys.full_time_rate}, stage_rates, x_new, x_err);

    double err = 0.0;
    bool finite = true;
    for (Eigen::Index i = 0; i < n; ++i) {
      if (!std::isfinite(x_new[i]) || !std::isfinite(x_err[i])) {
        finite = false;
        worst_state = static_cast<int>(i);
        break;
      }
      const double sk = atol[static_cast<std::size_t>(i)] + rtol * std::max(std::abs(x[i]), std::abs(x_new[i]));
      const double e = std::abs(x_err[i]) / sk;
      if (e > err) {
        err = e;
        worst_state = static_cast<int>(i);
      }
    }
    last_nonfinite = !finite;
    if (!finite || err > 1.0) {
      ++stats.rejected_steps;
      if (++rejections_in_a_row > options.maximum_consecutive_rejections) {
        fail(finite ? "too many rejected steps in a row"
                    : "the states became non-finite (NaN or infinite) and shrinking the step did not help");
      }
      dt *= finite ? std::max(0.2, 0.9 * std::pow(err, -0.25)) : 0.25;
      last_rejected = true;
      continue;
    }
    // Accepted.
    rejections_in_a_row = 0;
    ++stats.accepted_steps;
    const double t_old = t, t_new = lands_on_target ? target : t + dt;
    dense.t0 = t_old;
    dense.t1 = t_new;
    dense.x0 = x;
    dense.x1 = x_new;
    stepper->dense_output(dense.c3, dense.c4);
    rate_old = sys.full_rate;                // the full evaluation at the start of the step
    sys.full_evaluation(x_new, t_new);  // at its end: probes read it, the next step starts there
    auto interp = [&dense](double tq, double* xo, double* ro) { dense.at(tq, xo, ro); };
    // The kept copy (extremum refinement) evaluates the circuit for exact rates.
    auto keep = [&dense, &sys]() {
      auto d = std::make_shared<const DenseStep>(dense);
      return EventLocator::Interpolant([d, &sys](double tq, double* xo, double* ro) {
        d->at(tq, xo, nullptr);
        if (ro) sys.stage_rates(tq, xo, ro);
      });
    };
    const double stop_at = locator.on_step(t_old, x.data(), rate_old.data(), t_new, x_new.data(),
                                           sys.full_rate.data(), interp, keep);
    // Step-size proposal (predictive controller of Gustafsson, as in Hairer & Wanner II, IV.8).
    double fac = std::max(1.0 / 6.0, std::min(5.0, std::pow(err, 0.25) / 0.9));
    if (!first_accepted && dt_old > 0.0) {
      const double pred = std::max(1.0 / 6.0, std::min(5.0, (dt_old / dt) * std::pow(err * err / err_old, 0.25) / 0.9));
      fac = std::max(fac, pred);
    }
    double dt_next = dt / fac;
    if (last_rejected) dt_next = std::min(dt_next, dt);
    first_accepted = false;
    last_rejected = false;
    dt_old = dt;
    err_old = std::max(0.01, err);

    if (std::isfinite(stop_at)) {
      dense.at(stop_at, x.data(), nullptr);  // record() evaluates the rates there
      t = stop_at;
      record(t, x);
      break;
    }
    x.swap(x_new);
    t = t_new;
    if (options.record_waveforms || t >= t_stop) record(t, x);
    if (t >= next_corner) next_corner = circuit.next_corner_after_s(t);
    dt = dt_next;
    if (options.progress) {
      const double frac = (t - initial.time_s) / (t_stop - initial.time_s);
      if (frac >= next_progress) {
        options.progress(frac);
        next_progress = std::floor(frac * 100.0 + 1.0) / 100.0;
      }
    }
  }

  locator.finish();
  EnergyReport energy = make_energy_report(circuit, initial, t, x, w);
  const auto rows = static_cast<Eigen::Index>(times.size());
  RowMatrix states = Eigen::Map<RowMatrix>(rec_x.data(), rows, n);
  RowMatrix rate_m = Eigen::Map<RowMatrix>(rec_rate.data(), rows, n);
  return TransientResult(circuit, std::move(times), std::move(states), std::move(rate_m),
                         locator.outcomes(), std::move(energy), stats);
}

}  // namespace coilkick::engine
