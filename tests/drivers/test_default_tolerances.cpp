// The scenario's default integration tolerances against a run of the same driver at tight ones:
// the metrics a designer reads must not depend on the defaults (a convergence check of the
// integration; the 0.1 % this project holds its metrics to is the bar).
#include <doctest/doctest.h>

#include <cmath>
#include <utility>

#include "driver_fixture.hpp"

using namespace coilkick;

TEST_CASE("default tolerances: every clamp's metrics equal a tight run's") {
  using drivers::ClampKind;
  for (const auto& base : {test_support::relay_case(false), test_support::valve_case()}) {
    for (auto kind : {ClampKind::none, ClampKind::diode, ClampKind::diode_zener, ClampKind::diode_resistor, ClampKind::tvs_across_switch,
                      ClampKind::active_clamp, ClampKind::rc_across_coil}) {
      auto spec = base;
      spec.clamp.kind = kind;
      CAPTURE(spec.supply.voltage_V);
      CAPTURE(drivers::to_string(kind));
      const auto a = drivers::simulate_switch_off(test_support::at_default_tolerances(spec), test_support::catalogue()).metrics;
      const auto b = drivers::simulate_switch_off(test_support::at_tight_tolerances(spec, 1e-10), test_support::catalogue()).metrics;
      // Measured: ≤ 1.3e-6 of the tight run's value, except the clamp's peak current ≤ 2.5e-4
      // (a diode's current at the instant it takes over the coil, refined on the dense output:
      // 3.9e-4 with the earlier default of 1 µV). Bounds: ten times the first, the second within
      // the 0.1 % bar.
      const std::pair<const char*, double> checked[] = {{"switch_voltage_peak_V", 1e-5}, {"release_time_s", 1e-5},
                                                        {"current_decay_time_10pct_s", 1e-5}, {"clamp_energy_J", 1e-5},
                                                        {"coil_end_peak_V", 1e-5}, {"clamp_current_peak_A", 5e-4}};
      for (const auto& [m, bound] : checked) {
        CAPTURE(m);
        const double x = a.get(m), y = b.get(m);
        if (std::isnan(y)) {
          CHECK(std::isnan(x));
          continue;
        }
        CHECK(std::abs(x - y) <= bound * std::abs(y));
      }
    }
  }
}
