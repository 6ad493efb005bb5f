#include "coilkick/drivers/hold.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <sstream>
#include <stdexcept>
#include <string>

#include "coilkick/drivers/energy_account.hpp"
#include "coilkick/drivers/run_options.hpp"
#include "coilkick/drivers/si_format.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/transient.hpp"
#include "coilkick/relay/armature_operating_point.hpp"
#include "coilkick/relay/armature_rest.hpp"

namespace coilkick::drivers {
namespace {

const double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr int kMostDutySteps = 30;
constexpr double kDutyCurrentTolerance = 1e-5;  // relative, on the average current
// A search's bracket closed onto one duty with both sides' averages this close to the target
// (relative) has met the steady state's own noise, not a jump: the periodic steady state at the
// default tolerances reads an average to ~5e-5 (a random driver's pwl P-MOSFET hold read
// +1.5e-5 and −3.7e-5 of its target at one and the same duty). The project's 0.1 % bar.
constexpr double kDutyNoiseTolerance = 1e-3;
// An armature resting on a stop is held at the stop's penetration under the period's average
// force; that gap is found again from each steady state's average current, at most this many
// times, until it moves by less than this share of the penetration (the coil's inductance at
// the gap then no longer moves the average current within its tolerances).
constexpr int kRestPasses = 4;
constexpr double kRestGapTolerance = 1e-3;

// The drive network with the logic source's waveform replaced.
engine::Network with_logic(const BuiltDriver& b, engine::Waveform w) {
  engine::Network n = b.network;
  n.set_source_waveform("logic", std::move(w));
  return n;
}

struct HoldSolver {
  const DriverSpec& spec;
  const BuiltDriver& b;
  const HoldSpec hold;  // the hold, or the repetition as one (DriverSpec::periodic_drive)
  bool allow_shooting = true;
  HoldResult out;
  double i_full = 0.0;  // supply over hot resistance: scales the tolerances

  engine::TransientOptions options(double stop_s) const {
    auto o = driver_transient_options(spec, stop_s, i_full);
    // Armature: see switch_off_transient.cpp (an L-stable step must not damp the snap-over).
    if (b.armature) o.maximum_step_s = 0.1 * relay_datasheet(spec).release_time_s;
    return o;
  }

  // Stage 1: full drive from the off-state until the time or the current of the pull-in.
  engine::CircuitState pull_in() {
    const auto& d = spec.drive;
    const auto& h = hold;
    const engine::Network net = with_logic(b, engine::Waveform::edge(0.0, d.high_level_V, 0.0, d.rise_time_s));
    const engine::Circuit c(net);
    // The off-state the pull-in starts from: relays released (operated where that does not solve,
    // as in off_state.cpp).
    engine::CircuitState start;
    try {
      start = relay::operating_point_with_armatures_open(net, c, 0.0);
    } catch (const engine::SimulationError&) {
      if (!b.armature) throw;
      start = relay::operating_point_with_armatures_closed(net, c, 0.0);
    }
    const bool by_current = !std::isnan(h.pull_in_current_A);
    double stop = by_current ? 0.0 : h.pull_in_time_s;
    if (by_current) {
      // Long enough for any coil to approach its full current (20 time constants), and for an
      // armature to pull in (20 data-sheet operate times).
      stop = 20.0 * spec.coil.inductance_H / b.coil_resistance_ohm;
      if (b.armature) stop += 20.0 * relay_datasheet(spec).operate_time_s;
    }
    if (!(stop > 0.0)) {  // no pull-in: the hold starts from the off-state
      out.pull_in_time_s = 0.0;
      out.pull_in_end_current_A = start.values[c.state_index("coil.current")];
      out.armature_pulled_in = !b.armature;
      return start;
    }
    const engine::Probe coil = engine::Probe::state(c, "coil.current");
    std::vector<engine::EventSpec> ev;
    if (by_current) ev.push_back(engine::EventSpec::crossing("pulled_in", coil, h.pull_in_current_A, engine::Direction::rising, 0.0, true));
    if (b.armature) {
      ev.push_back(engine::EventSpec::crossing("contact_made", engine::Probe::state(c, "coil.gap"), b.armature->mechanics.make_gap_m,
                                               engine::Direction::falling, 0.0));
    }
    out.pull_in = std::make_shared<const engine::TransientResult>(engine::simulate(c, start, options(stop), ev));
    const auto& r = *out.pull_in;
    if (by_current && !r.event("pulled_in").time_s) {
      std::ostringstream m;
      const auto [wanted, reached] = format_si_apart(h.pull_in_current_A, r.states().bottomRows(1)(0, c.state_index("coil.current")), "A");
      m << "hold: the coil current does not reach hold.pull_in_current (" << wanted << ") within " << format_si(stop, "s")
        << " of full drive: it settles at " << reached << ", the on-state current the switch lets through";
      throw std::invalid_argument(m.str());  // the description asks for more than the driver gives
    }
    out.pull_in_time_s = r.end_time_s();
    const Eigen::VectorXd x = r.states().row(r.states().rows() - 1).transpose();
    out.pull_in_end_current_A = x[c.state_index("coil.current")];
    if (b.armature) out.armature_pulled_in = r.event("contact_made").time_s.has_value() || x[c.state_index("coil.gap")] < b.armature->mechanics.make_gap_m;
    return {r.end_time_s(), x};
  }

