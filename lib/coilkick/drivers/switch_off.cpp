#include "coilkick/drivers/switch_off.hpp"

#include <cmath>
#include <limits>
#include <sstream>

#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/operating_point.hpp"
#include "coilkick/engine/probe.hpp"
#include "coilkick/engine/state.hpp"
#include "coilkick/engine/transient.hpp"
#include "coilkick/drivers/run_options.hpp"
#include "coilkick/drivers/switch_on.hpp"
#include "coilkick/relay/armature_operating_point.hpp"

namespace coilkick::drivers {
namespace {

using engine::Circuit;
using engine::Direction;
using engine::EventSpec;
using engine::Probe;
const double kNaN = std::numeric_limits<double>::quiet_NaN();

double heat_between(const engine::TransientResult& r, const Eigen::VectorXd& x0, const Eigen::VectorXd& x1,
                    const std::vector<std::string>& elements) {
  const auto& c = r.circuit();
  double e = 0.0;
  for (std::size_t k = 0; k < c.power_channels().size(); ++k) {
    const auto& ch = c.power_channels()[k];
    if (ch.kind != engine::PowerChannelSpec::Kind::dissipated) continue;
    for (const auto& el : elements) {
      if (ch.element == el) {
        const auto i = static_cast<Eigen::Index>(c.circuit_state_count()) + static_cast<Eigen::Index>(k);
        e += x1[i] - x0[i];
      }
    }
  }
  return e;
}

// First time after `after_s` where f − level changes sign in the given direction, located on
// the stored waveform (Hermite interpolation of the accepted points, then bisection).
double crossing_after(const engine::TransientResult& r, const std::function<double(double, const double*)>& f,
                      double level, double after_s, bool rising) {
  const auto& t = r.times_s();
  for (std::size_t k = 1; k < t.size(); ++k) {
    if (t[k] <= after_s) continue;
    const double a = std::max(t[k - 1], after_s), b = t[k];
    const Eigen::VectorXd xa = r.sample(a), xb = r.sample(b);
    const double ga = f(a, xa.data()) - level, gb = f(b, xb.data()) - level;
    const bool hit = rising ? (ga < 0.0 && gb >= 0.0) : (ga > 0.0 && gb <= 0.0);
    if (!hit) continue;
    double lo = a, hi = b, glo = ga;
    for (int it = 0; it < 100 && hi - lo > 1e-15 * std::max(1.0, std::abs(hi)); ++it) {
      const double m = 0.5 * (lo + hi);
      const Eigen::VectorXd xm = r.sample(m);
      const double gm = f(m, xm.data()) - level;
      if ((gm > 0.0) == (glo > 0.0)) {
        lo = m;
        glo = gm;
      } else {
        hi = m;
      }
    }
    return hi;
  }
  return kNaN;
}

RatingCheck graded(const std::string& name, double value, double pass_limit, double fail_limit, const std::string& unit,
                   const std::string& detail) {
  RatingCheck c{name, CheckStatus::pass, value, fail_limit, unit, detail};
  if (!(value <= fail_limit)) c.status = CheckStatus::fail;
  else if (!(value <= pass_limit)) c.status = CheckStatus::warn;
  return c;
}

std::string fmt(double v) {
  std::ostringstream o;
  o.precision(4);
  o << v;
  return o.str();
}

}  // namespace

SwitchOffResult simulate_switch_off(const DriverSpec& spec, const catalogue::Catalogue& parts) {
  return simulate_switch_off(spec, build_driver_network(spec, parts));
}

SwitchOffResult simulate_switch_off(const DriverSpec& spec, const BuiltDriver& b) {
  const auto circuit = std::make_shared<Circuit>(b.network);
  const Circuit& c = *circuit;
  const double vs = spec.supply.voltage_V;
  const double t_off = spec.drive.switch_off_at_s;

  // ---- on-state
  const engine::CircuitState on = relay::operating_point_with_armatures_closed(b.network, c, 0.0);
  engine::Workspace w = c.make_workspace();
  const int coil_i = c.state_index("coil.current");
  const double i0 = on.values[coil_i];
  auto vsw = [&c, &b](double t, const double* x) {
    return c.node_voltage_V(b.switch_high_node, t, x) - c.node_voltage_V(b.switch_low_node, t, x);
  };
  const double v_sat = vsw(0.0, on.values.data());
  const auto ctrl = c.terminal_currents_A(c.element_index(b.switch_control_terminal_element), 0.0, on.values.data(), w);
  const double drive_A = b.high_side || b.mosfet ? std::abs(ctrl[1])
                                                 : std::abs(c.terminal_currents_A(c.element_index("base_resistor"), 0.0, on.values.data(), w)[0]);
  c.evaluate(0.0, 0.0, on.values.data(), w, false);
  const double logic_A = std::abs(w.source_current_A[1]);  // sources: 0 supply, 1 logic
  const double v_coil_on = b.high_side ? c.node_voltage_V("switch", 0.0, on.values.data())
                                       : vs - c.node_voltage_V("switch", 0.0, on.values.data());
  const double v_gs_on = std::abs(c.node_voltage_V("base", 0.0, on.values.data()) -
                                  (b.high_side ? vs : 0.0));
  const double i_rel = release_current_A(spec.coil);

  // ---- switch-off transient
  const double r_coil = b.coil_resistance_ohm;
  const double tau = spec.coil.inductance_H / r_coil;
  // With the armature model the contact opens after the current has fallen and the armature
  // has travelled: allow 20 data-sheet release times more.
  const double release_s = b.armature ? relay_datasheet(spec).release_time_s : 0.0;
  auto o = driver_transient_options(spec,
                                    spec.analysis.stop_time_s > 0.0 ? spec.analysis.stop_time_s
                                                                    : t_off + spec.drive.fall_time_s + 8.0 * tau + 20.0 * release_s,
                                    i0);
  // Armature: an L-stable step much longer than its snap-over would damp that instability
  // instead of following it (relay_calibration.cpp); a tenth of the release time bounds it.
  if (b.armature) o.maximum_step_s = 0.1 * release_s;
  const Probe p_vsw("switch voltage", vsw);
  const Probe p_coil = Probe::state(c, "coil.current");
  std::vector<EventSpec> ev{EventSpec::maximum("peak", p_vsw, t_off),
                            EventSpec::crossing("decay10", p_coil, 0.1 * i0, Direction::falling, t_off),
                            EventSpec::crossing("off_delay", p_vsw, 0.9 * vs, Direction::rising, t_off)};
  if (!std::isnan(i_rel)) ev.push_back(EventSpec::crossing("release", p_coil, i_rel, Direction::falling, t_off));
  const double make_gap = b.armature ? b.armature->mechanics.make_gap_m : kNaN;
  const int gap_i = b.armature ? c.state_index("coil.gap") : -1;
  if (b.armature) ev.push_back(EventSpec::crossing("contact_open", Probe::state(c, "coil.gap"), make_gap, Direction::rising, t_off));
  if (!b.clamp_current_element.empty()) {
    const Probe current = Probe::element_current(c, b.clamp_current_element, 0);
    ev.push_back(EventSpec::maximum("clamp_peak", Probe::using_rates("clamp current", [current](double t, const double* x, const double* rates) {
                                      return std::abs(current(t, x, rates));
                                    }), t_off));
  }
  // Stop once the energy left in the coil and at the switch node is a small fraction of the
  // initial ½·L·I0² (and the coil current is then well below the release threshold).
  if (spec.analysis.stop_when_decayed) {
    double c_node = spec.coil.winding_capacitance_F + spec.switch_.board_stray_capacitance_F;
    if (spec.clamp.kind == ClampKind::rc_across_coil || spec.clamp.kind == ClampKind::rc_across_switch ||
        spec.clamp.add_rc_snubber_across_coil) {
      c_node += spec.clamp.snubber_capacitance_F;
    }
    const double l = spec.coil.inductance_H, e0 = 0.5 * l * i0 * i0;
    double frac = 1e-4;
    if (!std::isnan(i_rel)) frac = std::min(frac, 0.25 * (i_rel / i0) * (i_rel / i0));
    // With the armature model the run also waits for the contact to open: until then the
    // probe reads the full initial energy.
    ev.push_back(EventSpec::crossing("decayed", Probe("remaining energy", [=, &c](double t, const double* x) {
                                       const double i = x[coil_i], dv = vsw(t, x) - vs;
                                       (void)c;
                                       if (gap_i >= 0 && x[gap_i] < make_gap) return e0;
                                       return 0.5 * l * i * i + 0.5 * c_node * dv * dv;
                                     }), frac * e0, Direction::falling, t_off + spec.drive.fall_time_s, true));
  }
  auto tr = std::make_shared<const engine::TransientResult>(engine::simulate(c, on, o, ev));
  const auto& r = *tr;

  // ---- metrics
  SwitchOffResult out;
  out.spec = spec;
  out.transient = tr;
  Metrics& m = out.metrics;
  auto since_off = [&](const engine::EventOutcome& e) { return e.time_s ? *e.time_s - t_off : kNaN; };
  m.set("coil_current_at_switch_off_A", i0);
  m.set("drive_current_A", drive_A);
  m.set("forced_beta", b.mosfet ? kNaN : i0 / drive_A);
  m.set("switch_saturation_voltage_V", v_sat);
  m.set("coil_voltage_on_V", v_coil_on);
  m.set("logic_pin_current_A", logic_A);
  const auto& peak = r.event("peak");
  m.set("switch_voltage_peak_V", peak.value);
  m.set("switch_voltage_peak_time_s", since_off(peak));
  const char* rating_key = b.mosfet ? "drain_source_voltage" : "collector_emitter_voltage";
  const double rating = b.switch_part->has_rating(rating_key) ? b.switch_part->rating(rating_key) : kNaN;
  m.set("switch_voltage_rating_V", rating);
  m.set("switch_voltage_margin", peak.value / rating);
  m.set("clamp_current_peak_A", b.clamp_current_element.empty() ? kNaN : r.event("clamp_peak").value);
  const Eigen::VectorXd x_off = r.sample(t_off);
  const Eigen::VectorXd x_end = r.states().row(r.states().rows() - 1).transpose();
  const double e_clamp = heat_between(r, x_off, x_end, b.clamp_elements);
  m.set("clamp_energy_J", b.clamp_elements.empty() ? 0.0 : e_clamp);
  m.set("coil_resistance_energy_J", heat_between(r, x_off, x_end, {"coil"}));
  m.set("switch_energy_J", heat_between(r, x_off, x_end, b.switch_elements));
  {
    // Balance over the switch-off window: supplied + stored(t_off) = dissipated + stored(end).
    double supplied = 0.0, dissipated = 0.0;
    for (std::size_t k = 0; k < c.power_channels().size(); ++k) {
      const auto i = static_cast<Eigen::Index>(c.circuit_state_count()) + static_cast<Eigen::Index>(k);
      const double d = x_end[i] - x_off[i];
      (c.power_channels()[k].kind == engine::PowerChannelSpec::Kind::supplied ? supplied : dissipated) += d;
    }
    const double in = supplied + c.stored_energy_J(-1, t_off, x_off.data(), w);
    const double outE = dissipated + c.stored_energy_J(-1, r.end_time_s(), x_end.data(), w);
    m.set("energy_balance_error", std::abs(in - outE) / std::max(std::abs(in), std::abs(outE)));
  }
  m.set("release_time_s", std::isnan(i_rel) ? kNaN : since_off(r.event("release")));
  m.set("current_decay_time_10pct_s", since_off(r.event("decay10")));
  m.set("switch_off_delay_s", since_off(r.event("off_delay")));
  {
    // Ringing: after the peak, v_sw − V_s falls through zero and comes back up half a period later.
    double f = kNaN;
    if (peak.time_s) {
      const double t1 = crossing_after(r, vsw, vs, *peak.time_s, false);
      const double t2 = std::isnan(t1) ? kNaN : crossing_after(r, vsw, vs, t1, true);
      if (!std::isnan(t2)) f = 1.0 / (2.0 * (t2 - t1));
    }
    m.set("ringing_frequency_Hz", f);
  }
  m.set("clamp_average_power_W", spec.drive.period_s > 0.0 ? e_clamp / spec.drive.period_s : kNaN);
  {
    // Contact opening (armature model): time from the switch-off edge, armature speed there.
    double t_open = kNaN, speed = kNaN, t_operate = kNaN;
    if (b.armature) {
      const auto& e = r.event("contact_open");
      if (e.time_s) {
        t_open = *e.time_s - t_off;
        speed = r.sample(*e.time_s)[c.state_index("coil.velocity")];
      }
      t_operate = simulate_operate_time_s(spec, b);
    }
    m.set("contact_open_time_s", t_open);
    m.set("armature_speed_at_contact_open_m_per_s", speed);
    m.set("operate_time_s", t_operate);
  }

  // ---- waveforms
  const auto n = static_cast<Eigen::Index>(r.times_s().size());
  auto& wf = out.waveforms;
  wf.time_s = Eigen::Map<const Eigen::VectorXd>(r.times_s().data(), n);
  wf.switch_voltage_V.resize(n);
  for (Eigen::Index k = 0; k < n; ++k) wf.switch_voltage_V[k] = vsw(r.times_s()[static_cast<std::size_t>(k)], r.states().row(k).data());
  wf.coil_current_A = r.state("coil.current");
  if (b.armature) wf.armature_gap_m = r.state("coil.gap");
  wf.clamp_current_A = b.clamp_current_element.empty() ? Eigen::VectorXd::Zero(n) : r.element_current_A(b.clamp_current_element, 0);

  // ---- rating checks
  auto& ck = out.checks;
  const double derate = spec.analysis.switch_voltage_derating;
  if (!std::isnan(rating)) {
    ck.push_back(graded("switch_voltage", peak.value, derate * rating, rating, "V",
                        "peak switch voltage against the rating " + fmt(rating) + " V, kept below " + fmt(100 * derate) +
                            " % of it (common practice)"));
  }
  const char* current_key = b.mosfet ? "drain_current" : "collector_current";
  if (b.switch_part->has_rating(current_key)) {
    const double lim = b.switch_part->rating(current_key);
    ck.push_back(graded("switch_current", i0, 0.8 * lim, lim, "A", "on-state current against the switch's continuous rating"));
  }
  const double i_clamp_pk = m.get("clamp_current_peak_A");
  const double t_pulse = m.get("current_decay_time_10pct_s");
  for (const auto* part : b.clamp_parts) {
    const bool breakdown_part = part->family == "zener" || part->family == "tvs";
    if (!breakdown_part && part->has_rating("peak_forward_current")) {
      const double lim = part->rating("peak_forward_current");
      ck.push_back(graded("clamp_peak_current:" + part->name, i_clamp_pk, 0.8 * lim, lim, "A",
                          "clamp peak current against the diode's peak forward current rating"));
    }
    if (breakdown_part && part->has_rating("peak_pulse_power") && !std::isnan(t_pulse) && t_pulse > 0.0) {
      const double lim = part->rating("peak_pulse_power");
      ck.push_back(graded("clamp_pulse_power:" + part->name, e_clamp / t_pulse, 0.8 * lim, lim, "W",
                          "clamp energy over the decay time against the part's peak pulse power"));
    }
    if (part->has_rating("pulse_energy")) {
      const double lim = part->rating("pulse_energy");
      ck.push_back(graded("clamp_energy:" + part->name, e_clamp, 0.8 * lim, lim, "J", "clamp energy per operation against the pulse energy rating"));
    }
    if (spec.drive.period_s > 0.0 && part->has_rating("power")) {
      const double lim = part->rating("power");
      ck.push_back(graded("clamp_average_power:" + part->name, e_clamp / spec.drive.period_s, 0.8 * lim, lim, "W",
                          "clamp energy per operation times the repetition rate against the power rating"));
    }
  }
  const double pin = spec.analysis.logic_pin_current_limit_A;
  ck.push_back(graded("logic_pin_current", logic_A, 0.8 * pin, pin, "A", "logic output current against the pin limit"));
  if (!b.mosfet) {
    if (b.switch_part->has_rating("minimum_forward_beta")) {
      const double min_beta = b.switch_part->rating("minimum_forward_beta");
      ck.push_back(graded("drive_saturation", i0 / drive_A, 0.5 * min_beta, min_beta, "1",
                          "forced gain I_C/I_B against the minimum gain " + fmt(min_beta) +
                              " (drive at least 2x harder than the minimum gain needs: common practice)"));
    }
    const double sat_limit = spec.switch_.topology == Topology::low_side_darlington ? 1.5 : 0.5;
    ck.push_back(graded("switch_saturated", v_sat, 0.6 * sat_limit, sat_limit, "V",
                        "on-state switch voltage: a saturated switch drops about 0.1–0.3 V (a Darlington about 1 V)"));
  } else {
    if (b.switch_part->has_rating("maximum_threshold_voltage")) {
      const double vth = b.switch_part->rating("maximum_threshold_voltage");
      RatingCheck g{"gate_drive", CheckStatus::pass, v_gs_on, vth + 2.0, "V",
                    "on-state gate–source voltage against the maximum threshold + 2 V (common practice for a fully on channel)"};
      if (v_gs_on < vth + 1.0) g.status = CheckStatus::fail;
      else if (v_gs_on < vth + 2.0) g.status = CheckStatus::warn;
      ck.push_back(g);
    }
    if (b.switch_part->has_rating("gate_source_voltage")) {
      const double lim = b.switch_part->rating("gate_source_voltage");
      ck.push_back(graded("gate_voltage_rating", v_gs_on, 0.8 * lim, lim, "V", "on-state gate–source voltage against its rating"));
    }
    if (b.switch_part->has_rating("avalanche_energy") && spec.clamp.kind == ClampKind::none) {
      const double lim = b.switch_part->rating("avalanche_energy");
      ck.push_back(graded("switch_avalanche_energy", m.get("switch_energy_J"), 0.8 * lim, lim, "J",
                          "energy the switch absorbs in avalanche against its single-pulse rating"));
    }
  }
  if (!b.mosfet && spec.clamp.kind == ClampKind::none) {
    ck.push_back({"switch_breakdown", CheckStatus::warn, m.get("switch_energy_J"), 0.0, "J",
                  "no clamp: the coil energy ends in the transistor's collector breakdown, which is not a rated mode"});
  }
  if (!std::isnan(i_rel)) {
    RatingCheck g{"coil_operates", i0 > i_rel ? CheckStatus::pass : CheckStatus::fail, i0, i_rel, "A",
                  "on-state coil current against the release current"};
    double i_op = spec.coil.operate_current_A;
    if (std::isnan(i_op) && !std::isnan(spec.coil.operate_voltage_V)) i_op = spec.coil.operate_voltage_V / r_coil;
    if (!std::isnan(i_op)) {
      g.limit = i_op;
      g.detail = "on-state coil current against the operate current";
      g.status = i0 >= i_op ? CheckStatus::pass : CheckStatus::fail;
    }
    ck.push_back(g);
  }
  if (b.relay_calibration) {
    const double worst = b.relay_calibration->worst_relative_error();
    ck.push_back({"relay_calibration", worst <= 0.02 ? CheckStatus::pass : CheckStatus::warn, worst, 0.02, "1",
                  "largest relative miss of the armature model's calibration targets (operate and release voltage and "
                  "time, closed inductance); above 2 % the contact times are less trustworthy"});
    if (b.armature && std::isnan(m.get("contact_open_time_s"))) {
      ck.push_back({"contact_opens", CheckStatus::fail, kNaN, kNaN, "s", "the make contact did not open within the simulated time"});
    }
  }
  const double eb = m.get("energy_balance_error");
  RatingCheck acc{"accuracy", eb <= spec.analysis.energy_balance_limit ? CheckStatus::pass : CheckStatus::fail, eb,
                  spec.analysis.energy_balance_limit, "1",
                  "relative energy-balance error of the switch-off run; above the limit the run is inaccurate"};
  ck.push_back(acc);
  return out;
}

}  // namespace coilkick::drivers
