#include "coilkick/scenario/scenario.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>
#include <map>
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
#include "coilkick/scenario/scenario_keys.hpp"
#include "coilkick/scenario/spec_messages.hpp"

namespace coilkick::scenario {
namespace {

using drivers::DriverSpec;

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
      if (key == "extra_part") {
        read_extra_parts(v);
        continue;
      }
      if (key == "channel") {
        channel_tables_ = &v;  // read once the first channel is complete: they start from it
        continue;
      }
      static const std::vector<std::string> sections{"supply", "cable", "drive", "hold", "repeat", "switch", "coil", "clamp",
                                                     "common_clamp", "relay", "analysis", "tolerances"};
      if (std::find(sections.begin(), sections.end(), key) == sections.end()) {
        std::vector<std::string> top = sections;
        top.push_back("name");
        top.push_back("extra_part");
        top.push_back("channel");
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
    if (channel_tables_) read_channels(*channel_tables_);
    validate_spec();
    return s_;
  }

  // [[channel]] tables: a name, and [channel.drive], [channel.switch], [channel.coil],
  // [channel.clamp] with the top-level tables' keys, each replacing the first channel's value.
  // Each is read by a reader of its own that starts from the first channel; its keys' positions
  // are kept as "channel.<name>.<key>".
  void read_channels(const toml::node& v) {
    if (!v.is_array_of_tables()) fail(where(file_, v), "channel", std::string("must be an array of tables [[channel]], not ") + type_name(v));
    s_.locations["channel"] = where(file_, v);
    for (const auto& item : *v.as_array()) {
      const auto& t = *item.as_table();
      const SourceLocation at_table = where(file_, item);
      const auto* name = t.get("name");
      if (!name) fail(at_table, "channel.name", "is required in every [[channel]]");
      if (!name->is_string()) fail(where(file_, *name), "channel.name", std::string("must be a string, not ") + type_name(*name));
      drivers::ChannelSpec ch;
      ch.name = *name->value<std::string>();
      const std::string prefix = "channel." + ch.name;
      if (s_.locations.count(prefix)) fail(where(file_, *name), "channel.name", "'" + ch.name + "' is given twice (channel names are unique)");
      s_.locations[prefix] = at_table;
      Reader sub(file_, parts_);
      sub.s_ = s_;
      sub.s_.driver.channels.clear();
      sub.inherited_ = seen_;
      try {
        sub.read_channel(t);
      } catch (const ScenarioError& e) {
        throw ScenarioError(std::string(e.what()) + " (in the [[channel]] named '" + ch.name + "')");
      }
      ch.drive = sub.s_.driver.drive;
      ch.switch_ = sub.s_.driver.switch_;
      ch.coil = sub.s_.driver.coil;
      ch.clamp = sub.s_.driver.clamp;
      channel_seen_[ch.name];
      for (const auto& key : sub.seen_) {
        channel_seen_[ch.name].insert(key);
        if (sub.s_.locations.count(key)) s_.locations[prefix + "." + key] = sub.s_.locations.at(key);
      }
      s_.driver.channels.push_back(ch);
    }
  }

  void read_channel(const toml::table& t) {
    static const std::vector<std::string> sections{"drive", "switch", "coil", "clamp"};
    if (const auto* coil = t.get("coil"); coil && coil->is_table()) {
      if (const auto* p = coil->as_table()->get("part")) {
        // A channel's coil part replaces the first channel's coil (its thresholds too).
        read_coil_part(*p);
      }
    }
    for (const auto& [k, v] : t) {
      const std::string key(k.str());
      if (key == "name") continue;
      if (std::find(sections.begin(), sections.end(), key) == sections.end()) {
        std::vector<std::string> known = sections;
        known.push_back("name");
        fail(where(file_, v), "channel." + key, "a channel takes name, [channel.drive], [channel.switch], [channel.coil] and "
                                                "[channel.clamp] (the board's supply, analysis ... are shared)" + engine::did_you_mean(key, known));
      }
      if (!v.is_table()) fail(where(file_, v), "channel." + key, std::string("must be a table [channel.") + key + "], not " + type_name(v));
      s_.locations[key] = where(file_, v);
      read_table(key, *v.as_table());
    }
    for (const auto& [prefix, node] : pending_overrides_) read_overrides(prefix, *node);
    resolve_thresholds();
    require_clamp_parts();
  }

