// A run never ends in a number that looks fine and is not: the decay must have been seen, a
// driver that cannot block its supply says so, and each rating check counts only what its rating
// is about and shows the limit it tested. Each case is named after the symptom it guards.
#include <algorithm>
#include <doctest/doctest.h>

#include <cmath>
#include <string>

#include "../approx.hpp"
#include <fstream>
#include <sstream>

#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/scenario/scenario.hpp"
#include "driver_fixture.hpp"

using namespace coilkick::drivers;

namespace {

using test_support::valve_case;

const RatingCheck* find_check(const SwitchOffResult& r, const std::string& name) {
  for (const auto& c : r.checks) {
    if (c.name == name) return &c;
  }
  return nullptr;
}

}  // namespace

TEST_CASE("a coil whose L/R is far below the switch's turn-off time is followed until its current has fallen") {
  // 1 nH / 48 Ω is L/R = 21 ps against a gate that discharges over ~100 ns: the coil current can
  // only fall as fast as the switch turns off. The run must last that long.
  for (const double l : {1e-9, 100e-9, 10e-6}) {
    CAPTURE(l);
    DriverSpec s = valve_case();
    s.coil.inductance_H = l;
    const auto r = simulate_switch_off(s, test_support::catalogue());
    const double i0 = r.metrics.get("coil_current_at_switch_off_A");
    CHECK(std::isfinite(r.metrics.get("release_time_s")));
    CHECK(std::isfinite(r.metrics.get("current_decay_time_10pct_s")));
    // Fact of the trade: once the switch is off and the coil current gone, the switch holds off
    // the whole supply; the switch voltage must have reached it.
    CHECK(r.metrics.get("switch_voltage_peak_V") > 0.95 * s.supply.voltage_V);
    const auto& wf = r.waveforms;
    CHECK(std::abs(wf.coil_current_A[wf.coil_current_A.size() - 1]) < 0.01 * i0);
    REQUIRE(find_check(r, "accuracy"));
    CHECK(find_check(r, "accuracy")->status == CheckStatus::pass);
  }
}

TEST_CASE("a stop time that ends the run before the decay fails the accuracy check instead of reporting no release") {
  DriverSpec s = valve_case();
  s.analysis.stop_time_s = s.drive.switch_off_at_s + 50e-6;  // L/R is 7 ms
  const auto r = simulate_switch_off(s, test_support::catalogue());
  CHECK(std::isnan(r.metrics.get("release_time_s")));
  const auto* acc = find_check(r, "accuracy");
  REQUIRE(acc);
  CHECK(acc->status == CheckStatus::fail);
  CHECK(acc->detail.find("before the coil current") != std::string::npos);
  CHECK(overall_status(r.checks) == CheckStatus::fail);
}

TEST_CASE("a supply above what the switch blocks fails off_state_blocks and sums no energy") {
  // 1000 V on a 60 V MOSFET with a diode clamp: the switch avalanches for ever with the drive off.
  DriverSpec s = valve_case();
  s.supply.voltage_V = 1000.0;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  const auto* b = find_check(r, "off_state_blocks");
  REQUIRE(b);
  CHECK(b->status == CheckStatus::fail);
  CHECK(b->detail.find("does not block the supply") != std::string::npos);
  for (const char* m : {"clamp_energy_J", "switch_energy_J", "coil_resistance_energy_J", "switch_breakdown_energy_J",
                        "energy_balance_error", "release_time_s"}) {
    CAPTURE(m);
    CHECK(std::isnan(r.metrics.get(m)));
  }
  CHECK(find_check(r, "accuracy") == nullptr);  // nothing to account for
  // The same for a bipolar switch (40 V part at 150 V).
  DriverSpec n = test_support::relay_case(false);
  n.clamp.kind = ClampKind::diode;
  n.supply.voltage_V = 150.0;
  const auto rn = simulate_switch_off(n, test_support::catalogue());
  REQUIRE(find_check(rn, "off_state_blocks"));
  CHECK(find_check(rn, "off_state_blocks")->status == CheckStatus::fail);
}

TEST_CASE("a healthy driver blocks: off-state coil current far below 1 % of the on-state current") {
  const auto r = simulate_switch_off(valve_case(), test_support::catalogue());
  const auto* b = find_check(r, "off_state_blocks");
  REQUIRE(b);
  CHECK(b->status == CheckStatus::pass);
  CHECK(b->value < 1e-6);  // leakage only: nA, against 0.5 A on
}

