#include "coilkick/scenario/scenario.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>
#include <filesystem>
#include <fstream>
#include <functional>
#include <set>
#include <sstream>
#include <toml++/toml.h>

#include "coilkick/catalogue/part_parameters.hpp"
#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/engine/closest_name.hpp"
#include "coilkick/scenario/quantity.hpp"

namespace coilkick::scenario {
namespace {

using drivers::DriverSpec;

struct NumericKey {
  const char* key;
  Dimension dim;
  const char* unit;
  std::function<double&(Scenario&)> ref;
  const char* spec_field;  // how check_driver_spec names it, "" if it does not
};

#define NK(key, dim, unit, member, field) \
  NumericKey { key, Dimension::dim, unit, [](Scenario& s) -> double& { return s.member; }, field }

const std::vector<NumericKey>& numeric_table() {
  static const std::vector<NumericKey> t{
      NK("supply.voltage", voltage, "V", driver.supply.voltage_V, "supply: voltage_V"),
      NK("supply.tolerance", ratio, "1", driver.supply.tolerance, "supply: tolerance"),
      NK("drive.high_level", voltage, "V", driver.drive.high_level_V, "drive: high_level_V"),
      NK("drive.output_resistance", resistance, "ohm", driver.drive.output_resistance_ohm, "drive: output_resistance_ohm"),
      NK("drive.rise_time", time, "s", driver.drive.rise_time_s, "drive: rise_time_s"),
      NK("drive.fall_time", time, "s", driver.drive.fall_time_s, "drive: fall_time_s"),
      NK("drive.switch_off_at", time, "s", driver.drive.switch_off_at_s, "drive: switch_off_at_s"),
      NK("drive.period", time, "s", driver.drive.period_s, "drive: period_s"),
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

struct TextKey {
  const char* key;
  std::function<void(Scenario&, const std::string&)> set;
};

const std::vector<TextKey>& text_table() {
  static const std::vector<TextKey> t{
      {"name", [](Scenario& s, const std::string& v) { s.driver.name = v; }},
      {"coil.part", [](Scenario&, const std::string&) {}},  // handled first, see read_coil_part
      {"switch.topology", [](Scenario& s, const std::string& v) { s.driver.switch_.topology = drivers::parse_topology(v); }},
      {"switch.part", [](Scenario& s, const std::string& v) { s.driver.switch_.part = v; }},
      {"switch.level_shifter_part", [](Scenario& s, const std::string& v) { s.driver.switch_.level_shifter_part = v; }},
      {"clamp.kind", [](Scenario& s, const std::string& v) { s.driver.clamp.kind = drivers::parse_clamp_kind(v); }},
      {"clamp.diode_part", [](Scenario& s, const std::string& v) { s.driver.clamp.diode_part = v; }},
      {"clamp.zener_part", [](Scenario& s, const std::string& v) { s.driver.clamp.zener_part = v; }},
      {"clamp.tvs_part", [](Scenario& s, const std::string& v) { s.driver.clamp.tvs_part = v; }},
      {"clamp.active_clamp_zener_part", [](Scenario& s, const std::string& v) { s.driver.clamp.active_clamp_zener_part = v; }},
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

// Override tables: key prefix -> (overrides map, part whose family decides the keys).
struct OverrideTable {
  const char* key;
  std::function<drivers::Overrides&(Scenario&)> map;
  std::function<std::string(const Scenario&)> part;
};
const std::vector<OverrideTable>& override_tables() {
  static const std::vector<OverrideTable> t{
      {"switch.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.switch_.overrides; },
       [](const Scenario& s) { return s.driver.switch_.part; }},
      {"switch.level_shifter_overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.switch_.level_shifter_overrides; },
       [](const Scenario& s) { return s.driver.switch_.level_shifter_part; }},
      {"clamp.diode.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.clamp.diode_overrides; },
       [](const Scenario& s) { return s.driver.clamp.diode_part; }},
      {"clamp.zener.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.clamp.zener_overrides; },
       [](const Scenario& s) { return s.driver.clamp.zener_part; }},
      {"clamp.tvs.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.clamp.tvs_overrides; },
       [](const Scenario& s) { return s.driver.clamp.tvs_part; }},
      {"clamp.active_clamp_zener.overrides", [](Scenario& s) -> drivers::Overrides& { return s.driver.clamp.active_clamp_zener_overrides; },
       [](const Scenario& s) { return s.driver.clamp.active_clamp_zener_part; }},
  };
  return t;
}

std::vector<std::string> all_key_names() {
  std::vector<std::string> k;
  for (const auto& n : numeric_table()) k.emplace_back(n.key);
  for (const auto& n : text_table()) k.emplace_back(n.key);
  for (const auto& [n, f] : bool_table()) k.emplace_back(n);
  for (const auto& o : override_tables()) k.emplace_back(o.key);
  return k;
}

SourceLocation where(const std::string& file, const toml::node& n) {
  return {file, static_cast<int>(n.source().begin.line), static_cast<int>(n.source().begin.column)};
}

[[noreturn]] void fail(const SourceLocation& at, const std::string& key, const std::string& what) {
  throw ScenarioError(at.str() + ": " + (key.empty() ? "" : "key '" + key + "': ") + what);
}

const char* type_name(const toml::node& n) {
  switch (n.type()) {
    case toml::node_type::table: return "a table";
    case toml::node_type::array: return "an array";
    case toml::node_type::string: return "a string";
    case toml::node_type::integer: return "an integer";
    case toml::node_type::floating_point: return "a number";
    case toml::node_type::boolean: return "a boolean";
    default: return "a date or time";
  }
}

double quantity_of(const toml::node& n, Dimension dim, const SourceLocation& at, const std::string& key) {
  if (n.is_number()) {
    const double v = *n.value<double>();
    if (!std::isfinite(v)) fail(at, key, "must be a finite number");
    return v;
  }
  if (n.is_string()) {
    try {
      return parse_quantity(*n.value<std::string>(), dim);
    } catch (const std::invalid_argument& e) {
      fail(at, key, e.what());
    }
  }
  fail(at, key, std::string("must be a number or a quantity string such as \"4.7 kohm\", not ") + type_name(n));
}

class Reader {
 public:
  Reader(std::string file, const catalogue::Catalogue& parts) : file_(std::move(file)), parts_(parts) {}

  Scenario read(const toml::table& doc) {
    s_.file = file_;
    // The coil part first: it supplies defaults that explicit [coil] keys override.
    if (const auto* coil = doc.get("coil"); coil && coil->is_table()) {
      if (const auto* p = coil->as_table()->get("part")) read_coil_part(*p);
    }
    for (const auto& [k, v] : doc) {
      const std::string key(k.str());
      if (key == "name") {
        set_text("name", v);
        continue;
      }
      static const std::vector<std::string> sections{"supply", "drive", "switch", "coil", "clamp", "relay", "analysis", "tolerances"};
      if (std::find(sections.begin(), sections.end(), key) == sections.end()) {
        std::vector<std::string> top = sections;
        top.push_back("name");
        fail(where(file_, v), key, "unknown section or key" + engine::did_you_mean(key, top));
      }
      if (!v.is_table()) fail(where(file_, v), key, std::string("must be a table [") + key + "], not " + type_name(v));
      s_.locations[key] = where(file_, v);
      read_table(key, *v.as_table());
    }
    for (const auto& [prefix, node] : pending_overrides_) read_overrides(prefix, *node);
    resolve_thresholds();
    if (seen_.count("analysis.device_models") && seen_.count("analysis.model_level")) {
      fail(at("analysis.model_level"), "analysis.model_level",
           "give analysis.device_models (or its older spelling analysis.model_level), not both");
    }
    require_keys(doc);
    check_ranges();
    if (s_.driver.relay.armature_model) drivers::freeze_relay_datasheet(s_.driver);
    validate_spec();
    return s_;
  }

 private:
  std::string file_;
  const catalogue::Catalogue& parts_;
  Scenario s_;
  std::set<std::string> seen_;
  std::vector<std::pair<std::string, const toml::table*>> pending_overrides_;

  SourceLocation at(const std::string& key) const {
    auto it = s_.locations.find(key);
    if (it != s_.locations.end()) return it->second;
    const auto dot = key.find('.');
    if (dot != std::string::npos) {
      auto sec = s_.locations.find(key.substr(0, dot));
      if (sec != s_.locations.end()) return sec->second;
    }
    return {file_, 1, 1};
  }

  void read_coil_part(const toml::node& n) {
    const SourceLocation loc = where(file_, n);
    if (!n.is_string()) fail(loc, "coil.part", std::string("must be a string, not ") + type_name(n));
    const std::string name = *n.value<std::string>();
    try {
      s_.driver.coil = drivers::coil_spec_from_part(parts_.part(name));
      s_.driver.relay = drivers::relay_spec_from_part(parts_.part(name));
    } catch (const std::invalid_argument& e) {
      fail(loc, "coil.part", e.what());
    }
    s_.locations["coil.part"] = loc;
    seen_.insert("coil.part");
  }

  void set_text(const std::string& key, const toml::node& n) {
    const SourceLocation loc = where(file_, n);
    if (!n.is_string()) fail(loc, key, std::string("must be a string, not ") + type_name(n));
    for (const auto& t : text_table()) {
      if (key != t.key) continue;
      try {
        t.set(s_, *n.value<std::string>());
      } catch (const std::invalid_argument& e) {
        fail(loc, key, e.what());
      }
      s_.locations[key] = loc;
      seen_.insert(key);
      return;
    }
  }

  void read_table(const std::string& section, const toml::table& t) {
    for (const auto& [k, v] : t) {
      const std::string key = section + "." + std::string(k.str());
      const SourceLocation loc = where(file_, v);
      if (key == "coil.part") continue;  // read first
      if (seen_.count(key)) fail(loc, key, "is given twice");
      bool done = false;
      for (const auto& n : numeric_table()) {
        if (key != n.key) continue;
        n.ref(s_) = quantity_of(v, n.dim, loc, key);
        done = true;
      }
      for (const auto& tk : text_table()) {
        if (key == tk.key) {
          set_text(key, v);
          done = true;
        }
      }
      for (const auto& [name, ref] : bool_table()) {
        if (key != name) continue;
        if (!v.is_boolean()) fail(loc, key, std::string("must be true or false, not ") + type_name(v));
        ref(s_) = *v.value<bool>();
        done = true;
      }
      for (const auto& o : override_tables()) {
        if (key != o.key) continue;
        if (!v.is_table()) fail(loc, key, std::string("must be a table of part parameters, not ") + type_name(v));
        pending_overrides_.emplace_back(key, v.as_table());
        done = true;
      }
      if (!done && v.is_table()) {
        // [clamp.zener] etc. hold only their overrides table.
        const std::vector<std::string> holders{"clamp.diode", "clamp.zener", "clamp.tvs", "clamp.active_clamp_zener"};
        if (std::find(holders.begin(), holders.end(), key) != holders.end()) {
          s_.locations[key] = loc;
          read_table(key, *v.as_table());
          done = true;
        }
      }
      if (!done) {
        std::vector<std::string> candidates;
        for (const auto& name : all_key_names()) {
          if (name.rfind(section + ".", 0) == 0) candidates.push_back(name);
        }
        fail(loc, key, "unknown key" + engine::did_you_mean(key, candidates));
      }
      s_.locations[key] = loc;
      seen_.insert(key);
    }
  }

  void read_overrides(const std::string& prefix, const toml::table& t) {
    const OverrideTable* ot = nullptr;
    for (const auto& o : override_tables()) {
      if (prefix == o.key) ot = &o;
    }
    const std::string part_name = ot->part(s_);
    const std::string part_key = prefix.rfind("switch.overrides", 0) == 0 ? "switch.part"
                                 : prefix == "switch.level_shifter_overrides" ? "switch.level_shifter_part"
                                 : prefix.substr(0, prefix.size() - std::string(".overrides").size()) + "_part";
    if (!parts_.has_part(part_name)) fail(at(part_key), part_key, "no part named '" + part_name + "' in the catalogue" +
                                                                      engine::did_you_mean(part_name, parts_.names()));
    const auto& rec = parts_.part(part_name);
    const auto fields = catalogue::parameter_keys(rec.family);
    std::vector<std::string> names;
    for (const auto& f : fields) names.push_back(f.first);
    for (const auto& [k, v] : t) {
      const std::string pkey(k.str());
      const std::string key = prefix + "." + pkey;
      const SourceLocation loc = where(file_, v);
      auto it = std::find_if(fields.begin(), fields.end(), [&](const auto& f) { return f.first == pkey; });
      if (it == fields.end()) {
        fail(loc, key, "'" + pkey + "' is not a parameter of " + rec.family + " part '" + part_name + "'" +
                           engine::did_you_mean(pkey, names));
      }
      ot->map(s_)[pkey] = quantity_of(v, dimension_of_unit(it->second), loc, key);
      s_.locations[key] = loc;
      seen_.insert(key);
    }
  }

  // A coil part gives its release and operate thresholds as voltages; a threshold key in the file,
  // in either form, replaces the part's. The part's voltages stay the armature model's data-sheet
  // values (relay.*), which the calibration needs whatever threshold the file chooses.
  void resolve_thresholds() {
    auto& coil = s_.driver.coil;
    auto& relay = s_.driver.relay;
    struct Pair {
      const char* current_key;
      const char* voltage_key;
      double& current;
      double& voltage;
      double& datasheet_voltage;
    };
    for (const Pair& p : {Pair{"coil.release_current", "coil.release_voltage", coil.release_current_A, coil.release_voltage_V,
                               relay.release_voltage_V},
                          Pair{"coil.operate_current", "coil.operate_voltage", coil.operate_current_A, coil.operate_voltage_V,
                               relay.operate_voltage_V}}) {
      const bool current = seen_.count(p.current_key) > 0, voltage = seen_.count(p.voltage_key) > 0;
      if (current && voltage) {
        fail(at(p.current_key), p.current_key, std::string("give ") + p.current_key + " or " + p.voltage_key + ", not both");
      }
      if (current && !std::isnan(p.voltage)) {
        if (std::isnan(p.datasheet_voltage)) p.datasheet_voltage = p.voltage;
        p.voltage = std::numeric_limits<double>::quiet_NaN();
      }
      if (voltage) p.current = std::numeric_limits<double>::quiet_NaN();
    }
  }

  void require(const std::string& key, const std::string& why = "") {
    if (!seen_.count(key)) fail(at(key), key, "is required" + (why.empty() ? "" : " " + why));
  }

  void require_keys(const toml::table&) {
    require("supply.voltage");
    if (!seen_.count("coil.part")) {
      require("coil.resistance", "(or give coil.part)");
      require("coil.inductance", "(or give coil.part)");
    }
    require("switch.topology");
    require("switch.part");
    require("clamp.kind");
    using drivers::ClampKind;
    const auto k = s_.driver.clamp.kind;
    const std::string why = "for clamp.kind = " + drivers::to_string(k);
    if (k == ClampKind::diode || k == ClampKind::diode_zener || k == ClampKind::diode_resistor || k == ClampKind::active_clamp) {
      require("clamp.diode_part", why);
    }
    if (k == ClampKind::diode_zener) require("clamp.zener_part", why);
    if (k == ClampKind::active_clamp) require("clamp.active_clamp_zener_part", why);
    if (k == ClampKind::tvs_across_switch) require("clamp.tvs_part", why);
    if (k == ClampKind::diode_resistor) require("clamp.resistor", why);
    if (k == ClampKind::rc_across_coil || k == ClampKind::rc_across_switch || s_.driver.clamp.add_rc_snubber_across_coil) {
      require("clamp.snubber_resistance", why);
      require("clamp.snubber_capacitance", why);
    }
    const bool high = s_.driver.switch_.topology == drivers::Topology::high_side_pnp ||
                      s_.driver.switch_.topology == drivers::Topology::high_side_pmos;
    if (high) require("switch.pullup_resistor", "for a high-side switch");
  }

  void check_ranges() {
    auto& t = s_.tolerances;
    t.supply = s_.driver.supply.tolerance;
    const bool tmin = seen_.count("tolerances.coil_temperature_min"), tmax = seen_.count("tolerances.coil_temperature_max");
    if (tmin != tmax) fail(at(tmin ? "tolerances.coil_temperature_min" : "tolerances.coil_temperature_max"),
                           tmin ? "tolerances.coil_temperature_min" : "tolerances.coil_temperature_max",
                           "give both tolerances.coil_temperature_min and tolerances.coil_temperature_max");
    t.has_coil_temperature_range = tmin && tmax;
    if (t.has_coil_temperature_range && t.coil_temperature_min_C > t.coil_temperature_max_C) {
      fail(at("tolerances.coil_temperature_max"), "tolerances.coil_temperature_max", "must not be below tolerances.coil_temperature_min");
    }
    const bool bmin = seen_.count("tolerances.forward_beta_min"), bmax = seen_.count("tolerances.forward_beta_max");
    if (bmin != bmax) fail(at(bmin ? "tolerances.forward_beta_min" : "tolerances.forward_beta_max"),
                           bmin ? "tolerances.forward_beta_min" : "tolerances.forward_beta_max",
                           "give both tolerances.forward_beta_min and tolerances.forward_beta_max");
    t.has_forward_beta_range = bmin && bmax;
    if (t.has_forward_beta_range && !(t.forward_beta_min > 0.0 && t.forward_beta_min <= t.forward_beta_max)) {
      fail(at("tolerances.forward_beta_max"), "tolerances.forward_beta_max", "needs 0 < forward_beta_min <= forward_beta_max");
    }
    for (const char* k : {"tolerances.coil_resistance", "tolerances.inductance", "tolerances.zener_voltage", "tolerances.tvs_voltage",
                          "tolerances.threshold_voltage"}) {
      if (!seen_.count(k)) continue;
      double v = 0.0;
      for (const auto& n : numeric_table()) {
        if (std::string(n.key) == k) v = n.ref(s_);
      }
      if (!(v >= 0.0 && v < 0.5)) fail(at(k), k, "must be a relative spread in [0, 50 %)");
    }
  }

  // Runs the driver checks and the network builder; maps their messages to the key's location.
  void validate_spec() {
    try {
      drivers::check_driver_spec(s_.driver);
      (void)drivers::build_driver_network(s_.driver, parts_);
    } catch (const std::invalid_argument& e) {
      const std::string msg = e.what();
      std::string key;
      std::size_t best = 0;
      for (const auto& n : numeric_table()) {
        const std::string f = n.spec_field;
        if (!f.empty() && msg.rfind(f, 0) == 0 && f.size() > best && seen_.count(n.key)) {
          best = f.size();
          key = n.key;
        }
      }
      for (const auto& name : all_key_names()) {
        if (msg.rfind(name + ":", 0) == 0 && name.size() > best) {
          best = name.size();
          key = name;
        }
      }
      // A relay value the armature model lacks (or cannot meet): point at the switch that asks for it.
      if (key.empty() && msg.rfind("relay:", 0) == 0 && seen_.count("relay.armature_model")) key = "relay.armature_model";
      if (key.empty()) {
        // A part parameter set by an override: "...: forward_beta must be ..." names it.
        for (const auto& o : override_tables()) {
          for (const auto& [k, loc] : s_.locations) {
            const std::string prefix = std::string(o.key) + ".";
            if (k.rfind(prefix, 0) != 0) continue;
            const std::string param = k.substr(prefix.size());
            if (msg.find(": " + param) != std::string::npos && param.size() > best) {
              best = param.size();
              key = k;
            }
          }
        }
      }
      if (key.empty()) {
        // A message about several fields: point at the last of them in the file.
        int line = -1;
        for (const auto& n : numeric_table()) {
          const std::string f = n.spec_field;
          const auto colon = f.find(": ");
          if (f.empty() || colon == std::string::npos || !seen_.count(n.key)) continue;
          if (msg.find(f.substr(colon + 2)) != std::string::npos && at(n.key).line > line) {
            line = at(n.key).line;
            key = n.key;
          }
        }
      }
      if (key.empty() && msg.find("release current") != std::string::npos) {
        key = seen_.count("coil.release_current") ? "coil.release_current" : "coil.release_voltage";
      }
      if (key.empty() && msg.find("override") != std::string::npos) key = "switch.overrides";
      const SourceLocation loc = key.empty() ? SourceLocation{file_, 1, 1} : at(key);
      throw ScenarioError(loc.str() + ": " + (key.empty() ? "" : "key '" + key + "': ") + with_file_keys(msg));
    }
  }
};

}  // namespace

std::string with_file_keys(const std::string& message) {
  // Rows whose field is named in the message, longest field first ("resistance_at_20C_ohm"
  // before "resistance_ohm"), each word-bounded.
  const auto colon = message.find(": ");
  if (colon == std::string::npos) return message;
  const std::string section = message.substr(0, colon);
  std::vector<std::pair<std::string, std::string>> fields;  // field -> key
  for (const auto& n : numeric_table()) {
    const std::string f = n.spec_field;
    if (f.rfind(section + ": ", 0) == 0) fields.emplace_back(f.substr(section.size() + 2), n.key);
  }
  // The armature calibration names its data-sheet values (relay/relay_calibration.hpp).
  if (section == "relay") {
    for (const auto& [field, key] : std::vector<std::pair<std::string, std::string>>{
             {"operate_voltage_V", "coil.operate_voltage"}, {"release_voltage_V", "coil.release_voltage"},
             {"closed_inductance_H", "coil.inductance"}, {"coil_resistance_ohm", "coil.resistance"},
             {"core_loss_resistance_ohm", "coil.core_loss_resistance"}}) {
      fields.emplace_back(field, key);
    }
  }
  if (fields.empty()) return message;
  std::sort(fields.begin(), fields.end(), [](const auto& a, const auto& b) { return a.first.size() > b.first.size(); });
  std::string text = message.substr(colon + 2);
  auto word = [](char c) { return std::isalnum(static_cast<unsigned char>(c)) || c == '_' || c == '.'; };
  std::string out;
  for (std::size_t i = 0; i < text.size();) {
    bool replaced = false;
    if (i == 0 || !word(text[i - 1])) {
      for (const auto& [field, key] : fields) {
        const std::size_t end = i + field.size();
        if (text.compare(i, field.size(), field) == 0 && (end == text.size() || !word(text[end]))) {
          out += key;
          i = end;
          replaced = true;
          break;
        }
      }
    }
    if (!replaced) out += text[i++];
  }
  return out == text ? message : out;
}

Scenario read_scenario_text(const std::string& text, const std::string& name, const catalogue::Catalogue& parts) {
  toml::table doc;
  try {
    doc = toml::parse(text, std::string_view(name));
  } catch (const toml::parse_error& e) {
    throw ScenarioError(name + ":" + std::to_string(e.source().begin.line) + ":" + std::to_string(e.source().begin.column) +
                        ": TOML syntax: " + std::string(e.description()));
  }
  return Reader(name, parts).read(doc);
}

Scenario read_scenario_file(const std::string& path, const catalogue::Catalogue& parts) {
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec)) {
    throw ScenarioError(path + ":1:1: is a directory, not a scenario file (give a .toml file, e.g. models/scenarios/greenhouse_valve.toml)");
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) throw ScenarioError(path + ":1:1: cannot open the scenario file for reading");
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) throw ScenarioError(path + ":1:1: cannot read the scenario file");
  return read_scenario_text(text.str(), path, parts);
}

void set_numeric_key(Scenario& s, const std::string& key, double value, const catalogue::Catalogue& parts) {
  if (!std::isfinite(value)) throw ScenarioError("key '" + key + "': value must be finite");
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
  std::vector<std::string> names;
  for (const auto& n : numeric_table()) names.emplace_back(n.key);
  throw ScenarioError("key '" + key + "' is not a numeric scenario key (or a part override such as "
                      "clamp.zener.overrides.breakdown_voltage)" + engine::did_you_mean(key, names));
}

std::vector<drivers::ClampKind> applicable_clamp_kinds(const Scenario& s) {
  using drivers::ClampKind;
  auto has = [&](const char* key) { return s.locations.count(key) > 0; };
  std::vector<ClampKind> k{ClampKind::none};
  if (has("clamp.diode_part")) k.push_back(ClampKind::diode);
  if (has("clamp.diode_part") && has("clamp.zener_part")) k.push_back(ClampKind::diode_zener);
  if (has("clamp.diode_part") && has("clamp.resistor")) k.push_back(ClampKind::diode_resistor);
  if (has("clamp.snubber_resistance") && has("clamp.snubber_capacitance")) {
    k.push_back(ClampKind::rc_across_coil);
    k.push_back(ClampKind::rc_across_switch);
  }
  if (has("clamp.tvs_part")) k.push_back(ClampKind::tvs_across_switch);
  if (has("clamp.diode_part") && has("clamp.active_clamp_zener_part")) k.push_back(ClampKind::active_clamp);
  return k;
}

std::vector<std::pair<std::string, std::string>> numeric_keys() {
  std::vector<std::pair<std::string, std::string>> out;
  for (const auto& n : numeric_table()) out.emplace_back(n.key, n.unit);
  return out;
}

}  // namespace coilkick::scenario
