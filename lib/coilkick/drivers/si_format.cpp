#include "coilkick/drivers/si_format.hpp"

#include <cmath>
#include <sstream>

namespace coilkick::drivers {

std::string format_si(double value, const std::string& unit, int significant_digits) {
  if (std::isnan(value)) return "-";
  if (std::isinf(value)) return value > 0 ? "inf " + unit : "-inf " + unit;
  static const char* prefixes[] = {"f", "p", "n", "u", "m", "", "k", "M", "G"};
  int exponent = 0;
  if (value != 0.0) exponent = static_cast<int>(std::floor(std::log10(std::abs(value)) / 3.0));
  exponent = std::max(-5, std::min(3, exponent));
  const double scaled = value / std::pow(10.0, 3 * exponent);
  std::ostringstream o;
  o.precision(significant_digits);
  o << scaled << " " << prefixes[exponent + 5] << unit;
  return o.str();
}

SiPair format_si_apart(double first, double second, const std::string& unit) {
  SiPair out;
  for (int digits = 3; digits <= 9; ++digits) {
    out = {format_si(first, unit, digits), format_si(second, unit, digits)};
    if (out.first != out.second) break;
  }
  return out;
}

}  // namespace coilkick::drivers
