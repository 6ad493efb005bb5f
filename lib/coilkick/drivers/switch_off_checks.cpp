#include "coilkick/drivers/switch_off_checks.hpp"

#include <cmath>
#include <sstream>

#include "coilkick/drivers/si_format.hpp"

namespace coilkick::drivers {
namespace {

const double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kHoldMargin = 1.2;  // lowest hold current over the release current (our choice)
// A PWM's switch turns off within this share of each off-time (our choice: room for the spread
// of its gate or base charge and of the drive's resistors).
constexpr double kTurnOffShareOfOffTime = 0.5;

// pass up to `pass_limit`, warn up to `fail_limit`, fail beyond (a NaN value fails).
RatingCheck graded(const std::string& name, double value, double pass_limit, double fail_limit, const std::string& unit,
                   const std::string& detail) {
  RatingCheck c{name, CheckStatus::pass, value, pass_limit, unit, detail, fail_limit};
  if (!(value <= fail_limit)) c.status = CheckStatus::fail;
  else if (!(value <= pass_limit)) c.status = CheckStatus::warn;
  return c;
}

std::string si(double v, const char* unit) { return format_si(v, unit, 4); }
// A ratio to four significant digits.
std::string ratio(double v) {
  std::ostringstream o;
  o.precision(4);
  o << v;
  return o.str();
}

struct Checker {
  const DriverSpec& spec;
  const BuiltDriver& b;
  const Metrics& m;
  std::vector<RatingCheck> out;

  double rating(const char* key) const { return b.switch_part->has_rating(key) ? b.switch_part->rating(key) : kNaN; }

  void switch_ratings() {
    const double rating_V = m.get("switch_voltage_rating_V");
    const double derate = spec.analysis.switch_voltage_derating;
    if (!std::isnan(rating_V)) {
      out.push_back(graded("switch_voltage", m.get("switch_voltage_peak_V"), derate * rating_V, rating_V, "V",
                           "peak switch voltage against " + std::to_string(std::lround(100 * derate)) + " % of the rating " +
                               si(rating_V, "V") + " (common practice); fails above the rating itself"));
    }
    const double current = rating(b.mosfet ? "drain_current" : "collector_current");
    if (!std::isnan(current)) {
      out.push_back(graded("switch_current", m.get("coil_current_at_switch_off_A"), 0.8 * current, current, "A",
                           "on-state current against 80 % of the switch's continuous rating " + si(current, "A") +
                               "; fails above the rating"));
    }
  }

  void clamp_ratings(const std::vector<double>& part_energy_J) {
    const double i_pk = m.get("clamp_current_peak_A");
    const double t_pulse = m.get("current_decay_time_10pct_s");
    for (std::size_t k = 0; k < b.clamp_parts.size(); ++k) {
      const auto* part = b.clamp_parts[k];
      const double e = part_energy_J[k];
      const std::string tag = ":" + part->name;
      const bool breakdown_part = part->family == "zener" || part->family == "tvs";
      if (!breakdown_part && part->has_rating("peak_forward_current")) {
        const double lim = part->rating("peak_forward_current");
        out.push_back(graded("clamp_peak_current" + tag, i_pk, 0.8 * lim, lim, "A",
                             "clamp peak current against 80 % of the diode's peak forward current rating " + si(lim, "A")));
      }
      if (!std::isfinite(e)) continue;  // not measured: the off-state does not block
      if (breakdown_part && part->has_rating("peak_pulse_power") && !std::isnan(t_pulse) && t_pulse > 0.0) {
        const double lim = part->rating("peak_pulse_power");
        out.push_back(graded("clamp_pulse_power" + tag, e / t_pulse, 0.8 * lim, lim, "W",
                             "this part's energy over the decay time against 80 % of its peak pulse power " + si(lim, "W")));
      }
      if (part->has_rating("pulse_energy")) {
        const double lim = part->rating("pulse_energy");
        out.push_back(graded("clamp_energy" + tag, e, 0.8 * lim, lim, "J",
                             "this part's energy per operation against 80 % of its pulse energy rating " + si(lim, "J")));
      }
      if (spec.drive.period_s > 0.0 && part->has_rating("power")) {
        const double lim = part->rating("power");
        out.push_back(graded("clamp_average_power" + tag, e / spec.drive.period_s, 0.8 * lim, lim, "W",
                             "this part's energy per operation times the repetition rate against 80 % of its power rating " +
                                 si(lim, "W")));
      }
    }
  }

