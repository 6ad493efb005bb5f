#include "coilkick/scenario/spec_messages.hpp"

#include <algorithm>
#include <cctype>
#include <utility>
#include <vector>

#include "coilkick/scenario/scenario_keys.hpp"

namespace coilkick::scenario {
namespace {
int line_of(const Scenario& s, const std::string& key) {
  const auto it = s.locations.find(key);
  return it == s.locations.end() ? -1 : it->second.line;
}
}  // namespace

std::string key_of_message(const std::string& msg, const Scenario& s, const std::set<std::string>& seen) {
  // An extra part's message names it: point at its field where the message says which.
  const std::string extra = "extra_part '";
  if (msg.rfind(extra, 0) == 0) {
    const std::string name = msg.substr(extra.size(), msg.find('\'', extra.size()) - extra.size());
    const std::string table = "extra_part." + name;
    for (const auto& [word, field] : std::vector<std::pair<std::string, std::string>>{
             {"node", ".between"}, {"joins", ".between"}, {"value", ".value"}, {"part '", ".part"}, {"series_resistance", ".series_resistance"}}) {
      if (msg.find(word) != std::string::npos && s.locations.count(table + field)) return table + field;
    }
    if (s.locations.count(table)) return table;
  }
  std::string key;
  std::size_t best = 0;
  for (const auto& n : numeric_table()) {
    const std::string f = n.spec_field;
    if (!f.empty() && msg.rfind(f, 0) == 0 && f.size() > best && seen.count(n.key)) {
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
  if (key.empty() && msg.rfind("relay:", 0) == 0 && seen.count("relay.armature_model")) key = "relay.armature_model";
  if (key.empty()) {
    // A part parameter set by an override: "...: forward_beta must be ..." names it.
    for (const auto& o : override_tables()) {
      for (const auto& [k, loc] : s.locations) {
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
      if (f.empty() || colon == std::string::npos || !seen.count(n.key)) continue;
      if (msg.find(f.substr(colon + 2)) != std::string::npos && line_of(s, n.key) > line) {
        line = line_of(s, n.key);
        key = n.key;
      }
    }
  }
  if (key.empty() && msg.find("release current") != std::string::npos) {
    key = seen.count("coil.release_current") ? "coil.release_current" : "coil.release_voltage";
  }
  if (key.empty() && msg.find("override") != std::string::npos) key = "switch.overrides";
  if (key.empty()) {
    // About a key the file lacks: point at its section ("hold: pwm_frequency_Hz is needed ...").
    const auto colon = msg.find(':');
    if (colon != std::string::npos && s.locations.count(msg.substr(0, colon))) key = msg.substr(0, colon);
  }
  return key;
}

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

}  // namespace coilkick::scenario
