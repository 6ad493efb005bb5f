// Drivers with the physical device models.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "coilkick/drivers/compare.hpp"
#include "driver_fixture.hpp"

using namespace coilkick;
using namespace coilkick::drivers;

TEST_CASE("on-state of a well-driven small-signal NPN switch (common practice) and forced gain by hand") {
  DriverSpec s = test_support::relay_case(false);
  s.clamp.kind = ClampKind::diode;
  const auto res = simulate_switch_off(s, test_support::catalogue());
  const double vce = res.metrics.get("switch_saturation_voltage_V");
  CHECK(vce > 0.05);  // saturated switch: about 0.1–0.3 V (common practice; tens of mA here)
  CHECK(vce < 0.3);
  const auto& t = *res.transient;
  const Eigen::VectorXd x0 = t.states().row(0).transpose();
  const double vbe = t.circuit().node_voltage_V("base", 0.0, x0.data());
  CHECK(vbe > 0.6);  // a conducting silicon junction: about 0.7 V (common practice)
  CHECK(vbe < 0.85);
  // Hand calculation (nodal analysis of the base loop and the coil loop):
  // I_B = (V_logic − V_BE)/(R_out + R_b), I_C = (V_s − V_CE)/R_coil.
  const double ib = (5.0 - vbe) / (50.0 + 1e3), ic = (12.0 - vce) / 400.0;
  CHECK(res.metrics.get("drive_current_A") == rel(ib).epsilon(1e-6));
  CHECK(res.metrics.get("coil_current_at_switch_off_A") == rel(ic).epsilon(1e-6));
  CHECK(res.metrics.get("forced_beta") == rel(ic / ib).epsilon(1e-5));
  CHECK(res.metrics.get("logic_pin_current_A") == rel(ib).epsilon(1e-6));
  CHECK(res.metrics.get("coil_voltage_on_V") == rel(12.0 - vce).epsilon(1e-9));
  // The switch turns off within microseconds: storage of the saturated transistor plus its fall.
  CHECK(res.metrics.get("switch_off_delay_s") > 10e-9);
  CHECK(res.metrics.get("switch_off_delay_s") < 5e-6);
}

TEST_CASE("energy balance below 0.1 % for every clamp kind with physical models") {
  DriverSpec s = test_support::relay_case(false);
  s.coil.winding_capacitance_F = 30e-12;
  s.switch_.board_stray_capacitance_F = 10e-12;
  s.clamp.snubber_resistance_ohm = 470.0;
  s.clamp.snubber_capacitance_F = 100e-9;
  s.analysis.relative_tolerance = 1e-6;
  const auto rows = compare_clamps(s, test_support::catalogue());
  CHECK(rows.size() == all_clamp_kinds().size());
  for (const auto& row : rows) {
    CAPTURE(to_string(row.kind));
    CAPTURE(row.error);
    REQUIRE(row.result.has_value());
    CHECK(row.result->metrics.get("energy_balance_error") < 1e-3);
  }
  // Ordered by release time, fastest first.
  for (std::size_t k = 1; k < rows.size(); ++k) {
    CHECK(rows[k - 1].result->metrics.get("release_time_s") <= rows[k].result->metrics.get("release_time_s"));
  }
}

TEST_CASE("common practice: a plain diode clamp holds the switch about one diode drop above the supply") {
  DriverSpec s = test_support::relay_case(false);
  s.clamp.kind = ClampKind::diode;
  const auto res = simulate_switch_off(s, test_support::catalogue());
  const double over = res.metrics.get("switch_voltage_peak_V") - 12.0;
  CHECK(over > 0.5);
  CHECK(over < 1.2);  // includes the forward-recovery overshoot of a slow rectifier
}

TEST_CASE("common practice: an unclamped coil drives the switch to many tens of volts, to its breakdown") {
  DriverSpec s = test_support::relay_case(false);
  s.clamp.kind = ClampKind::none;
  const auto res = simulate_switch_off(s, test_support::catalogue());
  CHECK(res.metrics.get("switch_voltage_peak_V") > 40.0);
  CHECK(res.metrics.get("switch_voltage_peak_V") < 80.0);  // the class's sustaining voltage ~60 V
  bool flagged = false;
  for (const auto& c : res.checks) flagged = flagged || (c.name == "switch_voltage" && c.status == CheckStatus::fail);
  CHECK(flagged);  // above the 40 V rating
}

TEST_CASE("rating checks: derating and pass/warn/fail grades") {
  DriverSpec s = test_support::relay_case(false);
  s.clamp.kind = ClampKind::diode_zener;
  s.clamp.zener_part = "zener_500mw_22v";  // 12 + 22.7 ≈ 34.7 V: above 80 % of 40 V, below 40 V
  const auto res = simulate_switch_off(s, test_support::catalogue());
  for (const auto& c : res.checks) {
    if (c.name != "switch_voltage") continue;
    CHECK(c.status == CheckStatus::warn);
    // The limit shown is the one tested (80 % of the 40 V rating); the rating is where it fails.
    CHECK(c.limit == doctest::Approx(32.0).epsilon(1e-12));
    CHECK(c.fail_limit == 40.0);
  }
  s.analysis.switch_voltage_derating = 0.95;
  const auto relaxed = simulate_switch_off(s, test_support::catalogue());
  for (const auto& c : relaxed.checks) {
    if (c.name == "switch_voltage") CHECK(c.status == CheckStatus::pass);
  }
}

TEST_CASE("IEC 60028 copper tempco: a hot coil draws less current and the release moves") {
  DriverSpec s = test_support::relay_case(false);
  s.clamp.kind = ClampKind::diode;
  s.coil.temperature_C = 85.0;
  const auto hot = simulate_switch_off(s, test_support::catalogue());
  // R(85 °C) = 400·(1 + 0.00393·65) = 502.2 ohm (IEC 60028 coefficient 0.00393 /K at 20 °C).
  const double r_hot = 400.0 * (1.0 + 0.00393 * 65.0);
  const double vce = hot.metrics.get("switch_saturation_voltage_V");
  CHECK(hot.metrics.get("coil_current_at_switch_off_A") == rel((12.0 - vce) / r_hot).epsilon(1e-6));
}

TEST_CASE("bad driver descriptions name the field") {
  DriverSpec s = test_support::relay_case(false);
  s.coil.inductance_H = -1.0;
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("coil: inductance_H"), std::invalid_argument);
  s = test_support::relay_case(false);
  s.switch_.part = "nmos_logic_level_60v";  // on an NPN topology
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("does not fit topology low_side_npn"),
                       std::invalid_argument);
  s = test_support::relay_case(false);
  s.clamp.kind = ClampKind::diode_zener;
  s.clamp.zener_part = "zener_500mw_12";
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("clamp.zener_part: no part named"),
                       std::invalid_argument);
  s = test_support::relay_case(false);
  s.analysis.stop_time_s = 5e-5;  // before the switch-off
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("stop_time_s"), std::invalid_argument);
}
