// A run started from another driver's DC points (a tolerance analysis's nominal points,
// drivers/operating_point_start.hpp) finds its own: the on-current by Ohm's law, and the same
// switch-off as from the cold guess; starts of another shape are not used.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include "coilkick/drivers/switch_off.hpp"
#include "driver_fixture.hpp"

using namespace coilkick::drivers;

TEST_CASE("a sample started from the nominal DC points: its own on-current (Ohm's law), the same switch-off as a cold start") {
  for (const bool ideal : {true, false}) {
    CAPTURE(ideal);
    DriverSpec nominal = test_support::relay_case(ideal);
    nominal.clamp.kind = ClampKind::diode_zener;
    const OperatingPoints starts = solve_operating_points(nominal, test_support::catalogue());
    DriverSpec sample = nominal;
    sample.coil.resistance_at_20C_ohm = 440.0;  // +10 %: 2.7 mA less coil current
    sample.coil.inductance_H = 0.55;
    // The start is taken (a circuit of the same shape, no armature model) ...
    const BuiltDriver b = build_driver_network(sample, test_support::catalogue());
    const coilkick::engine::Circuit c(b.network);
    REQUIRE(solve_from_start(b, c, &starts.on, 0.0).has_value());
    // ... and the run from it finds the sample's own point.
    const auto warm = simulate_switch_off(sample, test_support::catalogue(), &starts);
    const auto cold = simulate_switch_off(sample, test_support::catalogue());
    const double i0 = warm.metrics.get("coil_current_at_switch_off_A");
    // On-state: I = (V_s − V_switch)/R around the loop (Ohm's law); 1e-6: the DC solution's
    // tolerance against the reading of V_switch.
    CHECK(i0 == rel((12.0 - warm.metrics.get("switch_saturation_voltage_V")) / 440.0).epsilon(1e-6));
    // Both Newton solutions of the same equations, each to the operating point's tolerance (1e-10).
    CHECK(i0 == rel(cold.metrics.get("coil_current_at_switch_off_A")).epsilon(1e-9));
    // The two transients start within that of each other; 1e-6: the run's own relative tolerance
    // is 1e-8 here, and a step sequence that differs moves an event by up to a few of it.
    CHECK(warm.metrics.get("release_time_s") == rel(cold.metrics.get("release_time_s")).epsilon(1e-6));
    CHECK(warm.metrics.get("switch_voltage_peak_V") == rel(cold.metrics.get("switch_voltage_peak_V")).epsilon(1e-6));
    CHECK(warm.metrics.get("clamp_energy_J") == rel(cold.metrics.get("clamp_energy_J")).epsilon(1e-6));
  }
}

TEST_CASE("starts of a circuit of another shape are not used: the run is the cold start's, to the bit") {
  DriverSpec nominal = test_support::relay_case(true);
  nominal.clamp.kind = ClampKind::diode_zener;
  nominal.cable.length_m = 20.0;  // a line: more states than the board alone
  const OperatingPoints starts = solve_operating_points(nominal, test_support::catalogue());
  DriverSpec board = nominal;
  board.cable.length_m = 0.0;
  const BuiltDriver b = build_driver_network(board, test_support::catalogue());
  const coilkick::engine::Circuit c(b.network);
  CHECK_FALSE(solve_from_start(b, c, &starts.on, 0.0).has_value());
  const auto warm = simulate_switch_off(board, test_support::catalogue(), &starts);
  const auto cold = simulate_switch_off(board, test_support::catalogue());
  CHECK(warm.metrics.get("coil_current_at_switch_off_A") == cold.metrics.get("coil_current_at_switch_off_A"));
  CHECK(warm.metrics.get("release_time_s") == cold.metrics.get("release_time_s"));
}
