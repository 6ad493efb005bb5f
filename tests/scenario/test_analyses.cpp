// Sweeps, tolerance runs and suggestions.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "../drivers/driver_fixture.hpp"
#include "coilkick/analyses/eseries.hpp"
#include "coilkick/analyses/suggest.hpp"
#include "coilkick/analyses/sweep.hpp"
#include "coilkick/analyses/tolerance.hpp"
#include "coilkick/scenario/scenario.hpp"

using namespace coilkick;

namespace {
std::string pwl_scenario_text() {
  return R"(name = "analysis test"
[supply]
voltage = "12 V"
tolerance = "10 %"
[drive]
high_level = "5 V"
switch_off_at = "100 us"
[coil]
resistance = "400 ohm"
inductance = "600 mH"
release_current = "3 mA"
[switch]
topology = "low_side_npn"
part = "npn_small_signal_40v"
base_resistor = "1 kohm"
[clamp]
kind = "diode_zener"
diode_part = "rectifier_1a"
zener_part = "zener_500mw_15v"
[analysis]
model_level = "pwl"
[tolerances]
coil_resistance = "10 %"
coil_temperature_min = "-10 degC"
coil_temperature_max = "70 degC"
)";
}
scenario::Scenario pwl_scenario(const std::string& extra = "") {
  return scenario::read_scenario_text(pwl_scenario_text() + extra, "analysis.toml", test_support::catalogue());
}
}  // namespace

TEST_CASE("IEC 60063: E12 and E24 tables, and values in a range") {
  // The E24 table is not round(10^(k/24)): 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2 differ.
  const auto& e24 = analyses::e_series(24);
  CHECK(e24.size() == 24);
  CHECK(e24[10] == 2.7);
  CHECK(e24[22] == 8.2);
  const auto v = analyses::e_series_values(12, 10.0, 100.0);
  CHECK(v.size() == 13);  // 10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82, 100
  CHECK(v.back() == rel(100.0));
}

TEST_CASE("sweep of the Zener voltage: release time falls and the peak rises with it") {
  const auto s = pwl_scenario();
  const auto axis = analyses::parse_sweep_axis("clamp.zener.overrides.breakdown_voltage=5V:25V:5", s, test_support::catalogue());
  CHECK(axis.count == 5);
  const auto points = analyses::run_sweep(s, {axis}, test_support::catalogue(), 2);
  REQUIRE(points.size() == 5);
  for (std::size_t k = 1; k < points.size(); ++k) {
    REQUIRE(points[k].run.ok());
    CHECK(points[k].run.metrics.get("release_time_s") < points[k - 1].run.metrics.get("release_time_s"));
    CHECK(points[k].run.metrics.get("switch_voltage_peak_V") > points[k - 1].run.metrics.get("switch_voltage_peak_V"));
  }
  CHECK_THROWS_WITH_AS(analyses::parse_sweep_axis("coil.inductance=1:2", s, test_support::catalogue()),
                       doctest::Contains("KEY=START:STOP:COUNT"), std::invalid_argument);
  CHECK_THROWS_WITH_AS(analyses::parse_sweep_axis("coil.inductance=1 pF:2 H:3", s, test_support::catalogue()),
                       doctest::Contains("is a capacitance"), std::invalid_argument);
}

TEST_CASE("a sweep point that is invalid is reported with its error, the others complete") {
  const auto s = pwl_scenario();
  const auto axis = analyses::parse_sweep_axis("coil.inductance=-0.3:0.3:3", s, test_support::catalogue());
  const auto points = analyses::run_sweep(s, {axis}, test_support::catalogue(), 2);
  CHECK_FALSE(points[0].run.ok());
  CHECK(points[0].run.error.find("coil.inductance must be finite and > 0") != std::string::npos);  // the file's key
  CHECK_FALSE(points[1].run.ok());  // zero inductance
  CHECK(points[2].run.ok());
}

