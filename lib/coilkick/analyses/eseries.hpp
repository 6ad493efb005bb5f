#pragma once
// Preferred-number series E6, E12 and E24 of IEC 60063 (values per decade, hard-coded: E24 is
// not round(10^(k/24)) for eight of its members).
#include <string>
#include <vector>

namespace coilkick::analyses {

const std::vector<double>& e_series(int n);  // n = 6, 12 or 24; mantissas 1.0 .. 9.1
// Every value of series n within [low, high] (inclusive, 1e-9 relative slack), ascending.
std::vector<double> e_series_values(int n, double low, double high);

}  // namespace coilkick::analyses
