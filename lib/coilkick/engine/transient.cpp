#include "coilkick/engine/transient.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <memory>
#include <sstream>

#include "coilkick/engine/dense_step.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/event_locator.hpp"
#include "coilkick/engine/inside_step.hpp"
#include "coilkick/engine/interrupt.hpp"
#include "coilkick/engine/ode_system.hpp"
#include "coilkick/engine/rosenbrock_step.hpp"
#include "coilkick/engine/step_controller.hpp"

namespace coilkick::engine {
namespace {

// A step reads at most the rest of one piece of a line's past and two more.
constexpr int kPastPiecesPerStep = 3;
// The first step of the lines' quasi-static form spans at least this many delays. That form is
// a lumped L and C whose own resonance (a period of a few delays) the recorded past leaves
// excited at the tolerance's level; a step of many periods is one the L-stable step damps, a step
// of a few resolves it and never grows. Measured over 10/60/200 m × three clamps × relative
// tolerances 1e-5..1e-7 (README, "Speed"): 10 delays kept the steps at the delay; 30, 100 and 300
// alike, 20–70× fewer steps; results within each run's own spread across tolerances.
constexpr double kQuasiStaticFirstStepDelays = 100.0;
// A step that held its pieces is looked at this many times along its dense output (the last at
// its end) for a changed piece; the first change is then located by bisection to this fraction of
// the step. A change found within kPieceChangeAtStart of the step's start is one the start point
// sits on (a node resting at a corner): that step is redone deciding its pieces at every stage.
constexpr int kPieceSamples = 4;
constexpr double kPieceChangeWidth = 1e-10;
constexpr double kPieceChangeAtStart = 1e-6;
// A corner freed because the state slid along it is held again once its piece has stayed the
// same from start to end of this many accepted steps in a row (the slide is over: an active
// clamp's onset, whose end, milliseconds later, is a change to locate again).
constexpr int kStepsToHoldAgain = 3;
// A refined extremum is searched again in short sub-steps where its exact value and its dense
// output's differ by more than this many relative tolerances (event_locator.hpp).
constexpr double kDenseAgreementOfTolerance = 10.0;

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

// One transient run, in the order a step happens: budgets, the step's size, the attempt, its
// error, then rejection or acceptance (events, recording, the next step's size).
class TransientRun {
 public:
  TransientRun(const Circuit& circuit, const CircuitState& initial, const TransientOptions& options,
               const std::vector<EventSpec>& events)
      : circuit_(circuit),
        initial_(initial),
        options_(options),
        n_(static_cast<Eigen::Index>(circuit.state_count())),
        atol_(absolute_tolerances(circuit, options, initial.values.data())),
        w_(circuit.make_workspace()),
        sys_{circuit, w_, stats_, initial.time_s, {}, std::numeric_limits<double>::quiet_NaN(), {}, {}, {}, {}},
        stepper_(make_rosenbrock_step(options.step_method, static_cast<int>(n_), circuit.circuit_state_count())),
        locator_(events, static_cast<int>(n_), options.event_time_tolerance_s, kDenseAgreementOfTolerance * options.relative_tolerance),
        x_(initial.values),
        x_new_(n_),
        x_err_(n_),
        rate_old_(n_),
        t_(initial.time_s) {
    x_.tail(n_ - circuit.circuit_state_count()).setZero();  // energies start at 0
    if (circuit.has_history()) {
      if (replaying()) throw std::invalid_argument("transient options: replayed step times cannot be used with elements that read their past (a cable)");
      circuit.start_history(t_, x_.data(), w_);
    }
    record();
    locator_.start(t_, x_.data(), sys_.full_rate.data());
    dt_ = std::min(options.initial_step_s, options.stop_time_s - t_);
    next_corner_ = corner_ahead();
    // A stationary start (a DC operating point, the sources constant until the next corner):
    // one step to that corner — the states do not move, so it is exact and accepted — instead of
    // a dozen growing steps over nothing.
    if (!replaying() && stationary_until_corner()) dt_ = std::max(dt_, std::min(next_corner_, options.stop_time_s) - t_);
  }

