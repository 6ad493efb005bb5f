#include "coilkick/analyses/eseries.hpp"

#include <cmath>
#include <stdexcept>

namespace coilkick::analyses {

const std::vector<double>& e_series(int n) {
  // IEC 60063: E24 and its subsets E12 (every second) and E6 (every fourth).
  static const std::vector<double> e24{1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
                                       3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1};
  static const std::vector<double> e12{1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2};
  static const std::vector<double> e6{1.0, 1.5, 2.2, 3.3, 4.7, 6.8};
  if (n == 24) return e24;
  if (n == 12) return e12;
  if (n == 6) return e6;
  throw std::invalid_argument("E-series: only E6, E12 and E24 are available, not E" + std::to_string(n));
}

std::vector<double> e_series_values(int n, double low, double high) {
  if (!(low > 0.0) || !(high >= low)) throw std::invalid_argument("E-series range must satisfy 0 < low <= high");
  std::vector<double> out;
  const auto& m = e_series(n);
  for (int decade = static_cast<int>(std::floor(std::log10(low))) - 1; decade <= static_cast<int>(std::ceil(std::log10(high))); ++decade) {
    for (double x : m) {
      const double v = x * std::pow(10.0, decade);
      if (v >= low * (1 - 1e-9) && v <= high * (1 + 1e-9)) out.push_back(v);
    }
  }
  return out;
}

}  // namespace coilkick::analyses
