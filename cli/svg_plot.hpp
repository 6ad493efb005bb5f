#pragma once
// Charts as SVG. The clamp comparison: switch voltage (top) and coil current (bottom) against the
// time after switch-off, one line per clamp, with the switch rating and its derated limit. The
// fit overlay: a capture's coil current and the fitted model's (top), their difference in units
// of the capture's noise with the ±3σ band (bottom).
#include <string>
#include <vector>

#include "coilkick/drivers/compare.hpp"

namespace coilkick::cli {

std::string comparison_svg(const std::vector<drivers::ComparisonRow>& rows, const std::string& title);
// edge_words: the edge time zero is at, e.g. "rising edge of the switch voltage".
std::string overlay_svg(const std::vector<double>& time_s, const std::vector<double>& measured_A, const std::vector<double>& model_A,
                        double noise_A, const std::string& title, const std::string& edge_words);

}  // namespace coilkick::cli