  // The PWM drive: the period starts at the falling edge (phase 0 at t = T), the on-time D·T
  // runs from the start of the rise to the start of the fall.
  engine::Network pwm_network(double duty) const {
    const auto& d = spec.drive;
    const double T = 1.0 / hold.pwm_frequency_Hz;
    return with_logic(b, engine::Waveform::pulse_train(0.0, d.high_level_V, T - duty * T, d.rise_time_s, duty * T - d.rise_time_s,
                                                       d.fall_time_s, T, 0));
  }

  // Stage 2 for one duty: the steady state, warm-started from `guess` (any time; moved to T).
  // shooting_only: no periods one by one where shooting fails (an engine::SimulationError then).
  engine::PeriodicSteadyState steady_state(const engine::Circuit& c, const engine::CircuitState& guess, bool shooting_only = false) const {
    const double T = 1.0 / hold.pwm_frequency_Hz;
    engine::CircuitState g{T, guess.values};
    engine::PeriodicOptions p;
    p.period_s = T;
    p.allow_shooting = allow_shooting;
    if (shooting_only) p.maximum_direct_periods = 0;
    p.maximum_wall_time_s = spec.analysis.maximum_wall_time_s;
    return engine::periodic_steady_state(c, g, options(2.0 * T), p);
  }

  // Stage 3: one steady period, recorded, measured.
  void measure_period(const engine::Circuit& c, const engine::CircuitState& x_star) {
    const double T = 1.0 / hold.pwm_frequency_Hz;
    const engine::Probe coil = engine::Probe::state(c, "coil.current");
    const double t0 = x_star.time_s;  // a multiple of T: the period's start
    std::vector<engine::EventSpec> ev{engine::EventSpec::minimum("hold_min", coil, t0), engine::EventSpec::maximum("hold_max", coil, t0)};
    out.period = std::make_shared<const engine::TransientResult>(engine::simulate(c, x_star, options(t0 + T), ev));
    const auto& r = *out.period;
    const int k = c.state_index("coil.current");
    // ∫ i dt over the period, exact for the cubic Hermite interpolant of the accepted points.
    double integral = 0.0;
    const auto& t = r.times_s();
    for (std::size_t j = 1; j < t.size(); ++j) {
      const double h = t[j] - t[j - 1];
      const auto a = static_cast<Eigen::Index>(j - 1), z = static_cast<Eigen::Index>(j);
      integral += 0.5 * h * (r.states()(a, k) + r.states()(z, k)) + h * h / 12.0 * (r.rates()(a, k) - r.rates()(z, k));
    }
    out.average_current_A = integral / T;
    out.minimum_current_A = r.event("hold_min").value;
    out.maximum_current_A = r.event("hold_max").value;
    const Eigen::VectorXd x0 = r.states().row(0).transpose(), x1 = r.states().row(r.states().rows() - 1).transpose();
    out.period_end = {r.end_time_s(), x1};
    out.supply_energy_per_period_J = supply_energy_between(c, x0, x1);
    out.clamp_energy_per_period_J = b.clamp_elements.empty() ? 0.0 : heat_between(c, x0, x1, b.clamp_elements);
    out.switch_energy_per_period_J = heat_between(c, x0, x1, b.switch_elements);
    out.clamp_part_energy_per_period_J.clear();
    for (const auto& e : b.clamp_part_elements) out.clamp_part_energy_per_period_J.push_back(heat_between(c, x0, x1, {e}));
  }

