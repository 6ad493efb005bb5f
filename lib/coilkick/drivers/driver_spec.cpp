#include "coilkick/drivers/driver_spec.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <stdexcept>

#include "coilkick/drivers/copper.hpp"
#include "coilkick/drivers/si_format.hpp"
#include "coilkick/engine/closest_name.hpp"
#include "coilkick/engine/parameter_check.hpp"

namespace coilkick::drivers {
namespace {
const std::vector<std::pair<std::string, Topology>>& topologies() {
  static const std::vector<std::pair<std::string, Topology>> t{
      {"low_side_npn", Topology::low_side_npn}, {"low_side_nmos", Topology::low_side_nmos},
      {"low_side_darlington", Topology::low_side_darlington}, {"high_side_pnp", Topology::high_side_pnp},
      {"high_side_pmos", Topology::high_side_pmos}};
  return t;
}
const std::vector<std::pair<std::string, ExtraElement>>& extra_elements() {
  static const std::vector<std::pair<std::string, ExtraElement>> e{
      {"resistor", ExtraElement::resistor}, {"capacitor", ExtraElement::capacitor}, {"inductor", ExtraElement::inductor},
      {"part", ExtraElement::part}};
  return e;
}
const std::vector<std::pair<std::string, ClampKind>>& clamp_kinds() {
  static const std::vector<std::pair<std::string, ClampKind>> k{
      {"none", ClampKind::none}, {"diode", ClampKind::diode}, {"diode_zener", ClampKind::diode_zener},
      {"diode_resistor", ClampKind::diode_resistor}, {"rc_across_coil", ClampKind::rc_across_coil},
      {"rc_across_switch", ClampKind::rc_across_switch}, {"tvs_across_switch", ClampKind::tvs_across_switch},
      {"active_clamp", ClampKind::active_clamp}, {"common_pin", ClampKind::common_pin}};
  return k;
}
template <class E>
E parse(const std::vector<std::pair<std::string, E>>& table, const std::string& word, const char* what) {
  for (const auto& [n, e] : table) {
    if (n == word) return e;
  }
  std::vector<std::string> names;  // only to say what is close
  for (const auto& entry : table) names.push_back(entry.first);
  std::string hint = engine::did_you_mean(word, names);
  if (hint.empty()) {  // nothing close: name them all (a handful)
    hint = " (one of:";
    for (std::size_t k = 0; k < names.size(); ++k) hint += (k ? ", " : " ") + names[k];
    hint += ")";
  }
  throw std::invalid_argument(std::string("unknown ") + what + " '" + word + "'" + hint);
}
template <class E>
std::string name_of(const std::vector<std::pair<std::string, E>>& table, E e) {
  for (const auto& [n, x] : table) {
    if (x == e) return n;
  }
  return "?";
}
}  // namespace

Topology parse_topology(const std::string& word) { return parse(topologies(), word, "switch topology"); }
std::string to_string(Topology t) { return name_of(topologies(), t); }
const std::vector<std::string>& topology_names() {
  static const std::vector<std::string> n = [] {
    std::vector<std::string> v;
    for (const auto& [k, t] : topologies()) v.push_back(k);
    return v;
  }();
  return n;
}
ClampKind parse_clamp_kind(const std::string& word) { return parse(clamp_kinds(), word, "clamp kind"); }
ExtraElement parse_extra_element(const std::string& word) { return parse(extra_elements(), word, "extra part element"); }
std::string to_string(ExtraElement e) { return name_of(extra_elements(), e); }
std::string to_string(ClampKind k) { return name_of(clamp_kinds(), k); }
const std::vector<ClampKind>& all_clamp_kinds() {
  static const std::vector<ClampKind> k = [] {
    std::vector<ClampKind> v;
    for (const auto& [n, c] : clamp_kinds()) {
      if (c != ClampKind::common_pin) v.push_back(c);
    }
    return v;
  }();
  return k;
}

namespace {
// The peak-and-hold drive (HoldSpec): one way to end the pull-in, one way to set the hold, a
// period that leaves room for the drive's edges, a hold below the pull-in.
void check_hold(const DriverSpec& s) {
  const auto& h = s.hold;
  const bool any = !std::isnan(h.pull_in_time_s) || !std::isnan(h.pull_in_current_A) || !std::isnan(h.pwm_duty) ||
                   !std::isnan(h.average_current_A);
  engine::require_non_negative("hold", "pwm_frequency_Hz", h.pwm_frequency_Hz);
  if (!h.present()) {
    if (any) throw std::invalid_argument("hold: pwm_frequency_Hz is needed for a hold (the other hold keys describe its PWM)");
    return;
  }
  if (h.pwm_frequency_Hz > 10e6) {
    throw std::invalid_argument("hold: pwm_frequency_Hz must be at most 10 MHz (far outside a coil driver), got " +
                                format_si(h.pwm_frequency_Hz, "Hz"));
  }
  if (std::isnan(h.pull_in_time_s) == std::isnan(h.pull_in_current_A)) {
    throw std::invalid_argument("hold: give pull_in_time_s or pull_in_current_A (one of them)");
  }
  if (!std::isnan(h.pull_in_time_s)) {
    engine::require_non_negative("hold", "pull_in_time_s", h.pull_in_time_s);
    if (h.pull_in_time_s > 100.0) throw std::invalid_argument("hold: pull_in_time_s must be at most 100 s");
  }
  const double i_full = s.supply.voltage_V / coil_resistance_ohm(s.coil);
  if (!std::isnan(h.pull_in_current_A)) {
    engine::require_positive("hold", "pull_in_current_A", h.pull_in_current_A);
    if (!(h.pull_in_current_A < i_full)) {
      throw std::invalid_argument("hold: pull_in_current_A must be below the full-drive current (supply over hot coil resistance, " +
                                  format_si(i_full, "A") + "), got " + format_si(h.pull_in_current_A, "A"));
    }
  }
  if (std::isnan(h.pwm_duty) == std::isnan(h.average_current_A)) {
    throw std::invalid_argument("hold: give pwm_duty or average_current_A (one of them)");
  }
  const double T = 1.0 / h.pwm_frequency_Hz;
  const double edges = s.drive.rise_time_s + s.drive.fall_time_s;
  if (!std::isnan(h.pwm_duty)) {
    if (!(h.pwm_duty > 0.0 && h.pwm_duty < 1.0)) {
      throw std::invalid_argument("hold: pwm_duty must be between 0 and 1 (exclusive), got " + std::to_string(h.pwm_duty));
    }
    if (std::min(h.pwm_duty, 1.0 - h.pwm_duty) * T < 2.0 * edges) {
      throw std::invalid_argument("hold: pwm_frequency_Hz is too high for the drive's edges: an on- or off-time of " +
                                  format_si(std::min(h.pwm_duty, 1.0 - h.pwm_duty) * T, "s") +
                                  " is shorter than twice the rise and fall time (" + format_si(2.0 * edges, "s") + ")");
    }
  } else {
    engine::require_positive("hold", "average_current_A", h.average_current_A);
    if (T < 8.0 * edges) {
      throw std::invalid_argument("hold: pwm_frequency_Hz is too high for the drive's edges: a period of " + format_si(T, "s") +
                                  " leaves no room for duties beside rise and fall times of " + format_si(edges, "s"));
    }
    const double ceiling = std::isnan(h.pull_in_current_A) ? i_full : h.pull_in_current_A;
    if (!(h.average_current_A < ceiling)) {
      throw std::invalid_argument(std::string("hold: average_current_A must be below the ") +
                                  (std::isnan(h.pull_in_current_A) ? "full-drive current (supply over hot coil resistance, "
                                                                   : "pull-in current (") +
                                  format_si(ceiling, "A") + "), got " + format_si(h.average_current_A, "A"));
    }
  }
}
// Plain repetition (RepeatSpec): a period, an on-time inside it with room for the edges, a count.
void check_repeat(const DriverSpec& s) {
  const auto& r = s.repeat;
  engine::require_non_negative("repeat", "period_s", r.period_s);
  if (!r.present()) {
    if (!std::isnan(r.on_time_s) || r.count != 0) throw std::invalid_argument("repeat: period_s is needed for a repetition");
    return;
  }
  if (s.hold.present()) throw std::invalid_argument("repeat: a drive is a hold or a repetition, not both (remove [hold] or [repeat])");
  if (r.period_s > 1e3) throw std::invalid_argument("repeat: period_s must be at most 1000 s");
  if (std::isnan(r.on_time_s)) throw std::invalid_argument("repeat: on_time_s is needed with period_s");
  engine::require_positive("repeat", "on_time_s", r.on_time_s);
  const double edges = 2.0 * (s.drive.rise_time_s + s.drive.fall_time_s);
  if (!(r.on_time_s >= edges) || !(r.period_s - r.on_time_s >= edges)) {
    throw std::invalid_argument("repeat: on_time_s must leave the on- and off-times at least twice the drive's rise and fall time (" +
                                format_si(edges, "s") + ") inside period_s");
  }
  if (r.count < 1 || r.count > kMostRepeatCount) {
    throw std::invalid_argument("repeat: count must be 1 to " + std::to_string(kMostRepeatCount) + ", got " + std::to_string(r.count));
  }
}
}  // namespace

HoldSpec DriverSpec::periodic_drive() const {
  if (!repeat.present()) return hold;
  HoldSpec h;
  h.pull_in_time_s = 0.0;
  h.pwm_frequency_Hz = 1.0 / repeat.period_s;
  h.pwm_duty = repeat.on_time_s / repeat.period_s;
  h.cycles = repeat.count;
  return h;
}

double coil_resistance_ohm(const CoilSpec& c) {
  return copper_resistance_ohm(c.resistance_at_20C_ohm, c.temperature_C, c.copper_temperature_coefficient_per_K);
}

double release_current_A(const CoilSpec& c) {
  if (!std::isnan(c.release_current_A)) return c.release_current_A;
  if (!std::isnan(c.release_voltage_V)) return c.release_voltage_V / coil_resistance_ohm(c);
  return std::nan("");
}

double CableSpec::characteristic_impedance_ohm() const {
  return std::sqrt(inductance_per_metre_H_per_m / capacitance_per_metre_F_per_m);
}

double CableSpec::delay_s() const { return length_m * std::sqrt(inductance_per_metre_H_per_m * capacitance_per_metre_F_per_m); }

std::vector<std::string> further_channel_names(const DriverSpec& s) {
  std::vector<std::string> out;
  for (const auto& c : s.channels) out.push_back(c.name);
  return out;
}

bool uses_common_pin(const DriverSpec& s) {
  if (s.clamp.kind == ClampKind::common_pin) return true;
  return std::any_of(s.channels.begin(), s.channels.end(), [](const ChannelSpec& c) { return c.clamp.kind == ClampKind::common_pin; });
}

DriverSpec channel_driver_spec(const DriverSpec& s, std::size_t k) {
  DriverSpec one = s;
  one.channels.clear();
  if (k == 0) return one;
  const ChannelSpec& ch = s.channels.at(k - 1);
  one.drive = ch.drive;
  one.switch_ = ch.switch_;
  one.coil = ch.coil;
  one.clamp = ch.clamp;
  return one;
}

double first_edge_s(const DriverSpec& s) {
  double t = s.drive.switch_off_at_s;
  for (const auto& ch : s.channels) t = std::min(t, ch.drive.switch_off_at_s);
  return t;
}

double last_edge_end_s(const DriverSpec& s) {
  double t = s.drive.switch_off_at_s + s.drive.fall_time_s;
  for (const auto& ch : s.channels) t = std::max(t, ch.drive.switch_off_at_s + ch.drive.fall_time_s);
  return t;
}

namespace {
// Several channels (DriverSpec::channels): unique names that can prefix node names, and what
// the first version of channels does not combine with.
void check_channels(const DriverSpec& s) {
  std::vector<std::string> seen;
  for (const auto& ch : s.channels) {
    const std::string owner = "channel '" + ch.name + "'";
    if (ch.name.empty()) throw std::invalid_argument("channel: every channel needs a name");
    for (char c : ch.name) {
      if (!(std::isalnum(static_cast<unsigned char>(c)) || c == '_')) {
        throw std::invalid_argument(owner + ": a channel name is letters, digits and '_' (it prefixes node names)");
      }
    }
    if (std::find(seen.begin(), seen.end(), ch.name) != seen.end()) throw std::invalid_argument(owner + ": the name is given twice");
    seen.push_back(ch.name);
  }
  for (std::size_t k = 0; k <= s.channels.size(); ++k) {
    const DriverSpec one = channel_driver_spec(s, k);
    const std::string owner = k == 0 ? "clamp" : "channel '" + s.channels[k - 1].name + "': clamp";
    if (one.clamp.kind != ClampKind::common_pin) continue;
    if (one.switch_.topology == Topology::high_side_pnp || one.switch_.topology == Topology::high_side_pmos) {
      throw std::invalid_argument(owner + ": kind common_pin is for low-side switches (the pin is above the coils)");
    }
  }
  if (s.channels.empty()) return;
  auto refuse = [](bool has, const char* what) {
    if (has) throw std::invalid_argument(std::string("channel: several channels do not yet combine with ") + what);
  };
  if (s.cable.present()) {
    // One common core for all coils: it runs from the rail (low-side switches) or from ground (high side).
    const auto high = [](const SwitchSpec& sw) { return sw.topology == Topology::high_side_pnp || sw.topology == Topology::high_side_pmos; };
    for (const auto& ch : s.channels) {
      if (high(ch.switch_) != high(s.switch_)) {
        throw std::invalid_argument("channel '" + ch.name + "': with a cable every channel is low side or every channel high side (their coils share one common core)");
      }
    }
  }
  refuse(s.relay.armature_model, "the relay armature model");
  refuse(s.has_periodic_drive(), "a hold or a repetition");
}
}  // namespace

void check_driver_spec(const DriverSpec& s) {
  if (!s.channels.empty()) {
    // The first channel (and the board) as a driver of its own, then what channels add.
    check_driver_spec(channel_driver_spec(s, 0));
    check_channels(s);
    for (std::size_t k = 1; k <= s.channels.size(); ++k) {
      try {
        check_driver_spec(channel_driver_spec(s, k));
      } catch (const std::invalid_argument& e) {
        throw std::invalid_argument("channel '" + s.channels[k - 1].name + "': " + e.what());
      }
    }
    return;
  }
  check_channels(s);
  using engine::require_non_negative;
  using engine::require_positive;
  require_positive("supply", "voltage_V", s.supply.voltage_V);
  engine::require_closed_range("supply", "tolerance", s.supply.tolerance, 0.0, 0.5);
  require_non_negative("supply", "source_resistance_ohm", s.supply.source_resistance_ohm);
  require_non_negative("supply", "source_inductance_H", s.supply.source_inductance_H);
  require_non_negative("supply", "bulk_capacitance_F", s.supply.bulk_capacitance_F);
  require_non_negative("supply", "bulk_capacitor_esr_ohm", s.supply.bulk_capacitor_esr_ohm);
  if (s.supply.source_inductance_H > 0.0 && s.supply.source_resistance_ohm == 0.0 && s.supply.bulk_capacitance_F == 0.0) {
    // An inductance alone in series with the rail: nothing limits or damps it against the node strays.
    throw std::invalid_argument("supply: source_inductance_H needs source_resistance_ohm or bulk_capacitance_F too");
  }
  require_non_negative("cable", "length_m", s.cable.length_m);
  if (s.cable.present()) {
    require_positive("cable", "loop_resistance_per_metre_ohm_per_m", s.cable.loop_resistance_per_metre_ohm_per_m);
    require_positive("cable", "inductance_per_metre_H_per_m", s.cable.inductance_per_metre_H_per_m);
    require_positive("cable", "capacitance_per_metre_F_per_m", s.cable.capacitance_per_metre_F_per_m);
    if (!std::isnan(s.cable.high_frequency_loss_fraction)) {
      engine::require_open_range("cable", "high_frequency_loss_fraction", s.cable.high_frequency_loss_fraction, 0.0, 1.0);
    }
    engine::require_closed_range("cable", "insulation_loss_tangent", s.cable.insulation_loss_tangent, 0.0, 1.0);
  }
  require_positive("drive", "high_level_V", s.drive.high_level_V);
  require_positive("drive", "output_resistance_ohm", s.drive.output_resistance_ohm);
  require_positive("drive", "rise_time_s", s.drive.rise_time_s);
  require_positive("drive", "fall_time_s", s.drive.fall_time_s);
  require_positive("drive", "switch_off_at_s", s.drive.switch_off_at_s);
  require_non_negative("drive", "period_s", s.drive.period_s);
  require_positive("switch", "base_resistor_ohm", s.switch_.base_resistor_ohm);
  require_positive("switch", "pullup_resistor_ohm", s.switch_.pullup_resistor_ohm);
  require_positive("switch", "level_shifter_base_resistor_ohm", s.switch_.level_shifter_base_resistor_ohm);
  require_non_negative("switch", "board_stray_capacitance_F", s.switch_.board_stray_capacitance_F);
  require_positive("coil", "resistance_at_20C_ohm", s.coil.resistance_at_20C_ohm);
  engine::require_open_range("coil", "temperature_C", s.coil.temperature_C, -60.0, 250.0);
  require_non_negative("coil", "copper_temperature_coefficient_per_K", s.coil.copper_temperature_coefficient_per_K);
  require_positive("coil", "inductance_H", s.coil.inductance_H);
  require_non_negative("coil", "winding_capacitance_F", s.coil.winding_capacitance_F);
  engine::require_positive_or_infinite("coil", "core_loss_resistance_ohm", s.coil.core_loss_resistance_ohm);
  if (!std::isnan(s.coil.release_current_A)) require_positive("coil", "release_current_A", s.coil.release_current_A);
  if (!std::isnan(s.coil.release_voltage_V)) require_positive("coil", "release_voltage_V", s.coil.release_voltage_V);
  if (!std::isnan(s.coil.release_current_A) && !std::isnan(s.coil.release_voltage_V)) {
    throw std::invalid_argument("coil: give release_current_A or release_voltage_V, not both");
  }
  if (!std::isnan(s.coil.operate_current_A)) require_positive("coil", "operate_current_A", s.coil.operate_current_A);
  if (!std::isnan(s.coil.operate_voltage_V)) require_positive("coil", "operate_voltage_V", s.coil.operate_voltage_V);
  // Upper bounds: far outside any coil driver, they catch typos and unit slips ("24 kV").
  auto at_most = [](const char* owner, const char* field, double v, double limit) {
    if (v > limit) {
      throw std::invalid_argument(std::string(owner) + ": " + field + " must be at most " + std::to_string(limit) +
                                  " (far outside a coil driver), got " + std::to_string(v));
    }
  };
  at_most("supply", "voltage_V", s.supply.voltage_V, 1500.0);  // IEC 61810-1 scope ends at 1500 V DC
  at_most("supply", "source_resistance_ohm", s.supply.source_resistance_ohm, 1e6);
  at_most("supply", "source_inductance_H", s.supply.source_inductance_H, 1.0);
  at_most("supply", "bulk_capacitance_F", s.supply.bulk_capacitance_F, 10.0);
  at_most("supply", "bulk_capacitor_esr_ohm", s.supply.bulk_capacitor_esr_ohm, 1e3);
  at_most("cable", "length_m", s.cable.length_m, 10e3);
  at_most("cable", "loop_resistance_per_metre_ohm_per_m", s.cable.loop_resistance_per_metre_ohm_per_m, 10.0);
  at_most("cable", "inductance_per_metre_H_per_m", s.cable.inductance_per_metre_H_per_m, 1e-4);
  at_most("cable", "capacitance_per_metre_F_per_m", s.cable.capacitance_per_metre_F_per_m, 1e-8);
  at_most("drive", "high_level_V", s.drive.high_level_V, 30.0);
  at_most("coil", "inductance_H", s.coil.inductance_H, 1000.0);
  at_most("coil", "resistance_at_20C_ohm", s.coil.resistance_at_20C_ohm, 1e7);
  at_most("coil", "winding_capacitance_F", s.coil.winding_capacitance_F, 1e-3);
  at_most("switch", "board_stray_capacitance_F", s.switch_.board_stray_capacitance_F, 1e-3);
  at_most("clamp", "snubber_capacitance_F", s.clamp.snubber_capacitance_F, 1.0);
  at_most("drive", "switch_off_at_s", s.drive.switch_off_at_s, 100.0);
  at_most("analysis", "stop_time_s", s.analysis.stop_time_s, 1000.0);
  // A release threshold at or above the on-state current is not an input error: the run's
  // coil_operates check compares it with the solved on-state current (supply/resistance would
  // ignore the switch's drop).
  if (s.clamp.kind == ClampKind::diode_resistor) require_positive("clamp", "resistor_ohm", s.clamp.resistor_ohm);
  if (s.clamp.kind == ClampKind::rc_across_coil || s.clamp.kind == ClampKind::rc_across_switch ||
      s.clamp.add_rc_snubber_across_coil) {
    require_positive("clamp", "snubber_resistance_ohm", s.clamp.snubber_resistance_ohm);
    require_positive("clamp", "snubber_capacitance_F", s.clamp.snubber_capacitance_F);
  }
  engine::require_open_range("relay", "contact_gap_m", s.relay.contact_gap_m, 0.0, 0.05);
  engine::require_open_range("relay", "over_travel_m", s.relay.over_travel_m, 0.0, 0.05);
  if (!std::isnan(s.relay.operate_time_s)) engine::require_open_range("relay", "operate_time_s", s.relay.operate_time_s, 0.0, 10.0);
  if (!std::isnan(s.relay.release_time_s)) engine::require_open_range("relay", "release_time_s", s.relay.release_time_s, 0.0, 10.0);
  if (!std::isnan(s.relay.nominal_voltage_V)) require_positive("relay", "nominal_voltage_V", s.relay.nominal_voltage_V);
  if (s.relay.armature_model) relay_datasheet(s).check();
  engine::require_open_range("analysis", "device_temperature_C", s.analysis.device_temperature_C, -60.0, 250.0);
  require_non_negative("analysis", "stop_time_s", s.analysis.stop_time_s);
  if (s.analysis.stop_time_s > 0.0 && !(s.analysis.stop_time_s > s.drive.switch_off_at_s + s.drive.fall_time_s)) {
    throw std::invalid_argument("analysis: stop_time_s must be after the end of the drive's switch-off edge");
  }
  engine::require_open_range("analysis", "relative_tolerance", s.analysis.relative_tolerance, 0.0, 0.1);
  require_positive("analysis", "voltage_tolerance_V", s.analysis.voltage_tolerance_V);
  require_positive("analysis", "current_tolerance_A", s.analysis.current_tolerance_A);
  engine::require_closed_range("analysis", "switch_voltage_derating", s.analysis.switch_voltage_derating, 0.1, 1.0);
  require_positive("analysis", "logic_pin_current_limit_A", s.analysis.logic_pin_current_limit_A);
  require_positive("analysis", "energy_balance_limit", s.analysis.energy_balance_limit);
  require_positive("analysis", "maximum_wall_time_s", s.analysis.maximum_wall_time_s);
  check_hold(s);
  check_repeat(s);
  if (s.cable.present() && s.has_periodic_drive()) {
    // The hold's period map and its stages start each run with the line settled: the waves in
    // transit between PWM edges would be lost (and each period of a cable run is costly).
    throw std::invalid_argument(std::string(s.hold.present() ? "hold" : "repeat") +
                                ": a PWM hold or a repetition with a cable is not available yet (the periodic runs would lose the "
                                "waves in transit on the line); remove the cable or the periodic drive");
  }
  for (const auto& x : s.extra_parts) {
    const std::string owner = "extra_part '" + x.name + "'";
    if (x.name.empty()) throw std::invalid_argument("extra_part: every extra part needs a name");
    if (x.element == ExtraElement::part) {
      if (x.part.empty()) throw std::invalid_argument(owner + ": element \"part\" needs a catalogue part");
    } else {
      require_positive(owner, "value", x.value);
      if (!x.part.empty()) throw std::invalid_argument(owner + ": a " + to_string(x.element) + " takes a value, not a part");
    }
    require_non_negative(owner, "series_resistance_ohm", x.series_resistance_ohm);
  }
}

CoilSpec coil_spec_from_part(const catalogue::PartRecord& coil) {
  if (coil.family != "coil") throw std::invalid_argument("part '" + coil.name + "' is a " + coil.family + ", not a coil");
  CoilSpec c;
  c.part = coil.name;
  c.resistance_at_20C_ohm = coil.parameter("resistance_at_20C");
  c.inductance_H = coil.parameter("inductance");
  if (coil.has_parameter("winding_capacitance")) c.winding_capacitance_F = coil.parameter("winding_capacitance");
  if (coil.has_parameter("core_loss_resistance")) c.core_loss_resistance_ohm = coil.parameter("core_loss_resistance");
  if (coil.has_parameter("release_voltage")) c.release_voltage_V = coil.parameter("release_voltage");
  if (coil.has_parameter("operate_voltage")) c.operate_voltage_V = coil.parameter("operate_voltage");
  return c;
}

RelaySpec relay_spec_from_part(const catalogue::PartRecord& coil) {
  RelaySpec r;
  auto take = [&](const char* key, double& field) {
    if (coil.has_parameter(key)) field = coil.parameter(key);
  };
  take("nominal_voltage", r.nominal_voltage_V);
  take("operate_time", r.operate_time_s);
  take("release_time", r.release_time_s);
  take("contact_gap", r.contact_gap_m);
  take("over_travel", r.over_travel_m);
  return r;
}

relay::RelayDatasheet relay_datasheet(const DriverSpec& s) {
  const auto& r = s.relay;
  // Messages name the scenario keys that supply each value.
  auto pick = [](double own, double fallback, const char* keys) {
    const double v = std::isnan(own) ? fallback : own;
    if (std::isnan(v)) {
      throw std::invalid_argument(std::string("relay: the armature model needs ") + keys + " (give it, or a coil.part that has it)");
    }
    return v;
  };
  relay::RelayDatasheet d;
  d.nominal_voltage_V = pick(r.nominal_voltage_V, s.supply.voltage_V, "relay.nominal_voltage");
  d.coil_resistance_ohm = pick(r.resistance_at_20C_ohm, s.coil.resistance_at_20C_ohm, "coil.resistance");
  d.closed_inductance_H = pick(r.closed_inductance_H, s.coil.inductance_H, "coil.inductance");
  d.operate_voltage_V = pick(r.operate_voltage_V, s.coil.operate_voltage_V, "coil.operate_voltage");
  d.release_voltage_V = pick(r.release_voltage_V, s.coil.release_voltage_V, "coil.release_voltage");
  d.operate_time_s = pick(r.operate_time_s, std::nan(""), "relay.operate_time");
  d.release_time_s = pick(r.release_time_s, std::nan(""), "relay.release_time");
  d.contact_gap_m = r.contact_gap_m;
  d.over_travel_m = r.over_travel_m;
  d.core_loss_resistance_ohm = s.coil.core_loss_resistance_ohm;
  return d;
}

void freeze_relay_datasheet(DriverSpec& s) {
  auto& r = s.relay;
  if (std::isnan(r.nominal_voltage_V)) r.nominal_voltage_V = s.supply.voltage_V;
  if (std::isnan(r.resistance_at_20C_ohm)) r.resistance_at_20C_ohm = s.coil.resistance_at_20C_ohm;
  if (std::isnan(r.closed_inductance_H)) r.closed_inductance_H = s.coil.inductance_H;
}

}  // namespace coilkick::drivers
