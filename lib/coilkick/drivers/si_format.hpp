#pragma once
// Numbers with SI prefixes for reports: format_si(4700, "ohm") = "4.7 kohm", (1e-5, "F") = "10 uF".
#include <string>

namespace coilkick::drivers {
std::string format_si(double value, const std::string& unit, int significant_digits = 3);
// Two values with the fewest significant digits (3 to 9) that tell them apart, for messages that
// set a value against a limit ("reaches 917.87 mA, not 917.92 mA").
struct SiPair {
  std::string first, second;
};
SiPair format_si_apart(double first, double second, const std::string& unit);
}  // namespace coilkick::drivers
