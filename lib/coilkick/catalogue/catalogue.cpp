#include "coilkick/catalogue/catalogue.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <toml++/toml.h>

#include "coilkick/catalogue/part_parameters.hpp"
#include "coilkick/engine/closest_name.hpp"

#ifndef COILKICK_SOURCE_MODELS_DIR
#define COILKICK_SOURCE_MODELS_DIR ""
#endif
#ifndef COILKICK_INSTALLED_MODELS_DIR
#define COILKICK_INSTALLED_MODELS_DIR ""
#endif

namespace coilkick::catalogue {
namespace {

std::string where(const std::string& file, const toml::source_region& s) {
  return file + ":" + std::to_string(s.begin.line) + ":" + std::to_string(s.begin.column);
}

[[noreturn]] void fail(const std::string& file, const toml::node& n, const std::string& what) {
  throw CatalogueError(where(file, n.source()) + ": " + what);
}

void reject_unknown_keys(const std::string& file, const toml::table& t, const std::vector<std::string>& allowed,
                         const std::string& context) {
  for (const auto& [k, v] : t) {
    const std::string key(k.str());
    if (std::find(allowed.begin(), allowed.end(), key) == allowed.end()) {
      fail(file, v, context + ": unknown key '" + key + "'" + engine::did_you_mean(key, allowed));
    }
  }
}

std::string string_of(const std::string& file, const toml::node& n, const std::string& what) {
  const auto s = n.value<std::string>();
  if (!s || n.type() != toml::node_type::string) fail(file, n, what + " must be a string");
  return *s;
}

Entry read_entry(const std::string& file, const std::string& key, const toml::node& n, const std::string& context) {
  const auto* t = n.as_table();
  if (!t) fail(file, n, context + ": '" + key + "' must be a table { value = ..., unit = \"...\", source = \"...\" }");
  reject_unknown_keys(file, *t, {"value", "unit", "source"}, context + ": '" + key + "'");
  Entry e;
  e.file = file;
  e.line = static_cast<int>(n.source().begin.line);
  e.column = static_cast<int>(n.source().begin.column);
  const auto* v = t->get("value");
  if (!v) fail(file, n, context + ": '" + key + "' has no value");
  if (!v->is_number()) fail(file, *v, context + ": '" + key + "'.value must be a number");
  e.value = *v->value<double>();
  if (!std::isfinite(e.value)) fail(file, *v, context + ": '" + key + "'.value must be finite");
  const auto* u = t->get("unit");
  if (!u) fail(file, n, context + ": '" + key + "' has no unit");
  e.unit = string_of(file, *u, context + ": '" + key + "'.unit");
  const auto* s = t->get("source");
  if (!s) fail(file, n, context + ": '" + key + "' has no source (give a reference, or \"typical of the class, from memory\")");
  e.source = string_of(file, *s, context + ": '" + key + "'.source");
  if (e.source.empty()) fail(file, *s, context + ": '" + key + "'.source must not be empty");
  return e;
}

void read_entries(const std::string& file, const toml::node& n, std::map<std::string, Entry>& out,
                  const std::vector<std::pair<std::string, std::string>>& keys, const std::string& context) {
  const auto* t = n.as_table();
  if (!t) fail(file, n, context + " must be a table");
  std::vector<std::string> names;
  for (const auto& k : keys) names.push_back(k.first);
  for (const auto& [k, v] : *t) {
    const std::string key(k.str());
    auto it = std::find_if(keys.begin(), keys.end(), [&](const auto& p) { return p.first == key; });
    if (it == keys.end()) fail(file, v, context + ": unknown key '" + key + "'" + engine::did_you_mean(key, names));
    Entry e = read_entry(file, key, v, context);
    if (e.unit != it->second) {
      fail(file, v, context + ": '" + key + "' has unit '" + e.unit + "', expected '" + it->second + "'");
    }
    out[key] = e;
  }
}

void validate(const PartRecord& p) {
  // Building the device parameters runs every range check of the model.
  if (p.family == "diode" || p.family == "zener" || p.family == "tvs") (void)diode_parameters(p);
  else if (p.family == "npn" || p.family == "pnp") (void)bjt_parameters(p);
  else if (p.family == "nmos" || p.family == "pmos") (void)mosfet_parameters(p);
  else if (p.family == "darlington_npn") (void)darlington_parameters(p);
  else if (p.family == "coil") {
    for (const auto& [k, e] : p.parameters) {
      if (!(e.value > 0.0)) {
        throw CatalogueError(e.file + ":" + std::to_string(e.line) + ":" + std::to_string(e.column) + ": part '" +
                             p.name + "': '" + k + "' must be > 0");
      }
    }
    for (const char* required : {"resistance_at_20C", "inductance"}) {
      if (!p.has_parameter(required)) throw CatalogueError(p.location() + ": coil '" + p.name + "' needs '" + required + "'");
    }
  }
  for (const auto& [k, e] : p.ratings) {
    if (!(e.value > 0.0)) {
      throw CatalogueError(e.file + ":" + std::to_string(e.line) + ":" + std::to_string(e.column) + ": part '" +
                           p.name + "': rating '" + k + "' must be > 0");
    }
  }
}

}  // namespace

std::string PartRecord::location() const { return file + ":" + std::to_string(line) + ":" + std::to_string(column); }

double PartRecord::rating(const std::string& key) const {
  auto it = ratings.find(key);
  if (it == ratings.end()) throw std::invalid_argument("part '" + name + "' has no rating '" + key + "'");
  return it->second.value;
}

double PartRecord::parameter(const std::string& key) const {
  auto it = parameters.find(key);
  if (it == parameters.end()) throw std::invalid_argument("part '" + name + "' has no parameter '" + key + "'");
  return it->second.value;
}

const std::vector<std::string>& families() {
  static const std::vector<std::string> f{"diode", "zener", "tvs", "npn", "pnp", "nmos", "pmos", "darlington_npn", "coil"};
  return f;
}

const std::vector<std::pair<std::string, std::string>>& rating_keys(const std::string& family) {
  static const std::vector<std::pair<std::string, std::string>> diode{
      {"repetitive_reverse_voltage", "V"}, {"average_forward_current", "A"}, {"peak_forward_current", "A"},
      {"power", "W"}, {"peak_pulse_power", "W"}, {"pulse_energy", "J"}, {"maximum_clamping_voltage", "V"},
      {"breakdown_voltage_tolerance", "1"}};
  static const std::vector<std::pair<std::string, std::string>> bjt{
      {"collector_emitter_voltage", "V"}, {"collector_current", "A"}, {"peak_collector_current", "A"},
      {"power", "W"}, {"minimum_forward_beta", "1"}};
  static const std::vector<std::pair<std::string, std::string>> mos{
      {"drain_source_voltage", "V"}, {"drain_current", "A"}, {"peak_drain_current", "A"}, {"power", "W"},
      {"avalanche_energy", "J"}, {"gate_source_voltage", "V"}, {"minimum_threshold_voltage", "V"},
      {"maximum_threshold_voltage", "V"}};
  static const std::vector<std::pair<std::string, std::string>> none{};
  if (family == "diode" || family == "zener" || family == "tvs") return diode;
  if (family == "npn" || family == "pnp" || family == "darlington_npn") return bjt;
  if (family == "nmos" || family == "pmos") return mos;
  return none;
}

void Catalogue::load_file(const std::string& path) {
  toml::table doc;
  try {
    doc = toml::parse_file(path);
  } catch (const toml::parse_error& e) {
    throw CatalogueError(path + ":" + std::to_string(e.source().begin.line) + ":" +
                         std::to_string(e.source().begin.column) + ": " + std::string(e.description()));
  }
  reject_unknown_keys(path, doc, {"defaults", "part"}, "file");
  const toml::table* defaults = nullptr;
  if (const auto* d = doc.get("defaults")) {
    defaults = d->as_table();
    if (!defaults) fail(path, *d, "[defaults] must be a table");
    reject_unknown_keys(path, *defaults, {"family", "parameters", "ratings"}, "[defaults]");
  }
  const auto* parts = doc.get("part");
  if (!parts) throw CatalogueError(path + ":1:1: no [[part]] entries");
  const auto* arr = parts->as_array();
  if (!arr) fail(path, *parts, "'part' must be an array of tables ([[part]])");
  for (const auto& node : *arr) {
    const auto* t = node.as_table();
    if (!t) fail(path, node, "each [[part]] must be a table");
    reject_unknown_keys(path, *t, {"name", "family", "description", "parameters", "ratings"}, "[[part]]");
    PartRecord rec;
    rec.file = path;
    rec.line = static_cast<int>(node.source().begin.line);
    rec.column = static_cast<int>(node.source().begin.column);
    const auto* name = t->get("name");
    if (!name) fail(path, node, "[[part]] has no name");
    rec.name = string_of(path, *name, "name");
    if (rec.name.empty() || rec.name.find_first_not_of("abcdefghijklmnopqrstuvwxyz0123456789_") != std::string::npos) {
      fail(path, *name, "part name '" + rec.name + "' must use only a-z, 0-9 and _");
    }
    const toml::node* fam = t->get("family");
    if (!fam && defaults) fam = defaults->get("family");
    if (!fam) fail(path, node, "part '" + rec.name + "' has no family");
    rec.family = string_of(path, *fam, "family");
    if (std::find(families().begin(), families().end(), rec.family) == families().end()) {
      fail(path, *fam, "part '" + rec.name + "': unknown family '" + rec.family + "'" + engine::did_you_mean(rec.family, families()));
    }
    if (const auto* d = t->get("description")) rec.description = string_of(path, *d, "description");
    const std::string ctx = "part '" + rec.name + "'";
    const auto pkeys = parameter_keys(rec.family);
    if (defaults) {
      if (const auto* dp = defaults->get("parameters")) read_entries(path, *dp, rec.parameters, pkeys, ctx + " (defaults)");
      if (const auto* dr = defaults->get("ratings")) read_entries(path, *dr, rec.ratings, rating_keys(rec.family), ctx + " (defaults)");
    }
    if (const auto* pp = t->get("parameters")) read_entries(path, *pp, rec.parameters, pkeys, ctx + " parameters");
    if (const auto* rr = t->get("ratings")) read_entries(path, *rr, rec.ratings, rating_keys(rec.family), ctx + " ratings");
    auto existing = parts_.find(rec.name);
    if (existing != parts_.end()) {
      fail(path, *name, "part '" + rec.name + "' is already defined at " + existing->second.location());
    }
    try {
      validate(rec);
    } catch (const CatalogueError&) {
      throw;
    } catch (const std::invalid_argument& e) {
      // Point at the entry the message is about (its key starts the field name), else the part.
      const std::string msg = e.what();
      std::string at = rec.location();
      std::size_t best = 0;
      for (const auto& [key, entry] : rec.parameters) {
        if (key.size() > best && msg.find(": " + key) != std::string::npos) {
          best = key.size();
          at = entry.file + ":" + std::to_string(entry.line) + ":" + std::to_string(entry.column);
        }
      }
      throw CatalogueError(at + ": " + msg);
    }
    parts_.emplace(rec.name, std::move(rec));
  }
}

void Catalogue::load_directory(const std::string& models_dir) {
  namespace fs = std::filesystem;
  if (!fs::is_directory(models_dir)) throw CatalogueError(models_dir + ": models directory not found");
  std::vector<std::string> files;
  for (const char* sub : {"parts", "coils"}) {
    const fs::path dir = fs::path(models_dir) / sub;
    if (!fs::is_directory(dir)) continue;
    std::error_code ec;
    fs::recursive_directory_iterator it(dir, ec), end;
    if (ec) throw CatalogueError(dir.string() + ": cannot read the models directory: " + ec.message());
    for (; it != end; it.increment(ec)) {
      if (ec) throw CatalogueError(dir.string() + ": cannot read the models directory: " + ec.message());
      // A broken or looping symbolic link is named, not an internal error.
      const bool regular = it->is_regular_file(ec);
      if (ec) throw CatalogueError(it->path().string() + ": cannot read this models file: " + ec.message());
      if (regular && it->path().extension() == ".toml") files.push_back(it->path().string());
    }
    if (ec) throw CatalogueError(dir.string() + ": cannot read the models directory: " + ec.message());
  }
  std::sort(files.begin(), files.end());  // deterministic order (and duplicate reports)
  for (const auto& f : files) load_file(f);
}

const PartRecord& Catalogue::part(const std::string& name) const {
  auto it = parts_.find(name);
  if (it != parts_.end()) return it->second;
  throw std::invalid_argument("no part named '" + name + "' in the catalogue" + engine::did_you_mean(name, names()));
}

std::vector<std::string> Catalogue::names(const std::string& family) const {
  std::vector<std::string> out;
  for (const auto& [n, p] : parts_) {
    if (family.empty() || p.family == family) out.push_back(n);
  }
  return out;
}

namespace {
std::string& found_models_directory() {
  static std::string dir;
  return dir;
}
}  // namespace

void set_installed_models_directory(const std::string& path) { found_models_directory() = path; }

std::string default_models_directory() {
  if (const char* env = std::getenv("COILKICK_MODELS")) return env;
  if (!found_models_directory().empty()) return found_models_directory();
  namespace fs = std::filesystem;
  if (std::string(COILKICK_SOURCE_MODELS_DIR).size() && fs::is_directory(COILKICK_SOURCE_MODELS_DIR)) {
    return COILKICK_SOURCE_MODELS_DIR;
  }
  return COILKICK_INSTALLED_MODELS_DIR;
}

Catalogue load_default_catalogue() {
  Catalogue c;
  c.load_directory(default_models_directory());
  return c;
}

}  // namespace coilkick::catalogue