  void drive_checks() {
    const double pin = spec.analysis.logic_pin_current_limit_A;
    out.push_back(graded("logic_pin_current", m.get("logic_pin_current_A"), 0.8 * pin, pin, "A",
                         "logic output current against 80 % of the pin limit " + si(pin, "A")));
    if (!b.mosfet) {
      const double min_beta = rating("minimum_forward_beta");
      if (!std::isnan(min_beta)) {
        out.push_back(graded("drive_saturation", m.get("forced_beta"), 0.5 * min_beta, min_beta, "1",
                             "forced gain I_C/I_B against half the minimum gain " + si(min_beta, "") +
                                 " (drive at least twice as hard as the minimum gain needs: common practice); fails above the "
                                 "minimum gain itself"));
      }
      const double sat_limit = spec.switch_.topology == Topology::low_side_darlington ? 1.5 : 0.5;
      out.push_back(graded("switch_saturated", m.get("switch_saturation_voltage_V"), 0.6 * sat_limit, sat_limit, "V",
                           "on-state switch voltage: a saturated switch drops about 0.1–0.3 V (a Darlington about 1 V); fails "
                           "above " + si(sat_limit, "V")));
    }
  }

  void gate_checks(double v_gs_on) {
    if (!b.mosfet) return;
    const double vth = rating("maximum_threshold_voltage");
    if (!std::isnan(vth)) {
      RatingCheck g{"gate_drive", CheckStatus::pass, v_gs_on, vth + 2.0, "V",
                    "on-state gate–source voltage at least the maximum threshold + 2 V (common practice for a fully on "
                    "channel); fails below threshold + 1 V",
                    vth + 1.0};
      if (v_gs_on < vth + 1.0) g.status = CheckStatus::fail;
      else if (v_gs_on < vth + 2.0) g.status = CheckStatus::warn;
      out.push_back(g);
    }
    const double lim = rating("gate_source_voltage");
    if (!std::isnan(lim)) {
      out.push_back(graded("gate_voltage_rating", v_gs_on, 0.8 * lim, lim, "V",
                           "on-state gate–source voltage against 80 % of its rating " + si(lim, "V")));
    }
  }

  // Energy the switch dissipates in breakdown (its avalanche branch), never its other heat.
  void breakdown_checks() {
    const double e_bd = m.get("switch_breakdown_energy_J");
    if (!std::isfinite(e_bd)) return;
    if (b.mosfet) {
      const double lim = rating("avalanche_energy");
      if (!std::isnan(lim)) {
        out.push_back(graded("switch_avalanche_energy", e_bd, 0.8 * lim, lim, "J",
                             "energy the switch dissipates in avalanche (breakdown only) against 80 % of its single-pulse "
                             "rating " + si(lim, "J")));
      }
      return;
    }
    const double i0 = m.get("coil_current_at_switch_off_A");
    const double e0 = 0.5 * spec.coil.inductance_H * i0 * i0;
    const double lim = 1e-3 * e0;
    out.push_back({"switch_breakdown", e_bd > lim ? CheckStatus::warn : CheckStatus::pass, e_bd, lim, "J",
                   "energy the bipolar switch dissipates in collector breakdown, a mode it is not rated for: warns above "
                   "0.1 % of the coil's stored energy"});
  }

  void coil_checks(double i_rel, double r_coil, const HoldResult* hold) {
    if (std::isnan(i_rel)) return;
    // With a hold the coil must operate on the pull-in; the hold itself has hold_current_margin.
    // (A repetition has no pull-in: its on-times must operate the relay, read at their peak.)
    const bool repeated = hold && hold->cycles > 0;
    const double i0 = !hold ? m.get("coil_current_at_switch_off_A") : repeated ? hold->maximum_current_A : hold->pull_in_end_current_A;
    const std::string what = !hold ? "on-state coil current" : repeated ? "highest coil current of the last on-time" : "coil current at the end of the pull-in";
    RatingCheck g{"coil_operates", i0 > i_rel ? CheckStatus::pass : CheckStatus::fail, i0, i_rel, "A",
                  what + " against the release current"};
    double i_op = spec.coil.operate_current_A;
    if (std::isnan(i_op) && !std::isnan(spec.coil.operate_voltage_V)) i_op = spec.coil.operate_voltage_V / r_coil;
    if (!(i0 > i_rel)) {
      g.detail = "the on-state coil current is not above the release current (" + si(i_rel, "A") +
                 "): the relay would not even hold";
    } else if (!std::isnan(i_op)) {
      g.limit = i_op;
      g.detail = what + " against the operate current";
      g.status = i0 >= i_op ? CheckStatus::pass : CheckStatus::fail;
    }
    out.push_back(g);
  }

