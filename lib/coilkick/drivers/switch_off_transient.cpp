#include "coilkick/drivers/switch_off_transient.hpp"

#include <algorithm>
#include <cmath>
#include <functional>

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

// The largest magnitude of an element's terminal-0 current after t_s.
EventSpec current_peak(const char* what, const std::string& event, const Circuit& c, const std::string& element, double t_s) {
  const Probe current = Probe::element_current(c, element, 0);
  return EventSpec::maximum(event, Probe::using_rates(what, [current](double t, const double* x, const double* rates) {
                              return std::abs(current(t, x, rates));
                            }), t_s);
}

// One channel's events, named b.local(...) ("peak", "fan.peak").
void watch_channel(const ChannelRun& ch, const Circuit& c, std::vector<EventSpec>& ev) {
  const BuiltDriver& b = *ch.built;
  const double vs = ch.spec.supply.voltage_V;
  const double t_off = ch.spec.drive.switch_off_at_s;
  const double i0 = ch.on.coil_current_A, i_rel = release_current_A(ch.spec.coil);
  const Probe p_vsw("switch voltage", SwitchVoltage(b, c));
  const Probe p_coil = Probe::state(c, b.local("coil.current"));
  ev.push_back(EventSpec::maximum(b.local("peak"), p_vsw, t_off));
  ev.push_back(EventSpec::crossing(b.local("decay10"), p_coil, 0.1 * i0, Direction::falling, t_off));
  ev.push_back(EventSpec::crossing(b.local("off_delay"), p_vsw, 0.9 * vs, Direction::rising, t_off));
  if (!std::isnan(i_rel)) ev.push_back(EventSpec::crossing(b.local("release"), p_coil, i_rel, Direction::falling, t_off));
  // The coil's own terminals, in the sense its voltage reverses at switch-off (at a cable's far end
  // this is not the switch's spike).
  ev.push_back(EventSpec::maximum(b.local("coil_end_peak"), Probe::voltage_between(c, b.coil_out_node, b.coil_in_node), t_off));
  if (b.armature) {
    ev.push_back(EventSpec::crossing(b.local("contact_open"), Probe::state(c, b.local("coil.gap")), b.armature->mechanics.make_gap_m,
                                     Direction::rising, t_off));
  }
  if (!b.clamp_current_element.empty()) ev.push_back(current_peak("clamp current", b.local("clamp_peak"), c, b.clamp_current_element, t_off));
}

// Every channel's events, and the board's: the rail's extremes, the common clamp's current.
std::vector<EventSpec> watched_events(const DriverSpec& board_spec, const std::vector<ChannelRun>& channels, const Circuit& c) {
  std::vector<EventSpec> ev;
  for (const auto& ch : channels) watch_channel(ch, c, ev);
  const BuiltDriver& board = *channels.front().built;
  const double first_edge = first_edge_s(board_spec);
  if (!board_spec.supply.rail_is_ideal()) {
    const Probe rail = Probe::node_voltage(c, "supply");
    ev.push_back(EventSpec::maximum("rail_max", rail, first_edge));
    ev.push_back(EventSpec::minimum("rail_min", rail, first_edge));
  }
  if (!board.common_clamp_element.empty()) ev.push_back(current_peak("common clamp current", "common_clamp_peak", c, board.common_clamp_element, first_edge));
  return ev;
}

// One channel's energy left in its coil and at its switch node, over the fraction of its initial
// ½·L·I0² at which it counts as decayed (the coil current then well below the release
// threshold): decayed below 1. With the armature model it reads 1/fraction until the contact has
// opened.
std::function<double(double, const double*)> remaining_share(const ChannelRun& ch, const Circuit& c) {
  const DriverSpec& spec = ch.spec;
  const BuiltDriver& b = *ch.built;
  const double i0 = ch.on.coil_current_A, i_rel = release_current_A(spec.coil);
  double c_node = spec.coil.winding_capacitance_F + spec.switch_.board_stray_capacitance_F;
  if (spec.clamp.kind == ClampKind::rc_across_coil || spec.clamp.kind == ClampKind::rc_across_switch ||
      spec.clamp.add_rc_snubber_across_coil) {
    c_node += spec.clamp.snubber_capacitance_F;
  }
  // Extra parts hold energy too: their capacitors counted as if at the switch node (the run then
  // lasts rather longer than shorter), their inductors by their own currents.
  std::vector<std::pair<int, double>> extra_inductors;  // state index, H
  for (const auto& x : b.prefix.empty() ? spec.extra_parts : std::vector<ExtraPart>{}) {
    if (x.element == ExtraElement::capacitor) c_node += x.value;
    if (x.element == ExtraElement::inductor) extra_inductors.emplace_back(c.state_index(x.name + ".current"), x.value);
  }
  const double l = spec.coil.inductance_H, e0 = 0.5 * l * i0 * i0, vs = spec.supply.voltage_V;
  double frac = 1e-4;
  if (!std::isnan(i_rel)) frac = std::min(frac, 0.25 * (i_rel / i0) * (i_rel / i0));
  const int coil_i = c.state_index(b.local("coil.current"));
  const int gap_i = b.armature ? c.state_index(b.local("coil.gap")) : -1;
  const double make_gap = b.armature ? b.armature->mechanics.make_gap_m : 0.0;
  const double scale = 1.0 / (frac * e0);
  const SwitchVoltage vsw(b, c);
  return [=](double t, const double* x) {
    if (gap_i >= 0 && x[gap_i] < make_gap) return e0 * scale;
    const double i = x[coil_i], dv = vsw(t, x) - vs;
    double e = 0.5 * l * i * i + 0.5 * c_node * dv * dv;
    for (const auto& [k, lx] : extra_inductors) e += 0.5 * lx * x[k] * x[k];
    return e * scale;
  };
}

