#include "coilkick/drivers/compare.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <sstream>

#include "coilkick/drivers/si_format.hpp"
#include "coilkick/engine/errors.hpp"

namespace coilkick::drivers {

std::string describe_clamp_parts(const ClampSpec& c) {
  std::ostringstream o;
  o.precision(3);
  switch (c.kind) {
    case ClampKind::none: o << "-"; break;
    case ClampKind::diode: o << c.diode_part; break;
    case ClampKind::diode_zener: o << c.diode_part << " + " << c.zener_part; break;
    case ClampKind::diode_resistor: o << c.diode_part << " + " << format_si(c.resistor_ohm, "ohm"); break;
    case ClampKind::rc_across_coil:
    case ClampKind::rc_across_switch:
      o << format_si(c.snubber_resistance_ohm, "ohm") << " + " << format_si(c.snubber_capacitance_F, "F");
      break;
    case ClampKind::tvs_across_switch: o << c.tvs_part; break;
    case ClampKind::active_clamp: o << c.active_clamp_zener_part << " + " << c.diode_part; break;
    case ClampKind::common_pin: o << c.diode_part << " to the common pin"; break;
  }
  if (c.add_rc_snubber_across_coil && c.kind != ClampKind::rc_across_coil) {
    o << " + RC " << format_si(c.snubber_resistance_ohm, "ohm") << "/" << format_si(c.snubber_capacitance_F, "F");
  }
  return o.str();
}

std::vector<ComparisonRow> compare_clamps(const DriverSpec& spec, const catalogue::Catalogue& parts,
                                          const std::vector<ClampKind>& kinds) {
  std::vector<ComparisonRow> rows;
  for (const auto kind : kinds) {
    DriverSpec s = spec;
    s.clamp.kind = kind;
    for (auto& ch : s.channels) ch.clamp.kind = kind;  // a board: every channel the same clamp
    ComparisonRow row;
    row.kind = kind;
    row.parts = describe_clamp_parts(s.clamp);
    try {
      row.result = simulate_switch_off(s, parts);
    } catch (const engine::SimulationError& e) {
      row.error = std::string("simulation failed: ") + e.what();
    }
    rows.push_back(std::move(row));
  }
  auto key = [](const ComparisonRow& r) {
    if (!r.result) return std::numeric_limits<double>::infinity();
    // A clamp that cannot hold the coil on PWM (it drops out in hold) goes last.
    if (r.result->metrics.get("hold_current_margin") < 1.0) return std::numeric_limits<double>::infinity();
    double t = r.result->metrics.get("release_time_s");
    if (std::isnan(t)) t = r.result->metrics.get("current_decay_time_10pct_s");
    return std::isnan(t) ? std::numeric_limits<double>::infinity() : t;  // keeps the order strict
  };
  std::stable_sort(rows.begin(), rows.end(), [&](const auto& a, const auto& b) { return key(a) < key(b); });
  return rows;
}

}  // namespace coilkick::drivers