TEST_CASE("linear-region heat of a slow edge is not counted as avalanche energy") {
  // No clamp and a 50 ms gate edge: the switch dissipates the coil's energy in its linear region
  // (the voltage stays far below its 70 V breakdown); none of it is avalanche.
  DriverSpec s = valve_case();
  s.clamp.kind = ClampKind::none;
  s.drive.fall_time_s = 50e-3;
  const auto slow = simulate_switch_off(s, test_support::catalogue());
  const double i0 = slow.metrics.get("coil_current_at_switch_off_A");
  const double e0 = 0.5 * s.coil.inductance_H * i0 * i0;
  CHECK(slow.metrics.get("switch_voltage_peak_V") < 60.0);
  CHECK(slow.metrics.get("switch_energy_J") > 0.5 * e0);
  CHECK(slow.metrics.get("switch_breakdown_energy_J") < 1e-9 * e0);
  REQUIRE(find_check(slow, "switch_avalanche_energy"));
  CHECK(find_check(slow, "switch_avalanche_energy")->status == CheckStatus::pass);
  // A fast edge: the switch avalanches and nearly all its heat is breakdown heat (the rest is the
  // few-ns linear transition).
  s.drive.fall_time_s = 20e-9;
  const auto fast = simulate_switch_off(s, test_support::catalogue());
  CHECK(fast.metrics.get("switch_breakdown_energy_J") > 0.999 * fast.metrics.get("switch_energy_J"));
  CHECK(find_check(fast, "switch_avalanche_energy")->status == CheckStatus::fail);  // 36 mJ against 20 mJ
}

TEST_CASE("a bipolar switch warns of collector breakdown only when it breaks down") {
  DriverSpec s = test_support::relay_case(false);
  s.clamp.kind = ClampKind::none;
  const auto hard = simulate_switch_off(s, test_support::catalogue());
  REQUIRE(find_check(hard, "switch_breakdown"));
  CHECK(find_check(hard, "switch_breakdown")->status == CheckStatus::warn);
  s.clamp.kind = ClampKind::diode;
  const auto clamped = simulate_switch_off(s, test_support::catalogue());
  REQUIRE(find_check(clamped, "switch_breakdown"));
  CHECK(find_check(clamped, "switch_breakdown")->status == CheckStatus::pass);
}

TEST_CASE("checks show the limit they test, and where they fail") {
  DriverSpec s = test_support::relay_case(false);
  s.clamp.kind = ClampKind::diode;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  const auto& part = test_support::catalogue().part(s.switch_.part);
  const auto* sat = find_check(r, "drive_saturation");
  REQUIRE(sat);
  const double min_beta = part.rating("minimum_forward_beta");
  CHECK(sat->limit == rel(0.5 * min_beta).epsilon(1e-12));  // common practice: drive twice as hard
  CHECK(sat->fail_limit == rel(min_beta).epsilon(1e-12));
  const auto* v = find_check(r, "switch_voltage");
  REQUIRE(v);
  CHECK(v->limit == rel(0.8 * part.rating("collector_emitter_voltage")).epsilon(1e-12));
}

TEST_CASE("a clamp part's energy checks count that part's energy, not the whole clamp's") {
  DriverSpec s = valve_case();
  s.clamp.kind = ClampKind::diode_zener;
  s.drive.period_s = 2.0;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  const auto* diode = find_check(r, "clamp_average_power:rectifier_1a");
  const auto* zener = find_check(r, "clamp_average_power:zener_500mw_18v");
  REQUIRE(diode);
  REQUIRE(zener);
  // The Zener (18 V) takes most of the energy, the diode (~1 V) a little; the two add up to the clamp's.
  CHECK(zener->value > 5.0 * diode->value);
  CHECK((diode->value + zener->value) * s.drive.period_s == rel(r.metrics.get("clamp_energy_J")).epsilon(1e-9));
}

TEST_CASE("the two model levels clamp at the same voltage at the coil's current") {
  // pwl breakdown lines are tangents of the physical curves at the coil's on-state current
  // (docs/derivations.md, "pwl breakdown line"); the rest of the pwl approximation (the clamp
  // diode's forward line, the MOSFET's channel) moves the peaks by a few tenths of a percent.
  for (const auto kind : {ClampKind::none, ClampKind::diode_zener, ClampKind::tvs_across_switch}) {
    CAPTURE(to_string(kind));
    DriverSpec s = valve_case();
    s.clamp.kind = kind;
    const auto physical = simulate_switch_off(s, test_support::catalogue());
    s.analysis.model_level = coilkick::devices::ModelLevel::pwl;
    const auto pwl = simulate_switch_off(s, test_support::catalogue());
    CHECK(pwl.metrics.get("switch_voltage_peak_V") == rel(physical.metrics.get("switch_voltage_peak_V")).epsilon(5e-3));
  }
  DriverSpec n = test_support::relay_case(false);
  n.clamp.kind = ClampKind::none;
  const auto physical = simulate_switch_off(n, test_support::catalogue());
  n.analysis.model_level = coilkick::devices::ModelLevel::pwl;
  const auto pwl = simulate_switch_off(n, test_support::catalogue());
  CHECK(pwl.metrics.get("switch_voltage_peak_V") == rel(physical.metrics.get("switch_voltage_peak_V")).epsilon(5e-3));
}

namespace {
// The bundled greenhouse valve's text with `inserted` after its line `after`.
std::string bundled_valve_text(const std::string& after, const std::string& inserted) {
  std::ifstream in(coilkick::catalogue::default_models_directory() + "/scenarios/greenhouse_valve.toml");
  std::stringstream text;
  text << in.rdbuf();
  std::string t = text.str();
  const auto at = t.find(after);
  REQUIRE(at != std::string::npos);
  t.insert(t.find('\n', at) + 1, inserted);
  return t;
}
}  // namespace

