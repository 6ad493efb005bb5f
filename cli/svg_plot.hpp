#pragma once
// The clamp-comparison chart as SVG: switch voltage (top) and coil current (bottom) against the
// time after switch-off, one line per clamp, with the switch rating and its derated limit.
#include <string>
#include <vector>

#include "coilkick/drivers/compare.hpp"

namespace coilkick::cli {

std::string comparison_svg(const std::vector<drivers::ComparisonRow>& rows, const std::string& title);

}  // namespace coilkick::cli
