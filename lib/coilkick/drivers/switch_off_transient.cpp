#include "coilkick/drivers/switch_off_transient.hpp"

#include <algorithm>
#include <cmath>

#include "coilkick/drivers/run_options.hpp"
#include "coilkick/engine/probe.hpp"
#include "coilkick/engine/transient.hpp"

namespace coilkick::drivers {
namespace {

using engine::Circuit;
using engine::Direction;
using engine::EventSpec;
using engine::Probe;

constexpr double kHorizonGrowth = 16.0;
constexpr int kHorizonRetries = 6;
constexpr double kLongestAutomaticSpan_s = 1.0;  // after the edge: far beyond any switch's turn-off

std::vector<EventSpec> watched_events(const DriverSpec& spec, const BuiltDriver& b, const Circuit& c, double i0, double i_rel) {
  const double vs = spec.supply.voltage_V;
  const double t_off = spec.drive.switch_off_at_s;
  const Probe p_vsw("switch voltage", [&b, &c](double t, const double* x) { return switch_voltage_V(b, c, t, x); });
  const Probe p_coil = Probe::state(c, "coil.current");
  std::vector<EventSpec> ev{EventSpec::maximum("peak", p_vsw, t_off),
                            EventSpec::crossing("decay10", p_coil, 0.1 * i0, Direction::falling, t_off),
                            EventSpec::crossing("off_delay", p_vsw, 0.9 * vs, Direction::rising, t_off)};
  if (!std::isnan(i_rel)) ev.push_back(EventSpec::crossing("release", p_coil, i_rel, Direction::falling, t_off));
  // The coil's own terminals, in the sense its voltage reverses at switch-off (at a cable's far end
  // this is not the switch's spike).
  ev.push_back(EventSpec::maximum("coil_end_peak", Probe::voltage_between(c, b.coil_out_node, b.coil_in_node), t_off));
  if (b.armature) {
    ev.push_back(EventSpec::crossing("contact_open", Probe::state(c, "coil.gap"), b.armature->mechanics.make_gap_m,
                                     Direction::rising, t_off));
  }
  if (!spec.supply.rail_is_ideal()) {
    const Probe rail = Probe::node_voltage(c, "supply");
    ev.push_back(EventSpec::maximum("rail_max", rail, t_off));
    ev.push_back(EventSpec::minimum("rail_min", rail, t_off));
  }
  if (!b.clamp_current_element.empty()) {
    const Probe current = Probe::element_current(c, b.clamp_current_element, 0);
    ev.push_back(EventSpec::maximum("clamp_peak", Probe::using_rates("clamp current", [current](double t, const double* x, const double* rates) {
                                      return std::abs(current(t, x, rates));
                                    }), t_off));
  }
  return ev;
}

// Ends the run once the energy left in the coil and at the switch node is a small fraction of
// the initial ½·L·I0² (and the coil current is then well below the release threshold). With the
// armature model the probe reads the full initial energy until the contact has opened.
EventSpec decayed_event(const DriverSpec& spec, const BuiltDriver& b, const Circuit& c, double i0, double i_rel) {
  double c_node = spec.coil.winding_capacitance_F + spec.switch_.board_stray_capacitance_F;
  if (spec.clamp.kind == ClampKind::rc_across_coil || spec.clamp.kind == ClampKind::rc_across_switch ||
      spec.clamp.add_rc_snubber_across_coil) {
    c_node += spec.clamp.snubber_capacitance_F;
  }
  // Extra parts hold energy too: their capacitors counted as if at the switch node (the run then
  // lasts rather longer than shorter), their inductors by their own currents.
  std::vector<std::pair<int, double>> extra_inductors;  // state index, H
  for (const auto& x : spec.extra_parts) {
    if (x.element == ExtraElement::capacitor) c_node += x.value;
    if (x.element == ExtraElement::inductor) extra_inductors.emplace_back(c.state_index(x.name + ".current"), x.value);
  }
  const double l = spec.coil.inductance_H, e0 = 0.5 * l * i0 * i0, vs = spec.supply.voltage_V;
  double frac = 1e-4;
  if (!std::isnan(i_rel)) frac = std::min(frac, 0.25 * (i_rel / i0) * (i_rel / i0));
  const int coil_i = c.state_index("coil.current");
  const int gap_i = b.armature ? c.state_index("coil.gap") : -1;
  const double make_gap = b.armature ? b.armature->mechanics.make_gap_m : 0.0;
  return EventSpec::crossing("decayed", Probe("remaining energy", [=, &b, &c](double t, const double* x) {
                               if (gap_i >= 0 && x[gap_i] < make_gap) return e0;
                               const double i = x[coil_i], dv = switch_voltage_V(b, c, t, x) - vs;
                               double e = 0.5 * l * i * i + 0.5 * c_node * dv * dv;
                               for (const auto& [k, lx] : extra_inductors) e += 0.5 * lx * x[k] * x[k];
                               return e;
                             }),
                             frac * e0, Direction::falling, spec.drive.switch_off_at_s + spec.drive.fall_time_s, true);
}

bool happened(const engine::TransientResult& r, const char* name) { return r.event(name).time_s.has_value(); }

bool observed(const engine::TransientResult& r, const DriverSpec& spec, double i_rel, double i0) {
  if (!(r.end_time_s() > spec.drive.switch_off_at_s + spec.drive.fall_time_s)) return false;
  if (!happened(r, "decay10")) return false;
  // (A switch-off that starts below the release current — a hold that has dropped out — has no
  // release to see.)
  if (!std::isnan(i_rel) && i0 > i_rel && !happened(r, "release")) return false;
  return true;  // the contact's opening has its own check (contact_opens)
}

}  // namespace

SwitchOffTransient run_switch_off_transient(const DriverSpec& spec, const BuiltDriver& b, const Circuit& c,
                                            const OnState& on, const OffState& off) {
  const double i0 = on.coil_current_A;
  const double i_rel = release_current_A(spec.coil);
  const double t_edge_end = spec.drive.switch_off_at_s + spec.drive.fall_time_s;
  const double release_s = b.armature ? relay_datasheet(spec).release_time_s : 0.0;
  const bool automatic = !(spec.analysis.stop_time_s > 0.0);
  double span = 8.0 * spec.coil.inductance_H / b.coil_resistance_ohm + 20.0 * release_s;

  std::vector<EventSpec> ev = watched_events(spec, b, c, i0, i_rel);
  if (spec.analysis.stop_when_decayed && off.blocks) ev.push_back(decayed_event(spec, b, c, i0, i_rel));

  SwitchOffTransient out;
  for (int attempt = 0;; ++attempt) {
    auto o = driver_transient_options(spec, automatic ? t_edge_end + span : spec.analysis.stop_time_s, i0);
    // Armature: an L-stable step much longer than its snap-over would damp that instability
    // instead of following it (relay_calibration.cpp); a tenth of the release time bounds it.
    if (b.armature) o.maximum_step_s = 0.1 * release_s;
    out.result = std::make_shared<const engine::TransientResult>(engine::simulate(c, on.state, o, ev));
    out.decay_observed = off.blocks && observed(*out.result, spec, i_rel, i0);
    // Only an automatic horizon grows, and only while the coil can still de-energise.
    if (out.decay_observed || !automatic || !off.blocks || attempt == kHorizonRetries || span >= kLongestAutomaticSpan_s) {
      return out;
    }
    span = std::min(span * kHorizonGrowth, std::max(span, kLongestAutomaticSpan_s));
  }
}

}  // namespace coilkick::drivers