TEST_CASE("a 1 nH / 1 MOhm coil with the armature model finds its on-state (residuals judged on each row's own scale)") {
  // Its armature is balanced by forces of ~1e-18 N: next to a node's round-off in amperes such a
  // residual used to look converged-or-not by accident, and Newton stalled.
  const auto s = coilkick::scenario::read_scenario_text(
      bundled_valve_text("[coil]", "inductance = \"1 nH\"\nresistance = \"1 Mohm\"\n"), "tiny.toml", test_support::catalogue());
  REQUIRE(s.driver.relay.armature_model);
  REQUIRE(s.driver.relay.closed_inductance_H == 1e-9);  // calibrated for this coil
  SwitchOffResult r;
  REQUIRE_NOTHROW(r = simulate_switch_off(s.driver, test_support::catalogue()));
  // Nodal analysis by hand: the coil carries (supply − switch drop) / hot resistance.
  const double r_hot = coilkick::drivers::coil_resistance_ohm(s.driver.coil);
  const double vsw = r.metrics.get("switch_saturation_voltage_V");
  CHECK(r.metrics.get("coil_current_at_switch_off_A") == rel((s.driver.supply.voltage_V - vsw) / r_hot).epsilon(1e-6));
}

TEST_CASE("an armature that cannot meet a data-sheet time names that value, not the solver's internals") {
  const std::string t = bundled_valve_text("armature_model = true", "operate_time = \"1 us\"\nrelease_time = \"1 us\"\n");
  // Both times are out of reach; the message names the one whose calibration run gave up first.
  CHECK_THROWS_WITH_AS(coilkick::scenario::read_scenario_text(t, "fast.toml", test_support::catalogue()),
                       doctest::Contains("_time (1e-06 s) cannot be met by an armature on this coil"),
                       coilkick::scenario::ScenarioError);
}

TEST_CASE("an operate time the armature cannot reach on this coil fails the calibration check") {
  // 1 µs against the valve coil's L/R of 7 ms: no moving mass gets there; the calibration keeps
  // the nearest it found (~13 ms), and the check must not pass that off as a warning.
  const std::string t = bundled_valve_text("armature_model = true", "operate_time = \"1 us\"\n");
  const auto s = coilkick::scenario::read_scenario_text(t, "fast.toml", test_support::catalogue());
  const auto r = simulate_switch_off(s.driver, test_support::catalogue());
  const auto it = std::find_if(r.checks.begin(), r.checks.end(), [](const auto& c) { return c.name == "relay_calibration"; });
  REQUIRE(it != r.checks.end());
  CHECK(it->status == coilkick::drivers::CheckStatus::fail);
  CHECK(it->value > 100.0);
}

TEST_CASE("a loose tolerance does not carry the decay past the end of the run") {
  // At relative tolerance 1e-2 one long step carried the coil current from 6 mA through zero to
  // −5 mA, past the clamp diode's turn-off, and the run-ending probe (the coil's energy) fell
  // below its threshold and rose again inside that step: the run went on through a made-up
  // transient to 1.4 ms with 130 steps, where 1e-3 took 83. The end must be where the coil's
  // energy has fallen to the threshold (the same instant at any tolerance: the current's 1 %
  // point, on a decay of ~30 A/s into the clamp, within 1 % of the tight run's), and a looser
  // tolerance must not take more steps.
  // The circuit of bench/reference_transient.py: the relay case with the devices' charges and
  // series resistances taken out (the stiffest form of it).
  auto s = test_support::relay_case(false);
  s.clamp.kind = coilkick::drivers::ClampKind::diode_zener;
  s.clamp.diode_part = "rectifier_1a";
  s.switch_.overrides = {{"collector_resistance", 0.0}, {"base_emitter_capacitance", 0.0}, {"base_collector_capacitance", 0.0},
                         {"forward_transit_time", 0.0}, {"reverse_transit_time", 0.0}, {"forward_early_voltage", 1e12},
                         {"collector_emitter_breakdown_voltage", 1e4}};
  const coilkick::drivers::Overrides no_charge{{"series_resistance", 0.0}, {"transit_time", 0.0}, {"zero_bias_capacitance", 0.0}};
  s.clamp.diode_overrides = no_charge;
  s.clamp.diode_overrides["breakdown_voltage"] = 1e5;
  s.clamp.zener_overrides = no_charge;
  long steps_before = 0;
  double tight_end = 0.0;
  for (double rtol : {1e-6, 1e-3, 1e-2}) {
    CAPTURE(rtol);
    s.analysis.relative_tolerance = rtol;
    const auto r = coilkick::drivers::simulate_switch_off(s, test_support::catalogue());
    const double end = r.transient->end_time_s();
    const long steps = r.transient->statistics().accepted_steps;
    if (rtol == 1e-6) tight_end = end;
    CHECK(std::abs(end - tight_end) < 0.01 * (tight_end - s.drive.switch_off_at_s));
    if (steps_before > 0) CHECK(steps <= steps_before);
    steps_before = steps;
  }
}