  void relay_checks(const HoldResult* hold) {
    if (!b.relay_calibration) return;
    const double worst = b.relay_calibration->worst_relative_error();
    // Above half (our choice) the armature is not the data sheet's: a time it cannot reach on this
    // coil (the calibration keeps the nearest it found), and the contact times mean little.
    out.push_back({"relay_calibration", worst <= 0.02 ? CheckStatus::pass : worst <= 0.5 ? CheckStatus::warn : CheckStatus::fail, worst, 0.02,
                   "1",
                   "largest relative miss of the armature model's calibration targets (operate and release voltage and "
                   "time, closed inductance); above 2 % the contact times are less trustworthy, above 50 % the armature "
                   "cannot meet the data sheet on this coil"});
    if (b.armature && std::isnan(m.get("contact_open_time_s"))) {
      out.push_back({"contact_opens", CheckStatus::fail, kNaN, kNaN, "s",
                     hold && !hold->armature_held ? "the make contact opened already in the PWM hold, before the switch-off"
                                                  : "the make contact did not open within the simulated time"});
    }
  }

  void hold_checks(const HoldResult& h) {
    const double i_rel = release_current_A(spec.coil);
    const bool repeated = h.cycles > 0;
    if (repeated && !std::isnan(i_rel)) {
      // Between operations the current must fall below the release current before the next on-time.
      out.push_back({"repeat_releases", h.minimum_current_A < i_rel ? CheckStatus::pass : CheckStatus::fail, h.minimum_current_A, i_rel,
                     "A",
                     "lowest coil current of the last cycle (at the next switch-on) against the release current: above it "
                     "the relay never releases between operations (lengthen the off-time or use a faster clamp)"});
    }
    if (!repeated && !std::isnan(i_rel)) {
      const double margin = h.minimum_current_A / i_rel;
      RatingCheck c{"hold_current_margin", margin >= kHoldMargin ? CheckStatus::pass : margin >= 1.0 ? CheckStatus::warn : CheckStatus::fail,
                    margin, kHoldMargin, "1",
                    "lowest coil current of the hold's ripple over the release current " + si(i_rel, "A") +
                        ": at least 1.2 (our choice: room for supply and temperature spread), fails below 1 (the relay "
                        "drops out in hold)",
                    1.0};
      out.push_back(c);
    }
    if (b.armature && !repeated) {
      out.push_back({"hold_pull_in", h.armature_pulled_in ? CheckStatus::pass : CheckStatus::fail, h.pull_in_time_s, kNaN, "s",
                     h.armature_pulled_in ? "the armature closed the make contact during the pull-in"
                                          : "the armature did not close the make contact during the pull-in: lengthen "
                                            "hold.pull_in_time or raise hold.pull_in_current"});
    }
    const double T = h.period_s;
    // The final switch-off starts where a steady on-time ends, so its switch-off delay is the
    // time the switch takes to turn off in every period. Beyond the off-time it is switched on
    // again before it has turned off: it never blocks, sits in its linear region, and its
    // average current and heat hang on how far it got (a random driver's P-MOSFET whose gate
    // was pulled up through 66 kΩ: 55 µs against a 41 µs off-time, 1.1 W in a "hold").
    const double off_time_s = (1.0 - h.duty) * T, turn_off_s = m.get("switch_off_delay_s");
    if (std::isfinite(turn_off_s) && off_time_s > 0.0) {
      out.push_back(graded(repeated ? "repeat_switch_follows" : "hold_switch_follows", turn_off_s, kTurnOffShareOfOffTime * off_time_s,
                           off_time_s, "s",
                           "time the switch takes to turn off in each period (switch_off_delay_s, from the end of a steady "
                           "on-time) against half the off-time " + si(off_time_s, "s") +
                               " (our choice); fails beyond the whole off-time: the switch is turned on again before it "
                               "has turned off"));
    }
    for (std::size_t k = 0; k < b.clamp_parts.size(); ++k) {
      const auto* part = b.clamp_parts[k];
      if (!part->has_rating("power") || k >= h.clamp_part_energy_per_period_J.size()) continue;
      const double lim = part->rating("power");
      out.push_back(graded("hold_clamp_power:" + part->name, h.clamp_part_energy_per_period_J[k] / T, 0.8 * lim, lim, "W",
                           "this part's average power in the PWM hold against 80 % of its continuous power rating " +
                               si(lim, "W") + " (derating: common practice)"));
    }
    const double sw_lim = rating("power");
    if (!std::isnan(sw_lim)) {
      out.push_back(graded("hold_switch_power", h.switch_energy_per_period_J / T, 0.8 * sw_lim, sw_lim, "W",
                           "the switch's average power in the PWM hold (conduction and switching) against 80 % of its "
                           "power rating " + si(sw_lim, "W") + " (derating: common practice)"));
    }
    if (repeated) {
      out.push_back({"repeat_cycles", CheckStatus::pass, static_cast<double>(h.cycles), kNaN, "1",
                     "the repetition's " + std::to_string(h.cycles) + " cycles simulated one by one from the off-state; the "
                     "hold metrics describe the last cycle"});
      return;
    }
    const bool shot = h.steady.method == engine::PeriodicMethod::shooting;
    const std::string rest = h.armature_rest.empty() ? "" : "; the armature rests on its " + h.armature_rest +
                                                                 " stop through the whole period and was held there";
    out.push_back({"hold_steady_state", shot ? CheckStatus::pass : CheckStatus::warn, h.steady.distance_in_error_scales,
                   10.0, "1",
                   shot ? "the hold's periodic steady state by shooting (" + std::to_string(h.steady.newton_iterations) +
                              " Newton steps, " + std::to_string(h.steady.period_runs) +
                              " periods simulated; it attracts: largest multiplier of one period " +
                              ratio(h.steady.largest_multiplier) + ")" + rest
                        : h.steady.note + " (" + std::to_string(h.steady.period_runs) + " periods)" + rest});
  }