  // A repetition: its periods one by one from the pull-in's end, the last one measured.
  void cycles(const engine::CircuitState& start) {
    const engine::Network net = pwm_network(hold.pwm_duty);
    const engine::Circuit c(net);
    const double T = 1.0 / hold.pwm_frequency_Hz;
    engine::CircuitState x{T, start.values};
    if (hold.cycles > 1) {
      auto o = options(T + (hold.cycles - 1) * T);
      o.record_waveforms = false;
      const engine::TransientResult r = engine::simulate(c, x, o);
      x = {r.end_time_s(), r.states().row(r.states().rows() - 1).transpose()};
      x.values.tail(x.values.size() - c.circuit_state_count()).setZero();
    }
    out.duty = hold.pwm_duty;
    out.steady.method = engine::PeriodicMethod::direct;
    out.steady.period_runs = hold.cycles;
    measure_period(c, x);
  }

  // Stages 2 and 3 at one duty with the armature held where it rests on one stop (closed or
  // open), if its stop carries it through the whole steady period; nothing where it does not.
  // Pressed onto a stop, the armature rings there on the stop's stiffness at a few kHz, damped
  // only lightly at the small forces of a hold (the stop's damping goes with its force), and
  // the PWM excites that ringing every period: its multipliers of one period lie near the unit
  // circle, which neither shooting nor the periods one by one settle quickly, while the coil
  // sees nothing of it but the inductance at the resting gap. Held there, the armature is a
  // fixed coil of that inductance (relay/armature_rest.hpp) and the search is the circuit's.
  // The hold is valid where the stop holds the armature at every instant of the period: on the
  // closed stop, the lowest current still holds it closed; on the open stop, the highest
  // current neither lifts it off that stop nor, after a pull-in, could have held it closed (so
  // it has dropped out, and stays out). A held search is a shortcut: where its shooting fails,
  // the free armature's search (with its periods one by one) takes over.
  std::optional<engine::CircuitState> hold_on_stop(double duty, const engine::CircuitState& guess, bool closed) {
    const relay::ArmatureCoilParameters& p = *b.armature;
    const double stop = closed ? p.mechanics.residual_gap_m : p.mechanics.open_gap_m;
    auto rest = [&](double i) { return closed ? relay::resting_gap_closed_m(p, i) : relay::resting_gap_open_m(p, i); };
    const engine::Network net = pwm_network(duty);
    const engine::Circuit layout(net);  // the held network's states are the same
    const int k_i = layout.state_index("coil.current"), k_g = layout.state_index("coil.gap"), k_u = layout.state_index("coil.velocity");
    engine::CircuitState x = guess;
    double gap = rest(x.values[k_i]);
    if (std::isnan(gap)) gap = stop;  // the guess's current is not the hold's: the next pass finds the gap
    for (int pass = 0; pass < kRestPasses; ++pass) {
      const engine::Circuit c(relay::with_armatures_held(net, [gap](const relay::ArmatureCoil&) { return gap; }));
      x.values[k_g] = gap;
      x.values[k_u] = 0.0;
      try {
        out.steady = steady_state(c, x, true);
      } catch (const engine::SimulationError&) {
        return std::nullopt;
      }
      out.duty = duty;
      measure_period(c, out.steady.state);
      x = out.steady.state;
      const double next = rest(out.average_current_A);
      if (std::isnan(next)) return std::nullopt;
      const bool settled = std::abs(next - gap) <= kRestGapTolerance * std::abs(next - stop);
      gap = next;
      if (settled) break;
    }
    const double lo = out.minimum_current_A, hi = out.maximum_current_A;
    const double weakest = lo > 0.0 ? lo : hi < 0.0 ? -hi : 0.0, strongest = std::max(std::abs(lo), std::abs(hi));
    const bool stays = closed ? !std::isnan(relay::resting_gap_closed_m(p, weakest))
                              : !std::isnan(relay::resting_gap_open_m(p, strongest)) &&
                                    (!out.armature_pulled_in || std::isnan(relay::resting_gap_closed_m(p, strongest)));
    if (!stays) return std::nullopt;
    out.armature_rest = closed ? "closed" : "open";
    return x;
  }

