// A switch-off fitted to a capture (analyses/fit.hpp): the capture is synthetic — the engine's own
// switch-off of a valve coil with known values (invented demo data: 24 V, 48 Ω at 20 °C, 0.35 H,
// plain diode), sampled every 5 µs like an oscilloscope with 1 mA of Gaussian noise, the clock
// started at an arbitrary instant. The fit must find the known values within its standard errors
// (3σ) from a start 10 % off, and report a key the capture cannot determine.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>
#include <random>

#include "coilkick/analyses/fit.hpp"
#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/on_state.hpp"
#include "coilkick/drivers/switch_off.hpp"

using namespace coilkick;

namespace {
const char* kValve = R"(name = "valve for a fit"
[supply]
voltage = "24 V"
[drive]
high_level = "5 V"
fall_time = "20 ns"
switch_off_at = "1 ms"
[coil]
resistance = "48 ohm"
inductance = "350 mH"
release_current = "60 mA"
[switch]
topology = "low_side_nmos"
part = "nmos_logic_level_60v"
gate_resistor = "100 ohm"
[clamp]
kind = "diode"
diode_part = "rectifier_1a"
)";

scenario::Capture synthetic_capture(const scenario::Scenario& truth, const catalogue::Catalogue& parts) {
  const auto built = drivers::build_driver_network(truth.driver, parts);
  const auto run = drivers::simulate_switch_off(truth.driver, built);
  const auto& tr = *run.transient;
  std::mt19937_64 gen(11);
  std::normal_distribution<double> noise(0.0, 1e-3);
  scenario::Capture c;
  for (int k = 0; k < 2400; ++k) {  // from 0.5 ms before the edge to 11.5 ms after
    const double t = 0.5e-3 + k * 5e-6;
    const Eigen::VectorXd x = tr.sample(std::min(t, tr.end_time_s()));
    c.time_s.push_back(t - 0.3e-3);  // the scope's own clock
    c.current_A.push_back(x[tr.circuit().state_index("coil.current")] + noise(gen));
    c.voltage_V.push_back(drivers::switch_voltage_V(built, tr.circuit(), t, x.data()));
  }
  return c;
}
}  // namespace

TEST_CASE("fit: a valve coil's inductance and resistance recovered from a noisy switch-off capture") {
  const auto parts = catalogue::load_default_catalogue();
  const auto truth = scenario::read_scenario_text(kValve, "valve.toml", parts);
  const auto capture = synthetic_capture(truth, parts);
  auto start = truth;
  scenario::set_numeric_key(start, "coil.inductance", 0.315, parts);
  scenario::set_numeric_key(start, "coil.resistance", 52.8, parts);
  const auto fit = analyses::fit_switch_off(start, parts, capture, {"coil.inductance", "coil.resistance"}, 1e-3);
  REQUIRE(fit.result.converged);
  const auto& p = fit.result.parameters;
  const auto& se = fit.result.standard_errors;
  CAPTURE(p[0]);
  CAPTURE(p[1]);
  CAPTURE(se[0]);
  CAPTURE(se[1]);
  CHECK(std::abs(p[0] - 0.35) < 3.0 * se[0]);
  CHECK(std::abs(p[1] - 48.0) < 3.0 * se[1]);
  // 2400 samples of 1 mA noise on a 0.5 A decay: both to better than 1 %.
  CHECK(se[0] < 0.01 * 0.35);
  CHECK(se[1] < 0.01 * 48.0);
  // Weighted by the noise, a good fit leaves residuals of about one (the sample spread for 2398
  // degrees of freedom is ~1.5 %; 10 % leaves room).
  CHECK(fit.result.residual_rms == rel(1.0).epsilon(0.1));
  CHECK(fit.undetermined.empty());
  // The clock shift: the capture's edge, found between samples 5 µs apart, within a few µs.
  CHECK(std::abs(fit.time_shift_s) < 5e-6);
}

TEST_CASE("fit: a key the capture cannot tell is reported undetermined") {
  const auto parts = catalogue::load_default_catalogue();
  std::string text = kValve;
  const std::string line = "inductance = \"350 mH\"";
  text.replace(text.find(line), line.size(), line + "\nwinding_capacitance = \"80 pF\"");
  const auto truth = scenario::read_scenario_text(text, "valve.toml", parts);
  const auto capture = synthetic_capture(truth, parts);
  // 80 pF across the coil moves a millisecond decay sampled every 5 µs by nothing measurable.
  const auto fit = analyses::fit_switch_off(truth, parts, capture, {"coil.winding_capacitance"}, 1e-3);
  REQUIRE(fit.undetermined.size() == 1);
  CHECK(fit.undetermined[0] == "coil.winding_capacitance");
}