  void run_checks(const OffState& off, bool decay_observed) {
    const double i0 = m.get("coil_current_at_switch_off_A");
    const double blocking = kBlockingCurrentFraction * std::abs(i0);
    out.push_back({"off_state_blocks", off.blocks ? CheckStatus::pass : CheckStatus::fail, std::abs(off.coil_current_A),
                   blocking, "A",
                   off.blocks ? "coil current with the drive off (DC) against 1 % of the on-state current: the driver blocks "
                                "the supply"
                              : off.reason});
    if (!off.blocks) return;  // nothing of the energy account is measured (switch_off_metrics.hpp)
    const double eb = m.get("energy_balance_error");
    RatingCheck acc{"accuracy", eb <= spec.analysis.energy_balance_limit ? CheckStatus::pass : CheckStatus::fail, eb,
                    spec.analysis.energy_balance_limit, "1",
                    "relative energy-balance error of the switch-off run; above the limit the run is inaccurate"};
    if (!decay_observed) {
      acc.status = CheckStatus::fail;
      acc.detail = "the run ended before the coil current was seen to fall below 10 % of its on-state value" +
                   std::string(std::isnan(release_current_A(spec.coil)) ? "" : " and below the release current") +
                   (spec.relay.armature_model ? " with the contact open" : "") +
                   ": release and decay times are unknown (give a later analysis.stop_time, or leave it automatic)";
    }
    out.push_back(acc);
  }
};

}  // namespace

std::vector<RatingCheck> switch_off_checks(const DriverSpec& spec, const BuiltDriver& b, const SwitchOffMeasures& measures,
                                           const OffState& off, bool decay_observed, double gate_source_on_V,
                                           const HoldResult* hold) {
  Checker k{spec, b, measures.metrics, {}};
  k.switch_ratings();
  k.clamp_ratings(measures.clamp_part_energy_J);
  k.drive_checks();
  k.gate_checks(gate_source_on_V);
  k.breakdown_checks();
  k.coil_checks(release_current_A(spec.coil), b.coil_resistance_ohm, hold);
  if (hold) k.hold_checks(*hold);
  k.relay_checks(hold);
  k.run_checks(off, decay_observed);
  return k.out;
}

std::vector<RatingCheck> common_clamp_checks(const BuiltDriver& board, const Metrics& m, double conduction_s) {
  std::vector<RatingCheck> out;
  const auto* part = board.common_clamp_part;
  if (!part) return out;
  const double e = m.get("common_clamp_energy_J");
  const std::string tag = ":" + part->name;
  if (part->has_rating("peak_pulse_power") && !std::isnan(conduction_s) && conduction_s > 0.0) {
    const double lim = part->rating("peak_pulse_power");
    out.push_back(graded("common_clamp_pulse_power" + tag, e / conduction_s, 0.8 * lim, lim, "W",
                         "the common Zener's average power while the slowest coil decays to 10 % against 80 % of its peak pulse power rating " +
                             si(lim, "W")));
  }
  if (part->has_rating("pulse_energy")) {
    const double lim = part->rating("pulse_energy");
    out.push_back(graded("common_clamp_energy" + tag, e, 0.8 * lim, lim, "J",
                         "the common Zener's heat from every channel's switch-off in the run against 80 % of its pulse energy rating " +
                             si(lim, "J")));
  }
  return out;
}

}  // namespace coilkick::drivers
