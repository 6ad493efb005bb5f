#pragma once
// Numbers with SI prefixes for reports: format_si(4700, "ohm") = "4.7 kohm", (1e-5, "F") = "10 uF".
#include <string>

namespace coilkick::drivers {
std::string format_si(double value, const std::string& unit, int significant_digits = 3);
}  // namespace coilkick::drivers