  TransientResult run() {
    while (t_ < options_.stop_time_s) {
      throw_if_interrupted();
      guard_budgets();
      const bool lands_on_target = size_step();
      sys_.step_start = t_;
      sys_.full_evaluation(x_, t_);
      // Pieces held over the attempt: its stages see the pieces of its start.
      const bool hold = holds_pieces_ && hold_this_step_;
      if (hold && enter_pieces_) {
        // Landed on a change of piece: the step after it takes the pieces past the change (at
        // the point itself they are a toss-up), its start evaluated on them.
        w_.pieces = pieces_past_change_;
        w_.hold_pieces = true;
        sys_.full_time = std::numeric_limits<double>::quiet_NaN();
        sys_.full_evaluation(x_, t_);
        enter_pieces_ = false;
        just_entered_ = true;
      }
      if (hold) {
        w_.pieces = sys_.full_pieces;
        w_.hold_pieces = true;
      }
      attempt_held_ = hold;
      if (holds_pieces_) start_pieces_ = sys_.full_pieces;
      stepper_->attempt(x_, t_, dt_, {sys_.full_rate, sys_.full_jacobian, sys_.full_time_rate}, stage_rates_, x_new_, x_err_);
      w_.hold_pieces = false;
      StepError e = scaled_step_error(x_, x_new_, x_err_, sys_.full_rate, dt_, atol_, options_.relative_tolerance);
      worst_state_ = e.worst_state;
      last_nonfinite_ = !e.finite;
      if (replaying()) {
        if (!e.finite) fail("the states became non-finite (NaN or infinite) on a replayed step");
        e.norm = 1.0;  // (only the step controller reads it)
      }
      if (!e.finite || e.norm > 1.0) {
        reject(e);
        continue;
      }
      if (hold && !replaying() && piece_changes_inside(lands_on_target)) continue;
      if (accept(e, lands_on_target)) break;  // a stopping event
    }
    return result();
  }

 private:
  const Circuit& circuit_;
  const CircuitState& initial_;
  const TransientOptions& options_;
  const Eigen::Index n_;
  const std::vector<double> atol_;
  const std::chrono::steady_clock::time_point wall_start_ = std::chrono::steady_clock::now();
  Workspace w_;
  SolverStatistics stats_;
  OdeSystem sys_;
  const StageRates stage_rates_ = [this](double tq, const double* xq, double* rate) { sys_.stage_rates(tq, xq, rate); };
  std::unique_ptr<RosenbrockStep> stepper_;
  InsideStep inside_{sys_, *stepper_, stage_rates_, atol_, options_.relative_tolerance};
  EventLocator locator_;
  StepController control_;
  Eigen::VectorXd x_, x_new_, x_err_, rate_old_;
  double t_, dt_ = 0.0, next_corner_ = 0.0, target_ = 0.0, proposed_dt_ = 0.0;
  // Piecewise-linear elements: their pieces are held over each attempt (PieceChoices), and an
  // attempt along which one changes is redone to the change (piece_change_). A replayed step is
  // not redone (its times are given): it holds the pieces of its start, and the next step
  // decides them afresh. (Pieces decided at every stage instead put a stage on another piece
  // than the step's Jacobian: a clamp diode's milliohm line against a picofarad node, a stage
  // increment of ~10⁸ V — the replayed periods of a pwl PWM hold's shooting became non-finite.)
  const bool holds_pieces_ = circuit_.piece_slot_count() > 0;
  bool hold_this_step_ = true;
  double piece_change_ = std::numeric_limits<double>::infinity();
  std::vector<unsigned char> pieces_past_change_;
  bool enter_pieces_ = false, just_entered_ = false, attempt_held_ = false;
  std::vector<unsigned char> pieces_before_change_, start_pieces_;
  std::vector<int> steady_free_steps_;
  Eigen::VectorXd piece_x_;
  DenseStep dense_;
  std::vector<double> times_, rec_x_, rec_rate_;
  int rejections_in_a_row_ = 0, worst_state_ = 0;
  std::size_t replay_next_ = 0;
  bool last_nonfinite_ = false;
  double next_progress_ = 0.01;


