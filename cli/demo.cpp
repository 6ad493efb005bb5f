// The bundled demo (until scenario files exist): a greenhouse controller's 24 V irrigation
// valve (demo coil "greenhouse_valve_24v") on a logic-level N-MOSFET driven from a 5 V logic
// output, every clamp kind compared side by side with the physical device models.
#include "demo.hpp"

#include <cmath>
#include <iomanip>
#include <sstream>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/compare.hpp"

namespace coilkick::cli {
namespace {
std::string num(double v, double scale, int precision) {
  if (std::isnan(v)) return "-";
  std::ostringstream o;
  o << std::fixed << std::setprecision(precision) << v * scale;
  return o.str();
}
}  // namespace

int run_demo(std::ostream& out) {
  using namespace coilkick::drivers;
  const auto parts = catalogue::load_default_catalogue();
  DriverSpec s;
  s.name = "greenhouse irrigation valve";
  s.supply.voltage_V = 24.0;
  s.drive.high_level_V = 5.0;
  s.drive.output_resistance_ohm = 50.0;
  s.drive.switch_off_at_s = 1e-3;
  s.drive.period_s = 2.0;  // the valve cycles at most every 2 s
  s.switch_.topology = Topology::low_side_nmos;
  s.switch_.part = "nmos_logic_level_60v";
  s.switch_.base_resistor_ohm = 100.0;
  s.coil = coil_spec_from_part(parts.part("greenhouse_valve_24v"));
  s.coil.temperature_C = 60.0;  // warm coil in a greenhouse
  s.clamp.diode_part = "rectifier_1a";
  s.clamp.zener_part = "zener_500mw_18v";          // 24 + 18 + 0.7 V stays below 48 V
  s.clamp.active_clamp_zener_part = "zener_500mw_39v";  // clamps the drain near 42 V
  s.clamp.tvs_part = "tvs_400w_33v";
  s.clamp.resistor_ohm = 47.0;
  s.clamp.snubber_resistance_ohm = 100.0;
  s.clamp.snubber_capacitance_F = 10e-6;
  const auto rows = compare_clamps(s, parts);

  out << "coilkick demo — " << s.name << " (demo data)\n"
      << "24 V supply, coil " << s.coil.resistance_at_20C_ohm << " ohm at 20 C (" << s.coil.temperature_C
      << " C in use), " << s.coil.inductance_H << " H; low-side nmos_logic_level_60v, 5 V logic, physical models\n\n";
  out << std::left << std::setw(18) << "clamp" << std::setw(32) << "parts" << std::right << std::setw(9) << "peak V"
      << std::setw(8) << "margin" << std::setw(12) << "release ms" << std::setw(10) << "clamp mJ" << std::setw(10)
      << "switch mJ" << "  checks\n";
  for (const auto& r : rows) {
    out << std::left << std::setw(18) << to_string(r.kind) << std::setw(32) << r.parts << std::right;
    if (!r.result) {
      out << "  " << r.error << "\n";
      continue;
    }
    const auto& m = r.result->metrics;
    std::string failed;
    for (const auto& c : r.result->checks) {
      if (c.status != CheckStatus::pass) failed += (failed.empty() ? "" : ", ") + c.name + " " + to_string(c.status);
    }
    out << std::setw(9) << num(m.get("switch_voltage_peak_V"), 1, 1) << std::setw(8)
        << num(m.get("switch_voltage_margin"), 100, 0) + "%" << std::setw(12) << num(m.get("release_time_s"), 1e3, 3)
        << std::setw(10) << num(m.get("clamp_energy_J"), 1e3, 2) << std::setw(10) << num(m.get("switch_energy_J"), 1e3, 2)
        << "  " << (failed.empty() ? "all pass" : failed) << "\n";
  }
  out << "\nmargin: peak switch voltage over the switch's 60 V rating (keep below 80 %, common practice).\n"
         "release: from the start of the switch-off edge until the coil current falls below the\n"
         "release current (release voltage over the warm coil's resistance).\n\n"
         "Caution: a simulation is not a qualification. Where relays or contactors switch mains loads,\n"
         "wiring and checks belong to qualified people under the local codes and licensed practice.\n";
  return 0;
}

}  // namespace coilkick::cli
