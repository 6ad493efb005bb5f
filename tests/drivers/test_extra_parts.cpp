// Extra parts between named nodes: the same circuit built from extra parts equals the built-in
// clamp (model identity) and the closed forms; an extra Zener clamps a gate; bad joins are named.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "../reference/closed_forms.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "driver_fixture.hpp"

using namespace coilkick::drivers;

namespace {
ExtraPart extra(const std::string& name, ExtraElement e, std::vector<std::string> nodes, double value, const std::string& part = "") {
  ExtraPart x;
  x.name = name;
  x.element = e;
  x.nodes = std::move(nodes);
  x.value = value;
  x.part = part;
  return x;
}
}  // namespace

TEST_CASE("a diode and a resistor added as extra parts equal the built-in diode + resistor clamp and its closed form") {
  DriverSpec built_in = test_support::relay_case(true);
  built_in.clamp.kind = ClampKind::diode_resistor;
  DriverSpec own = test_support::relay_case(true);
  own.clamp.kind = ClampKind::none;
  auto d = extra("own_diode", ExtraElement::part, {"switch", "own_mid"}, NAN, "rectifier_1a");
  d.overrides = own.clamp.diode_overrides;  // the same near-ideal segments as the built-in one
  own.extra_parts = {d, extra("own_resistor", ExtraElement::resistor, {"own_mid", "supply"}, 400.0)};
  const auto a = simulate_switch_off(built_in, test_support::catalogue());
  const auto b = simulate_switch_off(own, test_support::catalogue());
  // The same equations in another order: the integrator's tolerance (1e-8) decides the difference.
  for (const char* m : {"release_time_s", "switch_voltage_peak_V", "current_decay_time_10pct_s"}) {
    CAPTURE(m);
    CHECK(b.metrics.get(m) == rel(a.metrics.get(m)).epsilon(1e-6));
  }
  CHECK(b.metrics.get("extra_parts_energy_J") == rel(a.metrics.get("clamp_energy_J")).epsilon(1e-6));
  // Closed form (docs/derivations.md, diode + resistor): τ' = L/(R + R_s), V_F/(R + R_s).
  const double i0 = b.metrics.get("coil_current_at_switch_off_A");
  const double t = test_support::threshold_time_s(0.6 / 800.0, i0, 3e-3, 0.7 / 800.0);
  CHECK(b.metrics.get("release_time_s") == rel(t).epsilon(1e-3));  // the pwl switch's ~20 ns turn-off
  CHECK(b.metrics.get("energy_balance_error") < 1e-3);
}

TEST_CASE("an extra RC across the switch equals the built-in rc_across_switch snubber") {
  DriverSpec built_in = test_support::relay_case(true);
  built_in.clamp.kind = ClampKind::rc_across_switch;
  built_in.clamp.snubber_resistance_ohm = 470.0;
  built_in.clamp.snubber_capacitance_F = 100e-9;
  built_in.switch_.overrides["collector_emitter_breakdown_voltage"] = 200.0;
  DriverSpec own = built_in;
  own.clamp.kind = ClampKind::none;
  own.extra_parts = {extra("r", ExtraElement::resistor, {"switch", "rc"}, 470.0),
                     extra("c", ExtraElement::capacitor, {"rc", "ground"}, 100e-9)};
  const auto a = simulate_switch_off(built_in, test_support::catalogue());
  const auto b = simulate_switch_off(own, test_support::catalogue());
  for (const char* m : {"switch_voltage_peak_V", "switch_voltage_peak_time_s", "release_time_s", "ringing_frequency_Hz"}) {
    CAPTURE(m);
    CHECK(b.metrics.get(m) == rel(a.metrics.get(m)).epsilon(1e-6));
  }
}

TEST_CASE("an extra gate-source Zener clamps the on-state gate voltage at its breakdown voltage") {
  // A 3.3 V Zener from gate to source on a 5 V logic drive through 50 + 100 ohm: the gate sits at
  // the Zener's voltage at its current (about 11 mA), within the part's tolerance (IEC 60063 E24
  // value; the catalogue's tolerance rating).
  DriverSpec s = test_support::relay_case(false);
  s.switch_.topology = Topology::low_side_nmos;
  s.switch_.part = "nmos_logic_level_60v";
  s.switch_.base_resistor_ohm = 100.0;
  s.clamp.kind = ClampKind::diode;
  s.extra_parts = {extra("gate_zener", ExtraElement::part, {"ground", "base"}, NAN, "zener_500mw_3v3")};
  const auto r = simulate_switch_off(s, test_support::catalogue());
  const auto& rec = test_support::catalogue().part("zener_500mw_3v3");
  const double tol = rec.rating("breakdown_voltage_tolerance");
  const double v_gate = r.transient->circuit().node_voltage_V("base", 0.0, r.transient->states().row(0).data());
  CHECK(v_gate > 3.3 * (1.0 - 2.0 * tol));
  CHECK(v_gate < 3.3 * (1.0 + 2.0 * tol));
  // Nodal analysis: the logic pin carries (5 V − V_gate)/(50 + 100 ohm).
  CHECK(r.metrics.get("logic_pin_current_A") == rel((5.0 - v_gate) / 150.0).epsilon(1e-4));
}

TEST_CASE("extra parts: bad joins are named") {
  DriverSpec s = test_support::relay_case(true);
  s.extra_parts = {extra("r", ExtraElement::resistor, {"swich", "supply"}, 10.0)};
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()),
                       doctest::Contains("extra_part 'r': node 'swich' is neither a node of the driver nor used by another extra part (did you mean 'switch'?)"),
                       std::invalid_argument);
  s.extra_parts = {extra("r", ExtraElement::resistor, {"switch", "switch"}, 10.0)};
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("joins a node to itself"), std::invalid_argument);
  s.extra_parts = {extra("q", ExtraElement::part, {"switch", "base"}, NAN, "npn_small_signal_40v")};
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("a transistor joins 3"), std::invalid_argument);
  s.extra_parts = {extra("coil", ExtraElement::resistor, {"switch", "supply"}, 10.0)};
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("the name is taken"), std::invalid_argument);
  s.extra_parts = {extra("r", ExtraElement::resistor, {"switch", "supply"}, -1.0)};
  CHECK_THROWS_WITH_AS(simulate_switch_off(s, test_support::catalogue()), doctest::Contains("extra_part 'r': value must be finite and > 0"),
                       std::invalid_argument);
}
