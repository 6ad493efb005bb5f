// A coil at the far end of a cable against the same coil on the board, both measured in this run:
// the greenhouse valve's scenario (models/scenarios/greenhouse_valve_cable.toml: 0.35 H valve,
// diode + Zener clamp, logic-level N-MOSFET, 24 V rail with bulk capacitor) and the same with a
// plain diode, at 0, 10, 60 and 200 m of the default two-core cable, physical device models,
// default tolerances. Prints each run's time, steps and switch peak, the ratio of each cable
// run's time to the board run's with the same clamp, and the same per attempted step.
// Target (a benchmark, not a test; issue 18): a cable run at most 3× the time of the board run.
// Beside each line, the model the target was written for: the same cable as a chain of ten
// lumped sections (series inductance and loop resistance, shunt capacitance; extra parts in the
// scenario, the coil at its far end as an inductor with its winding's resistance, capacitance
// and core loss). Printed: its ratio to the board run, and its time against the line's. The
// ladder has no high-frequency loss, so its peaks differ from the line's; only times are compared.
#include <chrono>
#include <cmath>
#include <cstdio>
#include <limits>
#include <string>

#include "best_of.hpp"
#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/copper.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/scenario/scenario.hpp"

using namespace coilkick;

namespace {

drivers::ExtraPart two_node_part(const std::string& name, drivers::ExtraElement element, const std::string& a, const std::string& b,
                                 double value, double series_resistance_ohm = 0.0) {
  drivers::ExtraPart e;
  e.name = name;
  e.element = element;
  e.nodes = {a, b};
  e.value = value;
  e.series_resistance_ohm = series_resistance_ohm;
  return e;
}

// The board driver s with its coil moved to the far end of `sections` lumped sections of its
// cable (s.cable's per-metre values over length_m): the loop's inductance and resistance in the
// supply-side core, the capacitance from each section's end to the return core (the switched
// end). The scenario's own coil stays as an open (10 MΩ, 1 µH): the topologies always have one.
// The run ends at stop_time_s (the line's run's end): the decayed-stop watches the open coil.
drivers::DriverSpec with_lumped_cable(drivers::DriverSpec s, double length_m, int sections, double stop_time_s) {
  const double section_m = length_m / sections;
  std::string from = "supply";
  for (int k = 1; k <= sections; ++k) {
    const std::string to = k == sections ? "far_end" : "section_" + std::to_string(k);
    s.extra_parts.push_back(two_node_part("cable_l" + std::to_string(k), drivers::ExtraElement::inductor, from, to,
                                          s.cable.inductance_per_metre_H_per_m * section_m,
                                          s.cable.loop_resistance_per_metre_ohm_per_m * section_m));
    s.extra_parts.push_back(two_node_part("cable_c" + std::to_string(k), drivers::ExtraElement::capacitor, to, "switch",
                                          s.cable.capacitance_per_metre_F_per_m * section_m));
    from = to;
  }
  const auto& c = s.coil;
  const double hot_ohm = drivers::copper_resistance_ohm(c.resistance_at_20C_ohm, c.temperature_C, c.copper_temperature_coefficient_per_K);
  s.extra_parts.push_back(two_node_part("far_coil", drivers::ExtraElement::inductor, "far_end", "switch", c.inductance_H, hot_ohm));
  if (c.winding_capacitance_F > 0.0)
    s.extra_parts.push_back(two_node_part("far_coil_winding", drivers::ExtraElement::capacitor, "far_end", "switch", c.winding_capacitance_F));
  if (std::isfinite(c.core_loss_resistance_ohm))
    s.extra_parts.push_back(two_node_part("far_coil_core", drivers::ExtraElement::resistor, "far_end", "switch", c.core_loss_resistance_ohm));
  s.coil.part.clear();
  s.coil.resistance_at_20C_ohm = 10e6;
  s.coil.inductance_H = 1e-6;
  s.coil.winding_capacitance_F = 0.0;
  s.coil.core_loss_resistance_ohm = std::numeric_limits<double>::infinity();
  s.coil.release_current_A = 1e-9;
  s.coil.release_voltage_V = std::numeric_limits<double>::quiet_NaN();
  s.cable.length_m = 0.0;
  s.analysis.stop_time_s = stop_time_s;
  s.analysis.stop_when_decayed = false;
  return s;
}

}  // namespace

int main() {
  const auto parts = catalogue::load_default_catalogue();
  const auto sc = scenario::read_scenario_file(catalogue::default_models_directory() + "/scenarios/greenhouse_valve_cable.toml", parts);
  double worst_ratio = 0.0;
  // The demo's diode + Zener, and the plain diode (the slow release keeps the line's waves, and
  // so the steps, going for ~10 ms).
  for (const auto kind : {drivers::ClampKind::diode_zener, drivers::ClampKind::diode}) {
    double board_s = 0.0, board_steps = 0.0;
    for (const double length_m : {0.0, 10.0, 60.0, 200.0}) {
      drivers::DriverSpec s = sc.driver;
      s.clamp.kind = kind;
      s.cable.length_m = length_m;
      drivers::SwitchOffResult r;
      const double t = best_of(kind == drivers::ClampKind::diode && length_m > 0.0 ? 1 : 3, [&] { r = drivers::simulate_switch_off(s, parts); });
      const double steps = static_cast<double>(r.transient->statistics().accepted_steps + r.transient->statistics().rejected_steps);
      if (length_m == 0.0) {
        board_s = t;
        board_steps = steps;
      }
      const double ratio = t / board_s;
      // The time per attempted step against the board's: the line's own cost, apart from the
      // steps its waves and ringing take.
      const double per_step = ratio * board_steps / steps;
      if (length_m > 0.0) worst_ratio = std::max(worst_ratio, ratio);
      std::printf("%-12s cable %5.0f m: %8.4f s  %7ld steps (%6ld rejected)  switch peak %.4f V  coil-end peak %.4f V  ratio to the board run %.1f (per step %.2f)\n",
                  drivers::to_string(kind).c_str(), length_m, t, r.transient->statistics().accepted_steps,
                  r.transient->statistics().rejected_steps, r.metrics.get("switch_voltage_peak_V"), r.metrics.get("coil_end_peak_V"), ratio, per_step);
      if (length_m > 0.0 && length_m <= 60.0) {
        const drivers::DriverSpec ladder = with_lumped_cable(s, length_m, 10, r.transient->times_s().back());
        drivers::SwitchOffResult rl;
        const double tl = best_of(1, [&] { rl = drivers::simulate_switch_off(ladder, parts); });
        std::printf("%-12s ten lumped sections of %3.0f m: %8.4f s  %7ld steps  ratio to the board run %.1f, %.1f× the line's time\n",
                    drivers::to_string(kind).c_str(), length_m, tl, rl.transient->statistics().accepted_steps, tl / board_s, tl / t);
      }
    }
  }
  std::printf("cable_bench worst_ratio_to_board=%.1f target=3\n", worst_ratio);
}