  std::string failure_message(const std::string& why) {
    std::ostringstream m;
    m << "transient failed at t = " << t_ << " s (step " << dt_ << " s): " << why << "; the error is largest in "
      << describe_state(circuit_, worst_state_, x_, w_);
    return m.str();
  }
  [[noreturn]] void fail(const std::string& why) { throw SimulationError(failure_message(why)); }

  void guard_budgets() {
    if (stats_.accepted_steps + stats_.rejected_steps >= options_.maximum_steps) {
      fail("the step budget of " + std::to_string(options_.maximum_steps) + " steps is used up");
    }
    const double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - wall_start_).count();
    if (elapsed > options_.maximum_wall_time_s) {
      std::ostringstream m;
      m << "the wall-time budget of " << options_.maximum_wall_time_s << " s is used up";
      fail(m.str());
    }
  }

  // The next corner a step must land on. One that rounding put a few ulp after t (a pulse's
  // fall computed as start + rise + high time against a period's multiple) is the corner at t.
  double corner_ahead() const {
    double c = circuit_.next_corner_after_s(t_);
    while (c - t_ <= 64.0 * std::numeric_limits<double>::epsilon() * std::abs(t_)) c = circuit_.next_corner_after_s(c);
    return c;
  }

  bool replaying() const { return !options_.replay_step_times_s.empty(); }

  // Whether no circuit state would move by more than its tolerance before the next corner, by its
  // rate or the rate's change with time. Such a drift (a DC point solved with the operating point's
  // minimum conductance leaves a node a few V/s) is linear, which one step integrates exactly, as
  // it does the energy accumulators' constant power.
  bool stationary_until_corner() {
    const double span = std::min(next_corner_, options_.stop_time_s) - t_;
    if (!(span > 0.0) || !std::isfinite(span)) return false;
    sys_.step_start = t_;
    sys_.full_evaluation(x_, t_);
    for (Eigen::Index i = 0; i < circuit_.circuit_state_count(); ++i) {
      const double allowed = atol_[static_cast<std::size_t>(i)] + options_.relative_tolerance * std::abs(x_[i]);
      if (!(std::abs(sys_.full_rate[i]) * span <= allowed) || !(std::abs(sys_.full_time_rate[i]) * span * span <= allowed)) return false;
    }
    return true;
  }

  // Steps never cross a waveform corner or the stop time; true when this one ends on it.
  double minimum_step() const { return std::max(options_.minimum_step_s, 64.0 * std::numeric_limits<double>::epsilon() * std::abs(t_)); }

