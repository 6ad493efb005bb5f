#pragma once
// Clamp comparison: the same driver with every clamp kind (parts and values from the driver's
// clamp description), ordered by release time, fastest first; runs that fail are kept with
// their error message and listed last.
#include <optional>
#include <string>
#include <vector>

#include "coilkick/drivers/switch_off.hpp"

namespace coilkick::drivers {

struct ComparisonRow {
  ClampKind kind = ClampKind::diode;
  std::string parts;  // e.g. "rectifier_1a + zener_500mw_18v", "220 ohm + 470 nF"
  std::optional<SwitchOffResult> result;
  std::string error;  // set when the run failed
};

std::vector<ComparisonRow> compare_clamps(const DriverSpec& spec, const catalogue::Catalogue& parts,
                                          const std::vector<ClampKind>& kinds = all_clamp_kinds());

// A short description of the clamp's parts for reports.
std::string describe_clamp_parts(const ClampSpec& clamp);

}  // namespace coilkick::drivers
