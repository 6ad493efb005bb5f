#include "coilkick/scenario/quantity.hpp"

#include <cctype>
#include <cmath>
#include <cstdlib>
#include <stdexcept>
#include <vector>

namespace coilkick::scenario {
namespace {

struct UnitSpelling {
  Dimension dim;
  std::vector<std::string> spellings;
};

const std::vector<UnitSpelling>& units() {
  static const std::vector<UnitSpelling> u{
      {Dimension::voltage, {"V"}},
      {Dimension::current, {"A"}},
      {Dimension::resistance, {"ohm", "Ohm", "\xCE\xA9" /* Ω U+03A9 */, "\xE2\x84\xA6" /* Ω U+2126 */}},
      {Dimension::capacitance, {"F"}},
      {Dimension::inductance, {"H"}},
      {Dimension::time, {"s"}},
      {Dimension::frequency, {"Hz"}},
      {Dimension::temperature, {"degC", "\xC2\xB0" "C" /* °C */}},
      {Dimension::ratio, {"%"}},
      {Dimension::dimensionless, {}},
      {Dimension::length, {"m"}},  // after "ohm", which also ends in m
      {Dimension::resistance_per_length, {"ohm/m", "\xCE\xA9/m", "\xE2\x84\xA6/m"}},
      {Dimension::inductance_per_length, {"H/m"}},
      {Dimension::capacitance_per_length, {"F/m"}},
  };
  return u;
}

std::string trim(const std::string& s) {
  std::size_t a = 0, b = s.size();
  while (a < b && std::isspace(static_cast<unsigned char>(s[a]))) ++a;
  while (b > a && std::isspace(static_cast<unsigned char>(s[b - 1]))) --b;
  return s.substr(a, b - a);
}

bool ends_with(const std::string& s, const std::string& suffix) {
  return s.size() >= suffix.size() && s.compare(s.size() - suffix.size(), suffix.size(), suffix) == 0;
}

double prefix_factor(const std::string& p, bool& ok) {
  ok = true;
  if (p.empty()) return 1.0;
  if (p == "f") return 1e-15;
  if (p == "p") return 1e-12;
  if (p == "n") return 1e-9;
  if (p == "u" || p == "\xC2\xB5" || p == "\xCE\xBC") return 1e-6;  // u, µ (micro sign), μ (Greek mu)
  if (p == "m") return 1e-3;
  if (p == "k") return 1e3;
  if (p == "M") return 1e6;
  if (p == "G") return 1e9;
  ok = false;
  return 0.0;
}

const char* dimension_name(Dimension d) {
  switch (d) {
    case Dimension::voltage: return "a voltage";
    case Dimension::current: return "a current";
    case Dimension::resistance: return "a resistance";
    case Dimension::capacitance: return "a capacitance";
    case Dimension::inductance: return "an inductance";
    case Dimension::time: return "a time";
    case Dimension::frequency: return "a frequency";
    case Dimension::temperature: return "a temperature";
    case Dimension::ratio: return "a ratio";
    case Dimension::dimensionless: return "a plain number";
    case Dimension::length: return "a length";
    case Dimension::resistance_per_length: return "a resistance per metre";
    case Dimension::inductance_per_length: return "an inductance per metre";
    case Dimension::capacitance_per_length: return "a capacitance per metre";
  }
  return "?";
}

}  // namespace

std::string unit_words(Dimension d) {
  for (const auto& u : units()) {
    if (u.dim != d) continue;
    if (u.spellings.empty()) return "no unit";
    std::string s;
    for (std::size_t k = 0; k < u.spellings.size(); ++k) s += (k ? " or " : "") + u.spellings[k];
    return s;
  }
  return "?";
}

Dimension dimension_of_unit(const std::string& unit) {
  if (unit == "V") return Dimension::voltage;
  if (unit == "A") return Dimension::current;
  if (unit == "ohm") return Dimension::resistance;
  if (unit == "F") return Dimension::capacitance;
  if (unit == "H") return Dimension::inductance;
  if (unit == "s") return Dimension::time;
  if (unit == "degC") return Dimension::temperature;
  if (unit == "m") return Dimension::length;
  return Dimension::dimensionless;
}

double parse_quantity(const std::string& text, Dimension d) {
  const std::string s = trim(text);
  if (s.empty()) throw std::invalid_argument("is empty; expected " + std::string(dimension_name(d)));
  // The number: strtod reads the longest valid prefix.
  const char* begin = s.c_str();
  char* end = nullptr;
  const double number = std::strtod(begin, &end);
  if (end == begin) throw std::invalid_argument("\"" + s + "\" does not start with a number");
  const std::string lowered_number(begin, static_cast<std::size_t>(end - begin));
  for (const char* bad : {"nan", "NAN", "NaN", "inf", "INF", "Inf", "infinity"}) {
    if (lowered_number.find(bad) != std::string::npos) throw std::invalid_argument("\"" + s + "\" is not a finite number");
  }
  if (!std::isfinite(number)) throw std::invalid_argument("\"" + s + "\" is not a finite number");
  const std::string rest = trim(std::string(end));
  if (d == Dimension::dimensionless) {
    if (!rest.empty()) throw std::invalid_argument("\"" + s + "\" has a unit ('" + rest + "') but a plain number is expected");
    return number;
  }
  if (rest.empty()) return number;  // SI base unit implied
  for (const auto& u : units()) {
    for (const auto& spelling : u.spellings) {
      if (!ends_with(rest, spelling)) continue;
      const std::string prefix = trim(rest.substr(0, rest.size() - spelling.size()));
      bool ok = false;
      const double f = prefix_factor(prefix, ok);
      if (!ok) continue;
      if (u.dim != d) {
        throw std::invalid_argument("\"" + s + "\" is " + dimension_name(u.dim) + ", but " + dimension_name(d) +
                                    " (" + unit_words(d) + ") is expected");
      }
      if (d == Dimension::ratio) return number * f / 100.0;
      if (d == Dimension::temperature && f != 1.0) throw std::invalid_argument("\"" + s + "\": a temperature takes no prefix");
      return number * f;
    }
  }
  throw std::invalid_argument("\"" + s + "\": unknown unit '" + rest + "'; expected " + dimension_name(d) + " in " + unit_words(d) +
                              " with an optional prefix f p n u m k M G");
}

}  // namespace coilkick::scenario