TEST_CASE("tolerance: corners and samples, identical numbers on 1 and 2 threads") {
  const auto s = pwl_scenario();
  const auto a = analyses::run_tolerance(s, test_support::catalogue(), 12, 42, 1);
  const auto b = analyses::run_tolerance(s, test_support::catalogue(), 12, 42, 2);
  // Spreads: supply, coil resistance, coil temperature, Zener voltage (5 % from the part's rating).
  CHECK(a.spreads.size() == 4);
  CHECK(a.corners.size() == 16);
  CHECK(a.samples.size() == 12);
  for (int i = 0; i < 28; ++i) {
    CAPTURE(i);
    REQUIRE(a.run(i).run.ok());
    CHECK(a.run(i).values == b.run(i).values);
    for (const auto& [name, v] : a.run(i).run.metrics.items()) {
      const double w = b.run(i).run.metrics.get(name);
      CHECK(((std::isnan(v) && std::isnan(w)) || v == w));  // bit-identical, not just close
    }
  }
  CHECK(a.worst_peak_run == b.worst_peak_run);
  // The worst peak is at the corner with the highest supply and the highest Zener voltage.
  const auto& worst = a.run(a.worst_peak_run);
  CHECK(worst.values[0] == rel(13.2));
  CHECK(worst.values[3] == rel(15.75));
  // A different seed gives different samples.
  const auto c = analyses::run_tolerance(s, test_support::catalogue(), 12, 43, 2);
  CHECK(c.samples[0].values != a.samples[0].values);
}

TEST_CASE("suggest by contact opening: needs the armature model, then ranks by it") {
  auto s = pwl_scenario();
  analyses::SuggestLimits lim{5e-3, 32.0, "contact_open_time_s", {}};
  CHECK_THROWS_WITH_AS(analyses::suggest_clamps(s, test_support::catalogue(), lim, 2), doctest::Contains("needs the armature model"),
                       std::invalid_argument);
  lim.time_metric = "release_time";
  CHECK_THROWS_WITH_AS(analyses::suggest_clamps(s, test_support::catalogue(), lim, 2), doctest::Contains("--time-metric"),
                       std::invalid_argument);
  // The same driver with a relay's data sheet (invented test values) and the armature model; the
  // core loss damps the coil's ringing with the node capacitance after the clamp stops, which
  // the run would otherwise follow until the contacts open.
  std::string text = pwl_scenario_text();
  const std::string rc = "release_current = \"3 mA\"";
  text.replace(text.find(rc), rc.size(), "release_voltage = \"1.8 V\"\noperate_voltage = \"8.4 V\"\ncore_loss_resistance = \"20 kohm\"");
  // Physical models, as a designer would rank clamps by contact timing.
  const std::string pwl = "model_level = \"pwl\"";
  text.replace(text.find(pwl), pwl.size(), "model_level = \"physical\"");
  text += "[relay]\narmature_model = true\noperate_time = \"8 ms\"\nrelease_time = \"2.5 ms\"\n";
  s = scenario::read_scenario_text(text, "analysis_relay.toml", test_support::catalogue());
  lim.time_metric = "contact_open_time_s";
  lim.kinds = {drivers::ClampKind::diode_zener};  // the 29 Zeners of the catalogue: enough to rank, quick
  const auto list = analyses::suggest_clamps(s, test_support::catalogue(), lim, 2);
  CHECK(list.size() == 29);
  REQUIRE(list.front().meets);
  double previous = 0.0;
  int meeting = 0;
  for (const auto& g : list) {
    if (!g.meets) break;
    ++meeting;
    const double t = g.run.metrics.get("contact_open_time_s");
    CHECK(t <= 5e-3);
    CHECK(t >= previous);
    CHECK(g.run.metrics.get("release_time_s") < t);  // the contacts open after the current falls
    previous = t;
  }
  CHECK(meeting > 5);
}

TEST_CASE("suggest: ranked candidates meet both limits and the fastest comes first") {
  const auto s = pwl_scenario();
  const auto list = analyses::suggest_clamps(s, test_support::catalogue(), {0.8e-3, 32.0, "release_time_s", {}}, 2);
  REQUIRE_FALSE(list.empty());
  REQUIRE(list.front().meets);
  double previous = 0.0;
  for (const auto& g : list) {
    if (!g.meets) break;
    CHECK(g.run.metrics.get("switch_voltage_peak_V") <= 32.0);
    CHECK(g.run.metrics.get("release_time_s") <= 0.8e-3);
    CHECK(g.run.metrics.get("release_time_s") >= previous);
    previous = g.run.metrics.get("release_time_s");
  }
  // With 12 V and a 32 V limit, the best Zener is the largest with 12 + V_Z + 0.7 <= 32: 18 V.
  bool found18 = false;
  for (const auto& g : list) found18 = found18 || (g.meets && g.clamp.kind == drivers::ClampKind::diode_zener && g.clamp.zener_part == "zener_500mw_18v");
  CHECK(found18);
  for (const auto& g : list) {
    if (g.clamp.kind == drivers::ClampKind::diode_zener && g.clamp.zener_part == "zener_500mw_20v") CHECK_FALSE(g.meets);
  }
}
