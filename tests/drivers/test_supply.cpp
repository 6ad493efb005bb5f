// The supply behind a source impedance: the board's rail, its bulk capacitor and a
// reverse-polarity diode, against closed forms and the energy account.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "coilkick/drivers/switch_off.hpp"
#include "driver_fixture.hpp"

using namespace coilkick::drivers;

TEST_CASE("an ideal supply has no rail rise or dip") {
  DriverSpec s = test_support::relay_case(true);
  s.clamp.kind = ClampKind::diode;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  CHECK(r.metrics.get("supply_rail_peak_rise_V") == 0.0);
  CHECK(r.metrics.get("supply_rail_dip_V") == 0.0);
}

TEST_CASE("the rail recovers through the source resistance into the bulk capacitor as the first-order closed form") {
  // Nilsson & Riedel, Electric Circuits, 10th ed., ch. 7 (RC step response): once the switch has
  // turned off (tens of ns) the coil current circulates in the diode clamp and the rail charges
  // from V_s − R_s·I_on towards V_s with τ = R_s·C: v(t) = V_s − R_s·I_on·e^(−(t − t_sw)/τ).
  DriverSpec s = test_support::relay_case(true);
  s.clamp.kind = ClampKind::diode;
  s.supply.source_resistance_ohm = 5.0;
  s.supply.bulk_capacitance_F = 10e-6;  // τ = 50 µs, against a switch-off of ~20 ns
  const auto r = simulate_switch_off(s, test_support::catalogue());
  const auto& tr = *r.transient;
  const double t_off = s.drive.switch_off_at_s, tau = 5.0 * 10e-6;
  const double rail_on = tr.circuit().node_voltage_V("supply", 0.0, tr.states().row(0).data());
  const double i_on = (12.0 - rail_on) / 5.0;  // the supply current of the on-state: the coil's (the base is driven by the logic)
  CHECK(i_on == rel(r.metrics.get("coil_current_at_switch_off_A")).epsilon(1e-6));
  // Tolerance 2e-3 of the step: the switch takes ~20 ns (4e-4 of τ) to stop the current.
  for (double k : {1.0, 2.0, 4.0}) {
    const double t = t_off + k * tau;
    const Eigen::VectorXd x = tr.sample(t);
    const double rail = tr.circuit().node_voltage_V("supply", t, x.data());
    CAPTURE(k);
    CHECK(12.0 - rail == rel(5.0 * i_on * std::exp(-k)).epsilon(2e-3));
  }
  CHECK(r.metrics.get("supply_rail_peak_rise_V") == rel(5.0 * i_on).epsilon(2e-3));
  CHECK(r.metrics.get("energy_balance_error") < 1e-3);
}

TEST_CASE("energy account with source resistance, inductance, bulk capacitor, ESR and reverse-polarity diode") {
  // Tellegen's theorem (Desoer & Kuh, Basic Circuit Theory): the source's energy plus what the
  // coil, the bulk capacitor and the rest held at switch-off equals the heat of every part plus
  // what is still stored, with physical models and every clamp kind.
  for (const auto kind : {ClampKind::diode, ClampKind::diode_zener, ClampKind::tvs_across_switch, ClampKind::none}) {
    DriverSpec s = test_support::relay_case(false);
    s.clamp.kind = kind;
    s.supply.source_resistance_ohm = 0.5;
    s.supply.source_inductance_H = 2e-6;
    s.supply.bulk_capacitance_F = 100e-6;
    s.supply.bulk_capacitor_esr_ohm = 0.2;
    s.supply.reverse_polarity_diode_part = "rectifier_1a";
    CAPTURE(to_string(kind));
    const auto r = simulate_switch_off(s, test_support::catalogue());
    CHECK(r.metrics.get("energy_balance_error") < 1e-3);
    // The rail sits a diode drop and R·I below 12 V while the coil is on.
    const auto& tr = *r.transient;
    const double rail_on = tr.circuit().node_voltage_V("supply", 0.0, tr.states().row(0).data());
    CHECK(rail_on < 12.0 - 0.5);
    CHECK(rail_on > 12.0 - 1.2);
  }
}

TEST_CASE("supply parts: bad values name the field") {
  DriverSpec s = test_support::relay_case(true);
  s.supply.source_resistance_ohm = -1.0;
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("supply: source_resistance_ohm"),
                       std::invalid_argument);
  s = test_support::relay_case(true);
  s.supply.source_inductance_H = 1e-6;  // alone: nothing damps it
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("source_inductance_H needs"),
                       std::invalid_argument);
  s = test_support::relay_case(true);
  s.supply.reverse_polarity_diode_part = "zener_500mw_12v";
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("a diode is needed here"),
                       std::invalid_argument);
}
