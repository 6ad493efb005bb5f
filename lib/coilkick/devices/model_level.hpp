#pragma once
// The two levels every device family exists at.
//   pwl      — straight-line segments (fast, ideal-part closed forms apply);
//   physical — Shockley / Ebers–Moll / square-law equations with charges and temperature.
#include <string>

namespace coilkick::devices {

enum class ModelLevel { pwl, physical };
enum class Polarity { n, p };  // NPN/NMOS or PNP/PMOS

// "physical" | "piecewise_linear" (or its short form "pwl"), else invalid_argument.
ModelLevel parse_model_level(const std::string& word);
std::string to_string(ModelLevel level);

}  // namespace coilkick::devices