 private:
  std::string file_;
  const catalogue::Catalogue& parts_;
  Scenario s_;
  std::set<std::string> seen_;
  std::set<std::string> inherited_;  // a channel's reader: the keys the first channel gave
  std::map<std::string, std::set<std::string>> channel_seen_;  // by channel name: the keys it gave
  const toml::node* channel_tables_ = nullptr;  // the [[channel]] array, read last
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

  // [[extra_part]] tables: name, element, between, and value (resistor, capacitor, inductor),
  // series_resistance (inductor) or part and overrides (element "part").
  void read_extra_parts(const toml::node& v) {
    const SourceLocation loc = where(file_, v);
    if (!v.is_array_of_tables()) fail(loc, "extra_part", std::string("must be an array of tables [[extra_part]], not ") + type_name(v));
    for (const auto& item : *v.as_array()) {
      const auto& t = *item.as_table();
      const SourceLocation at_table = where(file_, item);
      drivers::ExtraPart x;
      auto text = [&](const char* field, bool required) -> std::string {
        const auto* n = t.get(field);
        if (!n) {
          if (required) fail(at_table, std::string("extra_part.") + field, "is required in every [[extra_part]]");
          return "";
        }
        if (!n->is_string()) fail(where(file_, *n), std::string("extra_part.") + field, std::string("must be a string, not ") + type_name(*n));
        return *n->value<std::string>();
      };
      x.name = text("name", true);
      const std::string prefix = "extra_part." + x.name;
      if (s_.locations.count(prefix)) fail(at_table, prefix, "is given twice (extra part names are unique)");
      s_.locations[prefix] = at_table;
      const std::string element = text("element", true);  // (a missing one fails here, naming the table)
      try {
        x.element = drivers::parse_extra_element(element);
      } catch (const std::invalid_argument& e) {
        fail(where(file_, *t.get("element")), prefix + ".element", e.what());
      }
      for (const auto& [k, n] : t) {
        const std::string field(k.str());
        const std::string key = prefix + "." + field;
        const SourceLocation at_field = where(file_, n);
        s_.locations[key] = at_field;
        if (field == "name" || field == "element") continue;
        if (field == "between") {
          if (!n.is_array()) fail(at_field, key, std::string("must be an array of node names, not ") + type_name(n));
          for (const auto& node : *n.as_array()) {
            if (!node.is_string()) fail(at_field, key, "must be an array of node names (strings)");
            x.nodes.push_back(*node.value<std::string>());
          }
        } else if (field == "value") {
          const Dimension dim = x.element == drivers::ExtraElement::capacitor  ? Dimension::capacitance
                                : x.element == drivers::ExtraElement::inductor ? Dimension::inductance
                                                                               : Dimension::resistance;
          if (x.element == drivers::ExtraElement::part) fail(at_field, key, "a catalogue part takes no value (give overrides)");
          x.value = quantity_of(n, dim, at_field, key);
        } else if (field == "series_resistance") {
          if (x.element != drivers::ExtraElement::inductor) fail(at_field, key, "only an inductor takes a series_resistance");
          x.series_resistance_ohm = quantity_of(n, Dimension::resistance, at_field, key);
        } else if (field == "part") {
          x.part = text("part", false);
          if (!parts_.has_part(x.part)) fail(at_field, key, "no part named '" + x.part + "' in the catalogue" + engine::did_you_mean(x.part, parts_.names()));
        } else if (field == "overrides") {
          if (!n.is_table()) fail(at_field, key, std::string("must be a table of part parameters, not ") + type_name(n));
        } else {
          fail(at_field, key, "unknown key" + engine::did_you_mean(field, {"name", "element", "between", "value", "series_resistance", "part", "overrides"}));
        }
      }
      if (x.nodes.empty()) fail(at_table, prefix + ".between", "is required: the nodes the part joins");
      if (x.element != drivers::ExtraElement::part && std::isnan(x.value)) fail(at_table, prefix + ".value", "is required for a " + drivers::to_string(x.element));
      if (x.element == drivers::ExtraElement::part && x.part.empty()) fail(at_table, prefix + ".part", "is required for element \"part\"");
      if (const auto* o = t.get("overrides")) {
        if (x.part.empty()) fail(where(file_, *o), prefix + ".overrides", "only a catalogue part takes overrides");
        const auto& rec = parts_.part(x.part);
        const auto fields = catalogue::parameter_keys(rec.family);
        std::vector<std::string> names;
        for (const auto& f : fields) names.push_back(f.first);
        for (const auto& [pk, pv] : *o->as_table()) {
          const std::string param(pk.str());
          const std::string key = prefix + ".overrides." + param;
          auto it = std::find_if(fields.begin(), fields.end(), [&](const auto& f) { return f.first == param; });
          if (it == fields.end()) {
            fail(where(file_, pv), key, "'" + param + "' is not a parameter of " + rec.family + " part '" + x.part + "'" + engine::did_you_mean(param, names));
          }
          x.overrides[param] = quantity_of(pv, dimension_of_unit(it->second), where(file_, pv), key);
          s_.locations[key] = where(file_, pv);
        }
      }
      s_.driver.extra_parts.push_back(x);
    }
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
      if (key == "repeat.count") {
        // A whole number of on/off cycles.
        if (!v.is_integer()) fail(loc, key, std::string("must be a whole number of cycles, not ") + type_name(v));
        const auto n = *v.value<std::int64_t>();
        if (n < 1 || n > drivers::kMostRepeatCount) {
          fail(loc, key, "must be 1 to " + std::to_string(drivers::kMostRepeatCount) + ", got " + std::to_string(n));
        }
        s_.driver.repeat.count = static_cast<int>(n);
        done = true;
      }
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
        const std::vector<std::string> holders{"clamp.diode", "clamp.zener", "clamp.tvs", "clamp.active_clamp_zener",
                                               "supply.reverse_polarity_diode", "common_clamp.zener"};
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
    if (!seen_.count(key) && !inherited_.count(key)) fail(at(key), key, "is required" + (why.empty() ? "" : " " + why));
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
    require_clamp_parts();
  }