// Ends the run once every channel has decayed (remaining_share below 1 for all; the largest
// share is the probe). Before a channel's edge its share is 1/fraction, far above 1.
EventSpec decayed_event(const DriverSpec& board_spec, const std::vector<ChannelRun>& channels, const Circuit& c) {
  std::vector<std::function<double(double, const double*)>> shares;
  for (const auto& ch : channels) shares.push_back(remaining_share(ch, c));
  return EventSpec::crossing("decayed", Probe("remaining energy", [shares](double t, const double* x) {
                               double most = 0.0;
                               for (const auto& f : shares) most = std::max(most, f(t, x));
                               return most;
                             }),
                             1.0, Direction::falling, last_edge_end_s(board_spec), true);
}

bool happened(const engine::TransientResult& r, const char* name) { return r.event(name).time_s.has_value(); }

bool observed(const engine::TransientResult& r, const ChannelRun& ch) {
  const DriverSpec& spec = ch.spec;
  const double i_rel = release_current_A(spec.coil), i0 = ch.on.coil_current_A;
  if (!(r.end_time_s() > spec.drive.switch_off_at_s + spec.drive.fall_time_s)) return false;
  if (!happened(r, ch.built->local("decay10").c_str())) return false;
  // (A switch-off that starts below the release current — a hold that has dropped out — has no
  // release to see.)
  if (!std::isnan(i_rel) && i0 > i_rel && !happened(r, ch.built->local("release").c_str())) return false;
  return true;  // the contact's opening has its own check (contact_opens)
}

}  // namespace

SwitchOffTransient run_switch_off_transient(const DriverSpec& board_spec, const std::vector<ChannelRun>& channels, const Circuit& c,
                                            const engine::CircuitState& start, bool grow_horizon) {
  const DriverSpec& spec = channels.front().spec;
  const BuiltDriver& b = *channels.front().built;
  const double release_s = b.armature ? relay_datasheet(spec).release_time_s : 0.0;
  const bool automatic = !(spec.analysis.stop_time_s > 0.0);
  const double t_edge_end = last_edge_end_s(board_spec);
  double span = 0.0;
  bool blocks = true;
  const ChannelRun* least = &channels.front();  // the smallest ½·L·I0² sets the energy tolerance
  auto energy0 = [](const ChannelRun& ch) { return ch.spec.coil.inductance_H * ch.on.coil_current_A * ch.on.coil_current_A; };
  for (const auto& ch : channels) {
    span = std::max(span, 8.0 * ch.spec.coil.inductance_H / ch.built->coil_resistance_ohm + 20.0 * release_s);
    blocks = blocks && ch.off.blocks;
    if (energy0(ch) < energy0(*least)) least = &ch;
  }

  std::vector<EventSpec> ev = watched_events(board_spec, channels, c);
  if (spec.analysis.stop_when_decayed && blocks) ev.push_back(decayed_event(board_spec, channels, c));

  SwitchOffTransient out;
  for (int attempt = 0;; ++attempt) {
    auto o = driver_transient_options(least->spec, automatic ? t_edge_end + span : spec.analysis.stop_time_s, least->on.coil_current_A);
    // Armature: an L-stable step much longer than its snap-over would damp that instability
    // instead of following it (relay_calibration.cpp); a tenth of the release time bounds it.
    if (b.armature) o.maximum_step_s = 0.1 * release_s;
    out.result = std::make_shared<const engine::TransientResult>(engine::simulate(c, start, o, ev));
    out.decay_observed = blocks;
    for (const auto& ch : channels) out.decay_observed = out.decay_observed && observed(*out.result, ch);
    // Only an automatic horizon grows, and only while the coil can still de-energise.
    if (out.decay_observed || !automatic || !blocks || !grow_horizon || attempt == kHorizonRetries || span >= kLongestAutomaticSpan_s) {
      return out;
    }
    span = std::min(span * kHorizonGrowth, std::max(span, kLongestAutomaticSpan_s));
  }
}

}  // namespace coilkick::drivers
