#pragma once
// Scenario files: a driver description in TOML, our own schema (documented in README,
// "Scenario files"). Every value is a number in SI base units or a string with unit and SI
// prefix; every problem is one message "file:line:column: key 'x.y': what is wrong"
// (ScenarioError).
#include <map>
#include <stdexcept>
#include <string>
#include <vector>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/scenario/quantity.hpp"

namespace coilkick::scenario {

class ScenarioError : public std::invalid_argument {
 public:
  explicit ScenarioError(const std::string& what) : std::invalid_argument(what) {}
};

struct SourceLocation {
  std::string file;
  int line = 0, column = 0;
  std::string str() const { return file + ":" + std::to_string(line) + ":" + std::to_string(column); }
};

// Spreads for the tolerance analysis ([tolerances] section, plus supply.tolerance).
struct ToleranceSpec {
  double supply = 0.0;            // relative ±, from supply.tolerance
  double coil_resistance = 0.0;   // relative ± of the 20 °C resistance
  double inductance = 0.0;        // relative ±
  double coil_temperature_min_C = 0.0, coil_temperature_max_C = 0.0;  // equal: no spread
  bool has_coil_temperature_range = false;
  double forward_beta_min = 0.0, forward_beta_max = 0.0;  // switch gain spread (BJT switches)
  bool has_forward_beta_range = false;
  double zener_voltage = -1.0;    // relative ±; < 0: from the part's breakdown_voltage_tolerance rating
  double tvs_voltage = -1.0;
  double threshold_voltage = 0.0; // MOSFET threshold, relative ±
};

struct Scenario {
  drivers::DriverSpec driver;
  ToleranceSpec tolerances;
  std::string file;
  std::map<std::string, SourceLocation> locations;  // where each key was set
};

Scenario read_scenario_file(const std::string& path, const catalogue::Catalogue& parts);
Scenario read_scenario_text(const std::string& text, const std::string& name, const catalogue::Catalogue& parts);

// Sets one numeric key (as in the file, e.g. "coil.inductance" or
// "clamp.zener.overrides.breakdown_voltage") to a value in SI base units; used by sweeps.
// Throws ScenarioError naming the key (with a suggestion) if it is not a numeric key.
void set_numeric_key(Scenario& s, const std::string& key, double value, const catalogue::Catalogue& parts);

// The value of a numeric key in the scenario (SI base units): the fits start from it. Throws
// ScenarioError for a key that is not numeric, or a part override the scenario does not set.
double numeric_key_value(const Scenario& s, const std::string& key);

// The clamp kinds whose parts and values the scenario gives (and `none`), for comparisons.
// A message of the driver checks in the file's words: "coil: inductance_H must be > 0" becomes
// "coil.inductance must be > 0" (fields with a scenario key; others are left as they are).
std::string with_file_keys(const std::string& message);

std::vector<drivers::ClampKind> applicable_clamp_kinds(const Scenario& s);

// The dimension of an extra part's numeric key ("extra_part.<name>.value": ohm, F or H by its
// element; ".series_resistance": ohm). Throws ScenarioError if there is no such field.
Dimension extra_part_dimension(const Scenario& s, const std::string& key);

// Every numeric key with its SI unit symbol, for --help and the README.
std::vector<std::pair<std::string, std::string>> numeric_keys();

}  // namespace coilkick::scenario
