#include "coilkick/drivers/switch_off_metrics.hpp"

#include <cmath>
#include <functional>
#include <limits>

#include "coilkick/drivers/energy_account.hpp"
#include "coilkick/drivers/switch_on.hpp"

namespace coilkick::drivers {
namespace {

const double kNaN = std::numeric_limits<double>::quiet_NaN();

// Relative error of the energy account over the switch-off window:
// supplied + stored(t_off) = dissipated + stored(end).
double energy_balance_error(const engine::TransientResult& r, double t_off, const Eigen::VectorXd& x_off,
                            const Eigen::VectorXd& x_end) {
  const auto& c = r.circuit();
  engine::Workspace w = c.make_workspace();
  double supplied = 0.0, dissipated = 0.0;
  for (std::size_t k = 0; k < c.power_channels().size(); ++k) {
    const auto i = static_cast<Eigen::Index>(c.circuit_state_count()) + static_cast<Eigen::Index>(k);
    const double d = x_end[i] - x_off[i];
    (c.power_channels()[k].kind == engine::PowerChannelSpec::Kind::supplied ? supplied : dissipated) += d;
  }
  const double in = supplied + c.stored_energy_J(-1, t_off, x_off.data(), w);
  const double out = dissipated + c.stored_energy_J(-1, r.end_time_s(), x_end.data(), w);
  return std::abs(in - out) / std::max(std::abs(in), std::abs(out));
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

}  // namespace

SwitchOffMeasures measure_switch_off(const DriverSpec& spec, const BuiltDriver& b, const OnState& on, const OffState& off,
                                     const engine::TransientResult& r) {
  const auto& c = r.circuit();
  const double vs = spec.supply.voltage_V;
  const double t_off = spec.drive.switch_off_at_s;
  const double i0 = on.coil_current_A;
  const double i_rel = release_current_A(spec.coil);
  SwitchOffMeasures out;
  Metrics& m = out.metrics;
  auto since_off = [&](const engine::EventOutcome& e) { return e.time_s ? *e.time_s - t_off : kNaN; };
  const SwitchVoltage vsw(b, c);

  m.set("coil_current_at_switch_off_A", i0);
  m.set("drive_current_A", on.drive_current_A);
  m.set("forced_beta", b.mosfet ? kNaN : i0 / on.drive_current_A);
  m.set("switch_saturation_voltage_V", on.switch_voltage_V);
  m.set("coil_voltage_on_V", on.coil_voltage_V);
  m.set("logic_pin_current_A", on.logic_pin_current_A);

  auto event = [&](const char* name) -> const engine::EventOutcome& { return r.event(b.local(name)); };
  const auto& peak = event("peak");
  m.set("switch_voltage_peak_V", peak.value);
  m.set("switch_voltage_peak_time_s", since_off(peak));
  const char* rating_key = b.mosfet ? "drain_source_voltage" : "collector_emitter_voltage";
  const double rating = b.switch_part->has_rating(rating_key) ? b.switch_part->rating(rating_key) : kNaN;
  m.set("switch_voltage_rating_V", rating);
  m.set("switch_voltage_margin", peak.value / rating);
  m.set("clamp_current_peak_A", b.clamp_current_element.empty() ? kNaN : event("clamp_peak").value);
  m.set("coil_end_peak_V", event("coil_end_peak").value);

  // Energies over the switch-off: only where the off-state blocks (see the header).
  const Eigen::VectorXd x_off = r.sample(t_off);
  const Eigen::VectorXd x_end = r.states().row(r.states().rows() - 1).transpose();
  auto energy = [&](const std::vector<std::string>& elements, const std::string& channel = "") {
    return off.blocks ? heat_between(c, x_off, x_end, elements, channel) : kNaN;
  };
  const double e_clamp = b.clamp_elements.empty() ? 0.0 : energy(b.clamp_elements);
  m.set("clamp_energy_J", e_clamp);
  // The winding's and the core's heat only: with the armature model the coil element's account
  // also holds the armature's damping and stop impacts, mechanical heat that goes on while the
  // armature still travels when the run ends (so it would move with the run's end, not only be
  // mislabelled).
  m.set("coil_resistance_energy_J", energy({b.local("coil")}, "winding") + energy({b.local("coil")}, "core"));
  m.set("switch_energy_J", energy(b.switch_elements));
  m.set("switch_breakdown_energy_J", energy(b.switch_elements, "breakdown_heat"));
  m.set("extra_parts_energy_J", b.extra_elements.empty() ? 0.0 : energy(b.extra_elements));
  m.set("cable_energy_J", spec.cable.present() ? energy({b.local("cable")}) : 0.0);
  m.set("energy_balance_error", off.blocks ? energy_balance_error(r, t_off, x_off, x_end) : kNaN);
  for (const auto& element : b.clamp_part_elements) out.clamp_part_energy_J.push_back(energy({element}));

  {
    // The board's rail: its highest and lowest voltage after the edge against the on-state rail,
    // and the net energy that flowed back into the ideal source (negative: it delivered energy).
    double rise = 0.0, dip = 0.0;
    if (!spec.supply.rail_is_ideal()) {
      const double rail_on = c.node_voltage_V("supply", 0.0, on.state.values.data());
      rise = std::max(0.0, r.event("rail_max").value - rail_on);
      dip = std::max(0.0, rail_on - r.event("rail_min").value);
    }
    m.set("supply_rail_peak_rise_V", rise);
    m.set("supply_rail_dip_V", dip);
    m.set("supply_energy_returned_J", off.blocks ? -supply_energy_between(c, x_off, x_end) : kNaN);
  }
  m.set("release_time_s", std::isnan(i_rel) ? kNaN : since_off(event("release")));
  m.set("current_decay_time_10pct_s", since_off(event("decay10")));
  m.set("switch_off_delay_s", since_off(event("off_delay")));
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
      const auto& e = event("contact_open");
      if (e.time_s) {
        t_open = *e.time_s - t_off;
        speed = r.sample(*e.time_s)[c.state_index(b.local("coil.velocity"))];
      }
      // A driver whose off-state keeps the coil energised never releases the relay: there is no
      // switch-on to time.
      if (off.blocks) t_operate = simulate_operate_time_s(spec, b);
    }
    m.set("contact_open_time_s", t_open);
    m.set("armature_speed_at_contact_open_m_per_s", speed);
    m.set("operate_time_s", t_operate);
  }
  return out;
}

