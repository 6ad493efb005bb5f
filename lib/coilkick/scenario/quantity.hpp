#pragma once
// Physical quantities in scenario files: a plain number (SI base unit) or a string of a number,
// optional SI prefix and unit, e.g. "4.7 kohm", "4.7 kΩ", "550 mH", "24 V", "20 ns", "30 pF",
// "60 degC" / "60 °C", and per metre "26 mohm/m", "0.55 uH/m", "80 pF/m". The unit must be the dimension the key expects: a capacitance given in
// henry is refused. Prefixes: f p n u µ m k M G (and "" ).
#include <string>

namespace coilkick::scenario {

enum class Dimension {
  voltage, current, resistance, capacitance, inductance, time, frequency, temperature, ratio, dimensionless, length,
  resistance_per_length, inductance_per_length, capacitance_per_length  // a cable's per-metre values
};

// Unit symbol(s) accepted for a dimension, for messages: "V", "A", "ohm or Ω" ...
std::string unit_words(Dimension d);

// Parses `text` for dimension d; throws std::invalid_argument with a sentence on what is wrong
// (the caller adds key and file:line:column).
double parse_quantity(const std::string& text, Dimension d);

// Dimension of a catalogue unit string ("A", "V", "ohm", "F", "s", "1", "1/K" ...), for
// overrides of part parameters; returns dimensionless for units without a dimension here.
Dimension dimension_of_unit(const std::string& unit);

}  // namespace coilkick::scenario
