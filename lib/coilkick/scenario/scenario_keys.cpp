#include "coilkick/scenario/scenario_keys.hpp"

#include <cmath>
#include <optional>

#include "coilkick/catalogue/part_parameters.hpp"
#include "coilkick/engine/closest_name.hpp"

namespace coilkick::scenario {

using drivers::DriverSpec;

#define NK(key, dim, unit, member, field) \
  NumericKey { key, Dimension::dim, unit, [](Scenario& s) -> double& { return s.member; }, field }

const std::vector<NumericKey>& numeric_table() {
  static const std::vector<NumericKey> t{
      NK("supply.voltage", voltage, "V", driver.supply.voltage_V, "supply: voltage_V"),
      NK("supply.tolerance", ratio, "1", driver.supply.tolerance, "supply: tolerance"),
      NK("supply.source_resistance", resistance, "ohm", driver.supply.source_resistance_ohm, "supply: source_resistance_ohm"),
      NK("supply.source_inductance", inductance, "H", driver.supply.source_inductance_H, "supply: source_inductance_H"),
      NK("supply.bulk_capacitance", capacitance, "F", driver.supply.bulk_capacitance_F, "supply: bulk_capacitance_F"),
      NK("supply.bulk_capacitor_esr", resistance, "ohm", driver.supply.bulk_capacitor_esr_ohm, "supply: bulk_capacitor_esr_ohm"),
      NK("cable.length", length, "m", driver.cable.length_m, "cable: length_m"),
      NK("cable.loop_resistance_per_metre", resistance_per_length, "ohm/m", driver.cable.loop_resistance_per_metre_ohm_per_m,
         "cable: loop_resistance_per_metre_ohm_per_m"),
      NK("cable.inductance_per_metre", inductance_per_length, "H/m", driver.cable.inductance_per_metre_H_per_m,
         "cable: inductance_per_metre_H_per_m"),
      NK("cable.capacitance_per_metre", capacitance_per_length, "F/m", driver.cable.capacitance_per_metre_F_per_m,
         "cable: capacitance_per_metre_F_per_m"),
      NK("cable.high_frequency_loss_fraction", dimensionless, "1", driver.cable.high_frequency_loss_fraction,
         "cable: high_frequency_loss_fraction"),
      NK("cable.insulation_loss_tangent", dimensionless, "1", driver.cable.insulation_loss_tangent, "cable: insulation_loss_tangent"),
      NK("drive.high_level", voltage, "V", driver.drive.high_level_V, "drive: high_level_V"),
      NK("drive.output_resistance", resistance, "ohm", driver.drive.output_resistance_ohm, "drive: output_resistance_ohm"),
      NK("drive.rise_time", time, "s", driver.drive.rise_time_s, "drive: rise_time_s"),
      NK("drive.fall_time", time, "s", driver.drive.fall_time_s, "drive: fall_time_s"),
      NK("drive.switch_off_at", time, "s", driver.drive.switch_off_at_s, "drive: switch_off_at_s"),
      NK("drive.period", time, "s", driver.drive.period_s, "drive: period_s"),
      NK("hold.pull_in_time", time, "s", driver.hold.pull_in_time_s, "hold: pull_in_time_s"),
      NK("hold.pull_in_current", current, "A", driver.hold.pull_in_current_A, "hold: pull_in_current_A"),
      NK("hold.pwm_frequency", frequency, "Hz", driver.hold.pwm_frequency_Hz, "hold: pwm_frequency_Hz"),
      NK("hold.pwm_duty", ratio, "1", driver.hold.pwm_duty, "hold: pwm_duty"),
      NK("hold.average_current", current, "A", driver.hold.average_current_A, "hold: average_current_A"),
      NK("repeat.period", time, "s", driver.repeat.period_s, "repeat: period_s"),
      NK("repeat.on_time", time, "s", driver.repeat.on_time_s, "repeat: on_time_s"),
      NK("switch.base_resistor", resistance, "ohm", driver.switch_.base_resistor_ohm, "switch: base_resistor_ohm"),
      NK("switch.gate_resistor", resistance, "ohm", driver.switch_.base_resistor_ohm, "switch: base_resistor_ohm"),
      NK("switch.pullup_resistor", resistance, "ohm", driver.switch_.pullup_resistor_ohm, "switch: pullup_resistor_ohm"),
      NK("switch.level_shifter_base_resistor", resistance, "ohm", driver.switch_.level_shifter_base_resistor_ohm,
         "switch: level_shifter_base_resistor_ohm"),
      NK("switch.board_stray_capacitance", capacitance, "F", driver.switch_.board_stray_capacitance_F,
         "switch: board_stray_capacitance_F"),
      NK("coil.resistance", resistance, "ohm", driver.coil.resistance_at_20C_ohm, "coil: resistance_at_20C_ohm"),
      NK("coil.temperature", temperature, "degC", driver.coil.temperature_C, "coil: temperature_C"),
      NK("coil.copper_temperature_coefficient", dimensionless, "1/K", driver.coil.copper_temperature_coefficient_per_K,
         "coil: copper_temperature_coefficient_per_K"),
      NK("coil.inductance", inductance, "H", driver.coil.inductance_H, "coil: inductance_H"),
      NK("coil.winding_capacitance", capacitance, "F", driver.coil.winding_capacitance_F, "coil: winding_capacitance_F"),
      NK("coil.core_loss_resistance", resistance, "ohm", driver.coil.core_loss_resistance_ohm, "coil: core_loss_resistance_ohm"),
      NK("coil.release_current", current, "A", driver.coil.release_current_A, "coil: release_current_A"),
      NK("coil.release_voltage", voltage, "V", driver.coil.release_voltage_V, "coil: release_voltage_V"),
      NK("coil.operate_current", current, "A", driver.coil.operate_current_A, "coil: operate_current_A"),
      NK("coil.operate_voltage", voltage, "V", driver.coil.operate_voltage_V, "coil: operate_voltage_V"),
      NK("relay.nominal_voltage", voltage, "V", driver.relay.nominal_voltage_V, "relay: nominal_voltage_V"),
      NK("relay.operate_time", time, "s", driver.relay.operate_time_s, "relay: operate_time_s"),
      NK("relay.release_time", time, "s", driver.relay.release_time_s, "relay: release_time_s"),
      NK("relay.contact_gap", length, "m", driver.relay.contact_gap_m, "relay: contact_gap_m"),
      NK("relay.over_travel", length, "m", driver.relay.over_travel_m, "relay: over_travel_m"),
      NK("clamp.resistor", resistance, "ohm", driver.clamp.resistor_ohm, "clamp: resistor_ohm"),
      NK("clamp.snubber_resistance", resistance, "ohm", driver.clamp.snubber_resistance_ohm, "clamp: snubber_resistance_ohm"),
      NK("clamp.snubber_capacitance", capacitance, "F", driver.clamp.snubber_capacitance_F, "clamp: snubber_capacitance_F"),
      NK("analysis.device_temperature", temperature, "degC", driver.analysis.device_temperature_C, "analysis: device_temperature_C"),
      NK("analysis.stop_time", time, "s", driver.analysis.stop_time_s, "analysis: stop_time_s"),
      NK("analysis.relative_tolerance", dimensionless, "1", driver.analysis.relative_tolerance, "analysis: relative_tolerance"),
      NK("analysis.voltage_tolerance", voltage, "V", driver.analysis.voltage_tolerance_V, "analysis: voltage_tolerance_V"),
      NK("analysis.current_tolerance", current, "A", driver.analysis.current_tolerance_A, "analysis: current_tolerance_A"),
      NK("analysis.switch_voltage_derating", ratio, "1", driver.analysis.switch_voltage_derating, "analysis: switch_voltage_derating"),
      NK("analysis.logic_pin_current_limit", current, "A", driver.analysis.logic_pin_current_limit_A,
         "analysis: logic_pin_current_limit_A"),
      NK("analysis.energy_balance_limit", dimensionless, "1", driver.analysis.energy_balance_limit, "analysis: energy_balance_limit"),
      NK("analysis.maximum_wall_time", time, "s", driver.analysis.maximum_wall_time_s, "analysis: maximum_wall_time_s"),
      NK("tolerances.coil_resistance", ratio, "1", tolerances.coil_resistance, ""),
      NK("tolerances.inductance", ratio, "1", tolerances.inductance, ""),
      NK("tolerances.coil_temperature_min", temperature, "degC", tolerances.coil_temperature_min_C, ""),
      NK("tolerances.coil_temperature_max", temperature, "degC", tolerances.coil_temperature_max_C, ""),
      NK("tolerances.forward_beta_min", dimensionless, "1", tolerances.forward_beta_min, ""),
      NK("tolerances.forward_beta_max", dimensionless, "1", tolerances.forward_beta_max, ""),
      NK("tolerances.zener_voltage", ratio, "1", tolerances.zener_voltage, ""),
      NK("tolerances.tvs_voltage", ratio, "1", tolerances.tvs_voltage, ""),
      NK("tolerances.threshold_voltage", ratio, "1", tolerances.threshold_voltage, ""),
  };
  return t;
}
#undef NK

const std::vector<TextKey>& text_table() {
  static const std::vector<TextKey> t{
      {"name", [](Scenario& s, const std::string& v) { s.driver.name = v; }},
      {"coil.part", [](Scenario&, const std::string&) {}},  // handled first, see read_coil_part
      {"switch.topology", [](Scenario& s, const std::string& v) { s.driver.switch_.topology = drivers::parse_topology(v); }},
      {"switch.part", [](Scenario& s, const std::string& v) { s.driver.switch_.part = v; }},
      {"supply.reverse_polarity_diode_part", [](Scenario& s, const std::string& v) { s.driver.supply.reverse_polarity_diode_part = v; }},
      {"switch.level_shifter_part", [](Scenario& s, const std::string& v) { s.driver.switch_.level_shifter_part = v; }},
      {"clamp.kind", [](Scenario& s, const std::string& v) { s.driver.clamp.kind = drivers::parse_clamp_kind(v); }},
      {"clamp.diode_part", [](Scenario& s, const std::string& v) { s.driver.clamp.diode_part = v; }},
      {"clamp.zener_part", [](Scenario& s, const std::string& v) { s.driver.clamp.zener_part = v; }},
      {"clamp.tvs_part", [](Scenario& s, const std::string& v) { s.driver.clamp.tvs_part = v; }},
      {"clamp.active_clamp_zener_part", [](Scenario& s, const std::string& v) { s.driver.clamp.active_clamp_zener_part = v; }},
      {"common_clamp.zener_part", [](Scenario& s, const std::string& v) { s.driver.common_clamp.zener_part = v; }},
      {"analysis.device_models", [](Scenario& s, const std::string& v) { s.driver.analysis.model_level = devices::parse_model_level(v); }},
      // The older spelling of analysis.device_models, still read so that existing files run.
      {"analysis.model_level", [](Scenario& s, const std::string& v) { s.driver.analysis.model_level = devices::parse_model_level(v); }},
  };
  return t;
}

const std::vector<std::pair<const char*, std::function<bool&(Scenario&)>>>& bool_table() {
  static const std::vector<std::pair<const char*, std::function<bool&(Scenario&)>>> t{
      {"clamp.add_rc_snubber_across_coil", [](Scenario& s) -> bool& { return s.driver.clamp.add_rc_snubber_across_coil; }},
      {"analysis.stop_when_decayed", [](Scenario& s) -> bool& { return s.driver.analysis.stop_when_decayed; }},
      {"relay.armature_model", [](Scenario& s) -> bool& { return s.driver.relay.armature_model; }},
  };
  return t;
}

const std::vector<OverrideTable>& override_tables() {
  static const std::vector<OverrideTable> t{
      {"switch.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.switch_.overrides; },
       [](const Scenario& s) { return s.driver.switch_.part; }},
      {"switch.level_shifter_overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.switch_.level_shifter_overrides; },
       [](const Scenario& s) { return s.driver.switch_.level_shifter_part; }},
      {"supply.reverse_polarity_diode.overrides",
       [](Scenario& s) -> drivers::Overrides& { return s.driver.supply.reverse_polarity_diode_overrides; },
       [](const Scenario& s) { return s.driver.supply.reverse_polarity_diode_part; }},
      {"clamp.diode.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.clamp.diode_overrides; },
       [](const Scenario& s) { return s.driver.clamp.diode_part; }},
      {"clamp.zener.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.clamp.zener_overrides; },
       [](const Scenario& s) { return s.driver.clamp.zener_part; }},
      {"clamp.tvs.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.clamp.tvs_overrides; },
       [](const Scenario& s) { return s.driver.clamp.tvs_part; }},
      {"clamp.active_clamp_zener.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.clamp.active_clamp_zener_overrides; },
       [](const Scenario& s) { return s.driver.clamp.active_clamp_zener_part; }},
      {"common_clamp.zener.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.common_clamp.zener_overrides; },
       [](const Scenario& s) { return s.driver.common_clamp.zener_part; }},
  };
  return t;
}

std::vector<std::string> all_key_names() {
  std::vector<std::string> k;
  for (const auto& n : numeric_table()) k.emplace_back(n.key);
  for (const auto& n : text_table()) k.emplace_back(n.key);
  for (const auto& [n, f] : bool_table()) k.emplace_back(n);
  for (const auto& o : override_tables()) k.emplace_back(o.key);
  k.emplace_back("repeat.count");
  return k;
}

double* extra_part_field(Scenario& s, const std::string& key) {
  const std::string prefix = "extra_part.";
  if (key.rfind(prefix, 0) != 0) return nullptr;
  const auto dot = key.rfind('.');
  const std::string name = key.substr(prefix.size(), dot - prefix.size()), field = key.substr(dot + 1);
  for (auto& x : s.driver.extra_parts) {
    if (x.name != name) continue;
    if (field == "value" && x.element != drivers::ExtraElement::part) return &x.value;
    if (field == "series_resistance" && x.element == drivers::ExtraElement::inductor) return &x.series_resistance_ohm;
  }
  return nullptr;
}

Dimension extra_part_dimension(const Scenario& s, const std::string& key) {
  for (const auto& x : s.driver.extra_parts) {
    if (key == "extra_part." + x.name + ".series_resistance") return Dimension::resistance;
    if (key != "extra_part." + x.name + ".value") continue;
    if (x.element == drivers::ExtraElement::capacitor) return Dimension::capacitance;
    if (x.element == drivers::ExtraElement::inductor) return Dimension::inductance;
    return Dimension::resistance;
  }
  throw ScenarioError("key '" + key + "': no numeric field of an extra part of that name");
}

namespace {
[[noreturn]] void throw_not_numeric(const Scenario& s, const std::string& key) {
  std::vector<std::string> names;
  for (const auto& n : numeric_table()) names.emplace_back(n.key);
  for (const auto& x : s.driver.extra_parts) {
    names.push_back("extra_part." + x.name + ".value");
    if (x.element == drivers::ExtraElement::inductor) names.push_back("extra_part." + x.name + ".series_resistance");
  }
  throw ScenarioError("key '" + key + "' is not a numeric scenario key (or a part override such as "
                      "clamp.zener.overrides.breakdown_voltage)" + engine::did_you_mean(key, names));
}
}  // namespace

namespace {
// "channel.<name>.<section>.<key>": a further channel's key (DriverSpec::channels) — its index and
// the key within the channel ("coil.inductance"); nullopt for any other key.
std::optional<std::pair<std::size_t, std::string>> channel_key(const Scenario& s, const std::string& key) {
  const std::string lead = "channel.";
  if (key.rfind(lead, 0) != 0) return std::nullopt;
  const auto dot = key.find('.', lead.size());
  const std::string name = key.substr(lead.size(), dot == std::string::npos ? std::string::npos : dot - lead.size());
  std::vector<std::string> names;
  for (std::size_t k = 0; k < s.driver.channels.size(); ++k) {
    if (s.driver.channels[k].name != name) {
      names.push_back(s.driver.channels[k].name);
      continue;
    }
    const std::string rest = dot == std::string::npos ? "" : key.substr(dot + 1);
    for (const char* section : {"drive.", "switch.", "coil.", "clamp."}) {
      if (rest.rfind(section, 0) == 0) return std::make_pair(k, rest);
    }
    throw ScenarioError("key '" + key + "': a channel's numeric keys are its drive, switch, coil and clamp keys "
                        "(e.g. channel." + name + ".coil.inductance)");
  }
  throw ScenarioError("key '" + key + "': no channel named '" + name + "'" + engine::did_you_mean(name, names));
}

// A scenario whose first channel is further channel k (for reading or writing its keys).
Scenario channel_view(const Scenario& s, std::size_t k) {
  Scenario v = s;
  v.driver = drivers::channel_driver_spec(s.driver, k + 1);
  return v;
}
}  // namespace

void set_numeric_key(Scenario& s, const std::string& key, double value, const catalogue::Catalogue& parts) {
  if (!std::isfinite(value)) throw ScenarioError("key '" + key + "': value must be finite");
  if (const auto ck = channel_key(s, key)) {
    Scenario v = channel_view(s, ck->first);
    set_numeric_key(v, ck->second, value, parts);
    auto& ch = s.driver.channels[ck->first];
    ch.drive = v.driver.drive;
    ch.switch_ = v.driver.switch_;
    ch.coil = v.driver.coil;
    ch.clamp = v.driver.clamp;
    return;
  }
  for (const auto& n : numeric_table()) {
    if (key == n.key) {
      n.ref(s) = value;
      if (key == "supply.tolerance") s.tolerances.supply = value;
      return;
    }
  }
  for (const auto& o : override_tables()) {
    const std::string prefix = std::string(o.key) + ".";
    if (key.rfind(prefix, 0) != 0) continue;
    const std::string pkey = key.substr(prefix.size());
    const auto& rec = parts.part(o.part(s));
    std::vector<std::string> names;
    for (const auto& f : catalogue::parameter_keys(rec.family)) {
      if (f.first == pkey) {
        o.map(s)[pkey] = value;
        return;
      }
      names.push_back(f.first);
    }
    throw ScenarioError("key '" + key + "': '" + pkey + "' is not a parameter of " + rec.family + " part '" + rec.name + "'" +
                        engine::did_you_mean(pkey, names));
  }
  if (double* field = extra_part_field(s, key)) {
    *field = value;
    return;
  }
  throw_not_numeric(s, key);
}

double numeric_key_value(const Scenario& s, const std::string& key) {
  if (const auto ck = channel_key(s, key)) return numeric_key_value(channel_view(s, ck->first), ck->second);
  Scenario c = s;  // the tables hand out references into a scenario they may write
  for (const auto& n : numeric_table()) {
    if (key == n.key) return n.ref(c);
  }
  for (const auto& o : override_tables()) {
    const std::string prefix = std::string(o.key) + ".";
    if (key.rfind(prefix, 0) != 0) continue;
    const auto& m = o.map(c);
    const auto it = m.find(key.substr(prefix.size()));
    if (it != m.end()) return it->second;
    throw ScenarioError("key '" + key + "': the scenario does not set this part parameter (give it as an override to start from)");
  }
  if (const double* field = extra_part_field(c, key)) return *field;
  throw_not_numeric(s, key);
}

std::vector<std::pair<std::string, std::string>> numeric_keys() {
  std::vector<std::pair<std::string, std::string>> out;
  for (const auto& n : numeric_table()) out.emplace_back(n.key, n.unit);
  return out;
}

}  // namespace coilkick::scenario
