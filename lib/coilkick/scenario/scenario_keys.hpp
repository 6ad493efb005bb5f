#pragma once
// The scenario's keys, one table per kind (numeric with dimension, text, boolean, part-override
// tables). A new key is one row here plus a line in the README's key table; the reader, sweeps
// (set_numeric_key) and the messages (spec_messages) use the same rows.
#include <functional>
#include <string>
#include <utility>
#include <vector>

#include "coilkick/scenario/quantity.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::scenario {

struct NumericKey {
  const char* key;
  Dimension dim;
  const char* unit;
  std::function<double&(Scenario&)> ref;
  const char* spec_field;  // how check_driver_spec names it, "" if it does not
};
const std::vector<NumericKey>& numeric_table();

struct TextKey {
  const char* key;
  std::function<void(Scenario&, const std::string&)> set;
};
const std::vector<TextKey>& text_table();

const std::vector<std::pair<const char*, std::function<bool&(Scenario&)>>>& bool_table();

// Override tables: key prefix -> (overrides map, part whose family decides the keys).
struct OverrideTable {
  const char* key;
  std::function<drivers::Overrides&(Scenario&)> map;
  std::function<std::string(const Scenario&)> part;
};
const std::vector<OverrideTable>& override_tables();

std::vector<std::string> all_key_names();

// An extra part's numeric field ("extra_part.<name>.value" or ".series_resistance"), or null.
double* extra_part_field(Scenario& s, const std::string& key);

}  // namespace coilkick::scenario