  bool size_step() {
    if (replaying()) {
      const auto& times = options_.replay_step_times_s;
      while (replay_next_ < times.size() && times[replay_next_] <= t_) ++replay_next_;
      if (replay_next_ == times.size()) fail("the replayed step times end before the stop time");
      target_ = times[replay_next_];
      dt_ = target_ - t_;
      return true;
    }
    target_ = std::min({next_corner_, options_.stop_time_s, piece_change_});
    const double remaining = target_ - t_;
    const double min_step = minimum_step();
    if (options_.maximum_step_s > 0.0) dt_ = std::min(dt_, options_.maximum_step_s);
    // An element reading its past one delay back must find it recorded, in few pieces.
    if (circuit_.has_history()) {
      const double cap = circuit_.longest_step_reading_past_s(t_, kPastPiecesPerStep);
      // Quiet waves and a step longer than the delay: the lines' quasi-static form, uncapped.
      const bool qs = dt_ > circuit_.shortest_delay_s() &&
                      circuit_.history_quiet(options_.voltage_tolerance_V, options_.relative_tolerance);
      if (qs != w_.quasi_static) {
        if (qs) dt_ = std::max(dt_, kQuasiStaticFirstStepDelays * circuit_.shortest_delay_s());
        w_.quasi_static = qs;
        sys_.full_time = std::numeric_limits<double>::quiet_NaN();  // the cached evaluation was of the other form
      }
      if (!qs) dt_ = std::min(dt_, cap);
    }
    bool lands_on_target = false;
    // A step that reaches the target in the times' own rounding lands on it: late in a run (an
    // edge 0.35 s in, where a double resolves 5.6e-17 s) a step redone to a change of piece found
    // at the previous attempt's end could be an ulp of t short of it, end on it all the same,
    // and — not landing — find the change there again, for ever (the step budget used up).
    if (dt_ >= remaining || t_ + dt_ >= target_) {
      proposed_dt_ = dt_;
      dt_ = remaining;
      lands_on_target = true;
    }
    if (dt_ < min_step && !lands_on_target) {
      std::ostringstream m;
      if (last_nonfinite_) m << "the states became non-finite (NaN or infinite) at every step size tried, down to ";
      else m << "the step size fell below the minimum ";
      m << min_step << " s";
      if (!last_nonfinite_ && min_step > options_.minimum_step_s) {
        m << ", the shortest step the rounding of t allows (64 ulps of t): this late in the run the time resolves no finer";
        throw TimeResolutionError(failure_message(m.str()));
      }
      fail(m.str());
    }
    return lands_on_target;
  }

  // The attempt held the pieces of its start; its states past a change of piece are those of the
  // wrong piece. Looks for a change along the attempt's dense output; if there is one, sets the
  // next attempt to end at its first instant (or, at the start itself, to decide its pieces at
  // every stage) and returns true. The end of an attempt that lands on a change found before is
  // that change, and is not looked at.
  bool piece_changes_inside(bool lands_on_target) {
    const double t0 = t_, t1 = lands_on_target ? target_ : t_ + dt_;
    dense_of_attempt(t0, t1);
    const auto& held = start_pieces_;  // the attempt's stages saw these
    piece_x_.resize(n_);
    auto changed = [&](double t) {
      dense_.at(t, piece_x_.data(), nullptr);
      w_.pieces = held;
      circuit_.choose_pieces(t, piece_x_.data(), w_);
      for (std::size_t q = 0; q < held.size(); ++q) {
        if (!w_.free_pieces[q] && w_.pieces[q] != held[q]) return true;
      }
      return false;
    };
    const bool end_is_change = lands_on_target && t1 == piece_change_;
    double lo = t0, hi = std::numeric_limits<double>::quiet_NaN();
    for (int k = 1; k <= kPieceSamples; ++k) {
      if (k == kPieceSamples && end_is_change) break;
      const double tk = k == kPieceSamples ? t1 : t0 + (t1 - t0) * k / kPieceSamples;
      if (changed(tk)) {
        hi = tk;
        break;
      }
      lo = tk;
    }
    if (std::isnan(hi)) return false;
    const double width = std::max(kPieceChangeWidth * (t1 - t0), 64.0 * std::numeric_limits<double>::epsilon() * std::abs(t1));
    while (hi - lo > width) {
      const double mid = 0.5 * (lo + hi);
      if (changed(mid)) hi = mid;
      else lo = mid;
    }
    ++stats_.rejected_steps;
    changed(hi);
    const std::vector<unsigned char> past_change = w_.pieces;
    // Straight back to a piece just left: the state slides along the corner (a node held at a
    // clamp's knee), where neither piece holds over any step. Such a corner is freed — decided at
    // every evaluation, as without holding — until it settles (hold_settled_corners_again).
    bool back = false;
    if (just_entered_) {
      for (std::size_t q = 0; q < held.size(); ++q) {
        if (!w_.free_pieces[q] && held[q] != pieces_before_change_[q] && past_change[q] == pieces_before_change_[q]) {
          back = true;
          w_.free_pieces[q] = 1;
        }
      }
    }
    // A second change inside the step redone to the first: its pieces do not settle over it.
    // (A change closer to the start than the minimum step is at the start: no step lands there.)
    if (back || end_is_change || hi - t0 <= std::max(kPieceChangeAtStart * (t1 - t0), minimum_step())) {
      hold_this_step_ = false;
    } else {
      piece_change_ = hi;
      pieces_past_change_ = past_change;
      pieces_before_change_ = held;
    }
    return true;
  }