  // Stages 2 and 3 at one duty; returns the circuit's steady state.
  engine::CircuitState hold_at(double duty, const engine::CircuitState& guess) {
    out.armature_rest.clear();
    // An armature resting on a stop (above); the periods one by one (the tests' reference) keep
    // it free.
    if (b.armature && allow_shooting) {
      if (out.armature_pulled_in) {
        if (auto x = hold_on_stop(duty, guess, true)) return *x;
      }
      if (auto x = hold_on_stop(duty, guess, false)) return *x;
    }
    const engine::Network net = pwm_network(duty);
    const engine::Circuit c(net);
    out.steady = steady_state(c, guess);
    out.duty = duty;
    measure_period(c, out.steady.state);
    return out.steady.state;
  }

  // The duty whose steady state averages hold.average_current. The average rises with the duty
  // but far from linearly (a slow gate or base turns the switch on late in every period), so a
  // plain secant can circle: secant steps from the resistive estimate D = target / full current
  // until the root is bracketed, then false position with the Illinois halving on the bracket
  // (Dahlquist & Björck, Numerical Methods, §6.2), kept inside the duties the edges allow.
  engine::CircuitState hold_for_current(const engine::CircuitState& guess) {
    const double target = hold.average_current_A;
    const double T = 1.0 / hold.pwm_frequency_Hz;
    const double edges = spec.drive.rise_time_s + spec.drive.fall_time_s;
    const double lo = 2.0 * edges / T, hi = 1.0 - 2.0 * edges / T;
    auto clamp = [&](double d) { return std::min(hi, std::max(lo, d)); };
    // Out of reach is the description's doing (invalid_argument); not found, the solver's.
    auto no_duty = [&](const std::string& why) {
      std::ostringstream m;
      m << "hold: " << why << " hold.average_current (" << format_si(target, "A") << "); the duties from " << lo
        << " to " << hi << " allowed by the edges were searched, the last, " << out.duty << ", holds "
        << format_si(out.average_current_A, "A");
      return m.str();
    };
    double d0 = clamp(target / i_full);
    engine::CircuitState x = hold_at(d0, guess);
    double f0 = out.average_current_A - target;
    if (std::abs(f0) <= kDutyCurrentTolerance * target) return x;
    double below = f0 < 0.0 ? d0 : kNaN, above = f0 > 0.0 ? d0 : kNaN;  // the bracket's ends
    double f_below = f0 < 0.0 ? f0 : kNaN, f_above = f0 > 0.0 ? f0 : kNaN;
    double held_below = f0 < 0.0 ? out.average_current_A : kNaN, held_above = f0 > 0.0 ? out.average_current_A : kNaN;
    int kept_side = 0;  // the side that stayed in the last step (-1 below, +1 above): Illinois
    double d1 = clamp(d0 * target / std::max(out.average_current_A, 1e-12));
    for (int it = 0; it < kMostDutySteps; ++it) {
      if (d1 == d0) {
        // The next duty is the last one: at a limit of the edges with the target beyond it, or
        // a bracket closed onto one duty, across which the average jumps (a driver whose slow
        // gate or base leaves the switch off below that on-time and fully on above it: a
        // random driver's P-MOSFET at 48 kHz went from 13 pA to 595 mA within a duty of 1e-18).
        if (!std::isnan(below) && !std::isnan(above)) {
          // Within the noise: x, the last duty run, is one of the two sides.
          if (held_above - held_below <= kDutyNoiseTolerance * target) return x;
          // One side within the bar of the target holds it: a pwl steady state's average can
          // move by more than its noise between duties a rounding apart (a random driver's pwl
          // high-side PNP at the default tolerances: 96.9 and 97.4 mA about a 97.4 mA target,
          // where a tight run finds its duty). That side's duty is taken.
          const bool above_closer = std::abs(held_above - target) <= std::abs(held_below - target);
          const double side = above_closer ? above : below, held_side = above_closer ? held_above : held_below;
          if (std::abs(held_side - target) <= kDutyNoiseTolerance * target) return out.duty == side ? x : hold_at(side, x);
          std::ostringstream m;
          m << "hold: no duty holds hold.average_current (" << format_si(target, "A") << "): the average jumps from "
            << format_si(held_below, "A") << " to " << format_si(held_above, "A") << " at the duty " << below
            << ": no duty gives a steady state in between";
          throw std::invalid_argument(m.str());
        }
        if (d1 >= hi && f0 < 0.0) throw std::invalid_argument(no_duty("even the longest duty stays below"));
        if (d1 <= lo && f0 > 0.0) throw std::invalid_argument(no_duty("even the shortest duty exceeds"));
        throw engine::SimulationError(no_duty("the duty search stalled (its next duty the last one) short of"));
      }
      x = hold_at(d1, x);
      const double f1 = out.average_current_A - target;
      if (std::abs(f1) <= kDutyCurrentTolerance * target) return x;
      if (f1 < 0.0) {
        below = d1, f_below = f1, held_below = out.average_current_A;
        if (kept_side == -1) f_above *= 0.5;
        kept_side = -1;
      } else {
        above = d1, f_above = f1, held_above = out.average_current_A;
        if (kept_side == 1) f_below *= 0.5;
        kept_side = 1;
      }
      double next;
      if (std::isnan(below) || std::isnan(above)) {  // not yet bracketed: secant, to the limit at most
        const double slope = (f1 - f0) / (d1 - d0);
        next = std::abs(slope) > 0.0 && std::isfinite(slope) && slope > 0.0 ? clamp(d1 - f1 / slope)
                                                                         : clamp(f1 < 0.0 ? d1 + 0.5 * (hi - d1) : d1 - 0.5 * (d1 - lo));
      } else {
        next = below - f_below * (above - below) / (f_above - f_below);
      }
      d0 = d1, f0 = f1, d1 = next;
    }
    throw engine::SimulationError(no_duty("no duty found in " + std::to_string(kMostDutySteps) + " steps that holds"));
  }
};

}  // namespace

HoldResult solve_hold(const DriverSpec& spec, const BuiltDriver& b, bool allow_shooting) {
  if (!spec.has_periodic_drive()) throw std::invalid_argument("hold: the description has no hold ([hold] or [repeat])");
  HoldSolver s{spec, b, spec.periodic_drive(), allow_shooting, {}};
  s.i_full = spec.supply.voltage_V / b.coil_resistance_ohm;
  s.out.period_s = 1.0 / s.hold.pwm_frequency_Hz;
  s.out.cycles = s.hold.cycles;
  const engine::CircuitState pulled = s.pull_in();
  if (s.hold.cycles > 0) s.cycles(pulled);
  else if (std::isnan(s.hold.average_current_A)) s.hold_at(s.hold.pwm_duty, pulled);
  else s.hold_for_current(pulled);
  // The final switch-off starts where the measured period ends: the end of an on-time.
  const engine::CircuitState& end = s.out.period_end;
  s.out.final_start = {spec.drive.switch_off_at_s, end.values};
  if (b.armature) {
    const engine::Circuit c(b.network);
    s.out.armature_held = end.values[c.state_index("coil.gap")] < b.armature->mechanics.make_gap_m;
  }
  return std::move(s.out);
}

void set_hold_metrics(const DriverSpec& spec, const HoldResult* h, Metrics& m) {
  auto put = [&](const char* name, double v) { m.set(name, h ? v : kNaN); };
  const double i_rel = release_current_A(spec.coil);
  const double T = h ? h->period_s : kNaN;
  // A repetition has no pull-in and no hold to keep above the release current.
  const bool held = h && h->cycles == 0;
  put("hold_pull_in_time_s", held ? h->pull_in_time_s : kNaN);
  put("hold_pull_in_current_A", held ? h->pull_in_end_current_A : kNaN);
  put("hold_duty", h ? h->duty : kNaN);
  put("hold_average_current_A", h ? h->average_current_A : kNaN);
  put("hold_ripple_A", h ? h->maximum_current_A - h->minimum_current_A : kNaN);
  put("hold_minimum_current_A", h ? h->minimum_current_A : kNaN);
  put("hold_current_margin", held ? h->minimum_current_A / i_rel : kNaN);
  put("hold_clamp_average_power_W", h ? h->clamp_energy_per_period_J / T : kNaN);
  put("hold_switch_average_power_W", h ? h->switch_energy_per_period_J / T : kNaN);
  put("hold_supply_energy_per_period_J", h ? h->supply_energy_per_period_J : kNaN);
  put("hold_clamp_energy_per_period_J", h ? h->clamp_energy_per_period_J : kNaN);
}

}  // namespace coilkick::drivers
