// A coil at the far end of a cable against the same coil on the board, both measured in this run:
// the greenhouse valve's scenario (models/scenarios/greenhouse_valve_cable.toml: 0.35 H valve,
// diode + Zener clamp, logic-level N-MOSFET, 24 V rail with bulk capacitor) and the same with a
// plain diode, at 0, 10, 60 and 200 m of the default two-core cable, physical device models,
// default tolerances. Prints each run's time, steps and switch peak, the ratio of each cable
// run's time to the board run's with the same clamp, and the same per attempted step.
// Target (a benchmark, not a test; issue 18): a cable run at most 3× the time of the board run.
#include <chrono>
#include <cmath>
#include <cstdio>
#include <string>

#include "best_of.hpp"
#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/scenario/scenario.hpp"

using namespace coilkick;

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
    }
  }
  std::printf("cable_bench worst_ratio_to_board=%.1f target=3\n", worst_ratio);
}