  // After an accepted step: a freed corner whose piece was the same at the step's start and end
  // kStepsToHoldAgain times in a row is held again.
  void hold_settled_corners_again() {
    steady_free_steps_.resize(start_pieces_.size(), 0);
    for (std::size_t q = 0; q < start_pieces_.size(); ++q) {
      if (!w_.free_pieces[q]) continue;
      if (sys_.full_pieces[q] != start_pieces_[q]) {
        steady_free_steps_[q] = 0;
      } else if (++steady_free_steps_[q] >= kStepsToHoldAgain) {
        w_.free_pieces[q] = 0;
        steady_free_steps_[q] = 0;
      }
    }
  }

  void reject(const StepError& e) {
    ++stats_.rejected_steps;
    if (++rejections_in_a_row_ > options_.maximum_consecutive_rejections) {
      fail(e.finite ? "too many rejected steps in a row"
                    : "the states became non-finite (NaN or infinite) and shrinking the step did not help");
    }
    dt_ = control_.after_rejection(dt_, e);
  }

  // The pieces the last attempt's stages saw; empty where none were held (decided at every stage).
  std::vector<unsigned char> pieces_of_attempt() const { return attempt_held_ ? start_pieces_ : std::vector<unsigned char>{}; }

  // The last attempt's dense output, from (t0, x_) to (t1, x_new_).
  void dense_of_attempt(double t0, double t1) {
    dense_.t0 = t0;
    dense_.t1 = t1;
    dense_.x0 = x_;
    dense_.x1 = x_new_;
    stepper_->dense_output(dense_.c3, dense_.c4);
  }

  // Returns true when a stopping event ended the run inside this step.
  bool accept(const StepError& e, bool lands_on_target) {
    rejections_in_a_row_ = 0;
    ++stats_.accepted_steps;
    const double t_old = t_, t_new = lands_on_target ? target_ : t_ + dt_;
    dense_of_attempt(t_old, t_new);
    rate_old_ = sys_.full_rate;              // the full evaluation at the start of the step
    sys_.full_evaluation(x_new_, t_new);     // at its end: probes read it, the next step starts there
    circuit_.record_history(dense_, {options_.voltage_tolerance_V, options_.relative_tolerance}, w_);
    auto interp = [this](double tq, double* xo, double* ro) { dense_.at(tq, xo, ro); };
    // The kept copy (extremum refinement) evaluates the circuit for exact rates, and can integrate
    // from the step's start to an instant inside it (refinement runs at the run's end, from
    // result(), while this run still exists).
    auto keep = [this]() {
      auto d = std::make_shared<const DenseStep>(dense_);
      OdeSystem* sys = &sys_;
      EventLocator::KeptStep kept;
      kept.dense = [d, sys](double tq, double* xo, double* ro) {
        d->at(tq, xo, nullptr);
        if (ro) sys->stage_rates(tq, xo, ro);
      };
      if (!circuit_.has_history()) {
        auto pieces = std::make_shared<const std::vector<unsigned char>>(pieces_of_attempt());
        InsideStep* inside = &inside_;
        kept.exact = [inside, d, pieces](double tq, double* xo, double* ro) { inside->state_at(*d, *pieces, tq, xo, ro); };
        kept.finer = [inside, d, pieces](double a, double b) { return inside->finer(*d, *pieces, a, b); };
      }
      return kept;
    };
    const double stop_at = locator_.on_step(t_old, x_.data(), rate_old_.data(), t_new, x_new_.data(), sys_.full_rate.data(),
                                            interp, keep);
    double dt_next = control_.after_acceptance(dt_, e.norm, lands_on_target ? proposed_dt_ : 0.0);
    // With a line, kinks arrive one delay after they left, often just after another point: a
    // step cut short to land on one says nothing about the step after it.
    if (lands_on_target && circuit_.has_history()) dt_next = std::max(dt_next, proposed_dt_);
    hold_this_step_ = true;
    just_entered_ = false;
    if (holds_pieces_) hold_settled_corners_again();
    if (t_new >= piece_change_) {
      piece_change_ = std::numeric_limits<double>::infinity();
      enter_pieces_ = true;
    }
    if (std::isfinite(stop_at)) {
      // The run's last point, integrated to the stop from the step's start (its dense output may
      // bulge inside the step; inside_step.hpp); record() evaluates the rates there.
      if (circuit_.has_history()) dense_.at(stop_at, x_.data(), nullptr);
      else inside_.state_at(dense_, pieces_of_attempt(), stop_at, x_.data(), nullptr);
      t_ = stop_at;
      record();
      return true;
    }
    x_.swap(x_new_);
    t_ = t_new;
    if (options_.record_waveforms || t_ >= options_.stop_time_s) record();
    // (A kink recorded here is a corner one delay on, maybe before the one ahead.)
    if (t_ >= next_corner_ || circuit_.has_history()) next_corner_ = corner_ahead();
    dt_ = dt_next;
    report_progress();
    return false;
  }