void measure_common_clamp(const BuiltDriver& board, const engine::TransientResult& r, double t_off_s, bool blocks, Metrics& m) {
  double e = kNaN, i_pk = kNaN;
  if (!board.common_clamp_element.empty()) {
    i_pk = r.event("common_clamp_peak").value;
    const Eigen::VectorXd x_end = r.states().row(r.states().rows() - 1).transpose();
    if (blocks) e = heat_between(r.circuit(), r.sample(t_off_s), x_end, {board.common_clamp_element});
  }
  m.set("common_clamp_energy_J", e);
  m.set("common_clamp_current_peak_A", i_pk);
  // A board's field wiring: the heat in the coils' shared common core (its lines' own in each
  // channel's cable_energy_J).
  double e_core = 0.0;
  if (!board.cable_common_core_element.empty()) {
    const Eigen::VectorXd x_end = r.states().row(r.states().rows() - 1).transpose();
    e_core = blocks ? heat_between(r.circuit(), r.sample(t_off_s), x_end, {board.cable_common_core_element}) : kNaN;
  }
  m.set("cable_common_core_energy_J", e_core);
}

SwitchOffWaveforms switch_off_waveforms(const BuiltDriver& b, const engine::TransientResult& r) {
  const auto& c = r.circuit();
  const auto n = static_cast<Eigen::Index>(r.times_s().size());
  SwitchOffWaveforms wf;
  wf.time_s = Eigen::Map<const Eigen::VectorXd>(r.times_s().data(), n);
  wf.switch_voltage_V.resize(n);
  const SwitchVoltage vsw(b, c);
  for (Eigen::Index k = 0; k < n; ++k) {
    wf.switch_voltage_V[k] = vsw(r.times_s()[static_cast<std::size_t>(k)], r.states().row(k).data());
  }
  wf.coil_current_A = r.state(b.local("coil.current"));
  if (b.armature) wf.armature_gap_m = r.state(b.local("coil.gap"));
  wf.clamp_current_A = b.clamp_current_element.empty() ? Eigen::VectorXd::Zero(n) : r.element_current_A(b.clamp_current_element, 0);
  return wf;
}

}  // namespace coilkick::drivers