  // The parts and values the chosen clamp kind uses, and a high-side switch's pull-up.
  void require_clamp_parts() {
    using drivers::ClampKind;
    const auto k = s_.driver.clamp.kind;
    const std::string why = "for clamp.kind = " + drivers::to_string(k);
    if (k == ClampKind::diode || k == ClampKind::diode_zener || k == ClampKind::diode_resistor || k == ClampKind::active_clamp ||
        k == ClampKind::common_pin) {
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
  // A further channel's message ("channel 'fan': coil: ...") points at that channel's key.
  void validate_spec() {
    try {
      drivers::check_driver_spec(s_.driver);
      (void)drivers::build_driver_network(s_.driver, parts_);
    } catch (const std::invalid_argument& e) {
      const std::string msg = e.what();
      const std::string lead = "channel '";
      if (msg.rfind(lead, 0) == 0 && msg.find("': ") != std::string::npos) {
        const auto close = msg.find("': ");
        const std::string name = msg.substr(lead.size(), close - lead.size()), rest = msg.substr(close + 3);
        const std::string table = "channel." + name;
        if (channel_seen_.count(name)) {
          const std::string key = key_of_message(rest, s_, channel_seen_.at(name));
          const bool own = !key.empty() && s_.locations.count(table + "." + key);
          const SourceLocation loc = own ? s_.locations.at(table + "." + key) : at(table);
          throw ScenarioError(loc.str() + ": " + (own ? "key '" + table + "." + key + "': " : "key '" + table + "': ") + with_file_keys(rest));
        }
      }
      if (msg.rfind("channel: ", 0) == 0) throw ScenarioError(at("channel").str() + ": key 'channel': " + with_file_keys(msg));
      const std::string key = key_of_message(msg, s_, seen_);
      const SourceLocation loc = key.empty() ? SourceLocation{file_, 1, 1} : at(key);
      throw ScenarioError(loc.str() + ": " + (key.empty() ? "" : "key '" + key + "': ") + with_file_keys(msg));
    }
  }
};

}  // namespace

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

std::vector<drivers::ClampKind> applicable_clamp_kinds(const Scenario& s) {
  using drivers::ClampKind;
  auto has = [&](const char* key) { return s.locations.count(key) > 0; };
  std::vector<ClampKind> k{ClampKind::none};
  if (has("clamp.diode_part")) k.push_back(ClampKind::diode);
  if (has("clamp.diode_part") && drivers::uses_common_pin(s.driver)) k.push_back(ClampKind::common_pin);
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

}  // namespace coilkick::scenario