  // Recording evaluates the point in full: the next step starts there.
  void record() {
    sys_.full_evaluation(x_, t_);
    times_.push_back(t_);
    rec_x_.insert(rec_x_.end(), x_.data(), x_.data() + n_);
    rec_rate_.insert(rec_rate_.end(), sys_.full_rate.data(), sys_.full_rate.data() + n_);
  }

  void report_progress() {
    if (!options_.progress) return;
    const double frac = (t_ - initial_.time_s) / (options_.stop_time_s - initial_.time_s);
    if (frac >= next_progress_) {
      options_.progress(frac);
      next_progress_ = std::floor(frac * 100.0 + 1.0) / 100.0;
    }
  }

  TransientResult result() {
    locator_.finish();
    EnergyReport energy = make_energy_report(circuit_, initial_, t_, x_, w_);
    const auto rows = static_cast<Eigen::Index>(times_.size());
    RowMatrix states = Eigen::Map<RowMatrix>(rec_x_.data(), rows, n_);
    RowMatrix rate_m = Eigen::Map<RowMatrix>(rec_rate_.data(), rows, n_);
    return TransientResult(circuit_, std::move(times_), std::move(states), std::move(rate_m), locator_.outcomes(),
                           std::move(energy), stats_);
  }
};

}  // namespace

std::vector<double> absolute_tolerances(const Circuit& c, const TransientOptions& o, const double* x0) {
  double node_scale = 0.0;
  if (x0) {
    for (std::size_t i = 0; i < c.states().size(); ++i) {
      if (c.states()[i].kind == StateKind::node_voltage) node_scale = std::max(node_scale, std::abs(x0[i]));
    }
  }
  std::vector<double> a;
  for (const auto& s : c.states()) {
    if (s.is_energy) a.push_back(o.energy_tolerance_J);
    else if (s.kind == StateKind::node_voltage) a.push_back(o.voltage_tolerance_V);
    else if (s.kind == StateKind::branch_current) a.push_back(o.current_tolerance_A);
    else if (s.node_scale) a.push_back(std::max(s.absolute_tolerance, o.voltage_tolerance_V + o.relative_tolerance * node_scale));
    else a.push_back(s.absolute_tolerance);
  }
  return a;
}

TransientResult simulate(const Circuit& circuit, const CircuitState& initial, const TransientOptions& options,
                         const std::vector<EventSpec>& events) {
  check_state(circuit, initial);
  check_options(options, initial.time_s);
  return TransientRun(circuit, initial, options, events).run();
}

}  // namespace coilkick::engine
