// A driver fitted to a capture (analyses/fit.hpp). The captures are synthetic, with known values:
// the engine's own switch-off of a valve coil (invented demo data: 24 V, 48 Ω at 20 °C, 0.35 H,
// plain diode) sampled like an oscilloscope with Gaussian noise and its own clock, and a switch-on
// written from the closed form of a first-order step response (Nilsson & Riedel, Electric
// Circuits, 10th ed., ch. 7), independent of the engine. The fit must find the known values
// within its standard errors, as often as the errors promise, and say what it cannot determine.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>
#include <random>

#include "coilkick/analyses/fit.hpp"
#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/on_state.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/drivers/switch_on.hpp"
#include "coilkick/engine/circuit.hpp"

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

// The truth's switch-off at the capture's sample times (from 0.5 ms before the edge on), without noise.
scenario::Capture clean_switch_off(const scenario::Scenario& truth, const catalogue::Catalogue& parts, int samples, double dt) {
  const auto built = drivers::build_driver_network(truth.driver, parts);
  const auto run = drivers::simulate_switch_off(truth.driver, built);
  const auto& tr = *run.transient;
  scenario::Capture c;
  for (int k = 0; k < samples; ++k) {
    const double t = 0.5e-3 + k * dt;
    const Eigen::VectorXd x = tr.sample(std::min(t, tr.end_time_s()));
    c.time_s.push_back(t - 0.3e-3);  // the scope's own clock
    c.current_A.push_back(x[tr.circuit().state_index("coil.current")]);
    c.voltage_V.push_back(drivers::switch_voltage_V(built, tr.circuit(), t, x.data()));
  }
  return c;
}

scenario::Capture with_noise(scenario::Capture c, double sigma_A, std::uint64_t seed) {
  std::mt19937_64 gen(seed);
  std::normal_distribution<double> noise(0.0, sigma_A);
  for (double& i : c.current_A) i += noise(gen);
  return c;
}

analyses::FitOptions noise_of(double sigma_A) {
  analyses::FitOptions o;
  o.current_noise_A = sigma_A;
  return o;
}
}  // namespace

TEST_CASE("fit: a valve coil's inductance and resistance recovered from a noisy switch-off capture") {
  const auto parts = catalogue::load_default_catalogue();
  const auto truth = scenario::read_scenario_text(kValve, "valve.toml", parts);
  const auto capture = with_noise(clean_switch_off(truth, parts, 2400, 5e-6), 1e-3, 11);
  auto start = truth;
  scenario::set_numeric_key(start, "coil.inductance", 0.315, parts);
  scenario::set_numeric_key(start, "coil.resistance", 52.8, parts);
  int iterations_seen = 0;
  auto options = noise_of(1e-3);
  options.on_iteration = [&](int it, double ss) {
    iterations_seen = it;
    CHECK(ss >= 0.0);
  };
  const auto fit = analyses::fit_capture(start, parts, capture, {"coil.inductance", "coil.resistance"}, options);
  CHECK(fit.edge == analyses::CaptureEdge::switch_off);
  REQUIRE(fit.result.converged);
  CHECK(iterations_seen == fit.result.iterations);
  CHECK(fit.start_values == std::vector<double>{0.315, 52.8});
  const auto& p = fit.result.parameters;
  const auto& se = fit.result.standard_errors;
  CAPTURE(p[0]);
  CAPTURE(p[1]);
  CHECK(std::abs(p[0] - 0.35) < 3.0 * se[0]);
  CHECK(std::abs(p[1] - 48.0) < 3.0 * se[1]);
  // 2400 samples of 1 mA noise on a 0.5 A decay: both to better than 1 %.
  CHECK(se[0] < 0.01 * 0.35);
  CHECK(se[1] < 0.01 * 48.0);
  // Weighted by the noise, a good fit leaves residuals of about one (the sample spread for 2397
  // degrees of freedom is ~1.5 %; 10 % leaves room).
  CHECK(fit.result.residual_rms == rel(1.0).epsilon(0.1));
  CHECK(fit.undetermined.empty());
  // The clock shift: the capture's edge, found between samples 5 µs apart, within a few µs.
  CHECK(std::abs(fit.time_shift_s) < 5e-6);
  CHECK(fit.model_current_A.size() == capture.current_A.size());
  CHECK(std::isnan(fit.measured_release_current_A));  // no contact channel
}

TEST_CASE("fit: time zero at the drive edge, for a capture with a drive channel and no switch voltage") {
  const auto parts = catalogue::load_default_catalogue();
  const auto truth = scenario::read_scenario_text(kValve, "valve.toml", parts);
  auto capture = with_noise(clean_switch_off(truth, parts, 2400, 5e-6), 1e-3, 17);
  // The logic signal as a probe on the controller's pin sees it: 5 V, falling at 1 ms (the
  // scope's clock: 0.7 ms) — a 20 ns edge between samples 5 µs apart.
  for (double t : capture.time_s) capture.drive_V.push_back(t + 0.3e-3 < 1e-3 ? 5.0 : 0.0);
  capture.voltage_V.clear();
  CHECK(analyses::capture_edge(capture) == analyses::CaptureEdge::switch_off);
  CHECK(analyses::capture_alignment(capture) == analyses::EdgeAlignment::drive);
  auto start = truth;
  scenario::set_numeric_key(start, "coil.inductance", 0.315, parts);
  const auto fit = analyses::fit_capture(start, parts, capture, {"coil.inductance", "coil.resistance"}, noise_of(1e-3));
  CHECK(fit.alignment == analyses::EdgeAlignment::drive);
  const auto& p = fit.result.parameters;
  const auto& se = fit.result.standard_errors;
  CHECK(std::abs(p[0] - 0.35) < 3.0 * se[0]);
  CHECK(std::abs(p[1] - 48.0) < 3.0 * se[1]);
  CHECK(fit.result.residual_rms == rel(1.0).epsilon(0.1));  // as above
  // The sampled drive edge is half way between the samples around it: 2.5 µs from the true one.
  CHECK(std::abs(std::abs(fit.time_shift_s) - 2.5e-6) < 1e-6);
  // A rising drive is a switch-on.
  auto on = capture;
  for (double& v : on.drive_V) v = 5.0 - v;
  CHECK(analyses::capture_edge(on) == analyses::CaptureEdge::switch_on);
}

TEST_CASE("fit: the noise taken from the steady current before the edge") {
  const auto parts = catalogue::load_default_catalogue();
  const auto truth = scenario::read_scenario_text(kValve, "valve.toml", parts);
  // 0.5 ms before the edge at 5 µs: 100 samples of a steady current; their standard deviation
  // estimates σ = 2 mA within a few times 1/√(2·99) ≈ 7 %.
  const auto capture = with_noise(clean_switch_off(truth, parts, 2400, 5e-6), 2e-3, 5);
  CHECK(analyses::current_noise_before_edge_A(capture) == rel(2e-3).epsilon(0.25));
  auto few = capture;
  few.time_s.erase(few.time_s.begin(), few.time_s.begin() + 90);
  few.current_A.erase(few.current_A.begin(), few.current_A.begin() + 90);
  few.voltage_V.erase(few.voltage_V.begin(), few.voltage_V.begin() + 90);
  CHECK(std::isnan(analyses::current_noise_before_edge_A(few)));
  CHECK_THROWS_WITH_AS(analyses::fit_capture(truth, parts, few, {"coil.inductance"}), doctest::Contains("noise is not known"),
                       std::invalid_argument);
}

TEST_CASE("fit: the standard errors keep their promise over 40 seeded captures") {
  // The statistical check: with honest standard errors the truth lies within 3σ in 99.7 % of
  // captures; at least 38 of 40 (95 %) must show it for each key.
  const auto parts = catalogue::load_default_catalogue();
  const auto truth = scenario::read_scenario_text(kValve, "valve.toml", parts);
  const auto clean = clean_switch_off(truth, parts, 1200, 10e-6);
  int inductance_inside = 0, resistance_inside = 0;
  for (std::uint64_t seed = 1; seed <= 40; ++seed) {
    const auto fit = analyses::fit_capture(truth, parts, with_noise(clean, 1e-3, seed), {"coil.inductance", "coil.resistance"}, noise_of(1e-3));
    const auto& p = fit.result.parameters;
    const auto& se = fit.result.standard_errors;
    inductance_inside += std::abs(p[0] - 0.35) < 3.0 * se[0];
    resistance_inside += std::abs(p[1] - 48.0) < 3.0 * se[1];
  }
  CHECK(inductance_inside >= 38);
  CHECK(resistance_inside >= 38);
}

TEST_CASE("fit: a key the capture cannot tell is reported undetermined") {
  const auto parts = catalogue::load_default_catalogue();
  std::string text = kValve;
  const std::string line = "inductance = \"350 mH\"";
  text.replace(text.find(line), line.size(), line + "\nwinding_capacitance = \"80 pF\"");
  const auto truth = scenario::read_scenario_text(text, "valve.toml", parts);
  const auto capture = with_noise(clean_switch_off(truth, parts, 2400, 5e-6), 1e-3, 11);
  // 80 pF across the coil moves a millisecond decay sampled every 5 µs by nothing measurable.
  const auto fit = analyses::fit_capture(truth, parts, capture, {"coil.winding_capacitance"}, noise_of(1e-3));
  REQUIRE(fit.undetermined.size() == 1);
  CHECK(fit.undetermined[0] == "coil.winding_capacitance");
}

TEST_CASE("fit: a contact channel gives the measured release current") {
  const auto parts = catalogue::load_default_catalogue();
  const auto truth = scenario::read_scenario_text(kValve, "valve.toml", parts);
  auto capture = with_noise(clean_switch_off(truth, parts, 2400, 5e-6), 1e-3, 3);
  // A contact monitor: 5 V while the contacts are made, 0 V once the coil current is below the
  // current of 150 mA (taken from the noise-free current, as a contact would; reached 9 ms after
  // the edge, inside the capture).
  const auto clean = clean_switch_off(truth, parts, 2400, 5e-6);
  bool open = false;
  for (double i : clean.current_A) {
    open = open || i < 0.15;
    capture.contact.push_back(open ? 0.0 : 5.0);
  }
  const auto fit = analyses::fit_capture(truth, parts, capture, {"coil.inductance"}, noise_of(1e-3));
  // The current at the contact's change: one noisy sample's worth (1 mA) plus the current's
  // change over one 5 µs sample (≈ 150 mA·5 µs/7 ms ≈ 0.1 mA): within 4 mA.
  CHECK(std::abs(fit.measured_release_current_A - 0.15) < 4e-3);
  CHECK(fit.measured_contact_time_s > 0.0);
}

TEST_CASE("fit: a switch-on fitted against the first-order step response's closed form") {
  const auto parts = catalogue::load_default_catalogue();
  std::string text = kValve;
  text += "[analysis]\ndevice_models = \"piecewise_linear\"\n";
  const auto s = scenario::read_scenario_text(text, "valve.toml", parts);
  // The switch's on-resistance from the engine's on-state, so that the closed form's total
  // resistance can be split into coil and switch.
  const auto built = drivers::build_driver_network(s.driver, parts);
  const engine::Circuit circuit(built.network);
  const auto on = drivers::solve_on_state(s.driver, built, circuit);
  const double r_switch = on.switch_voltage_V / on.coil_current_A;
  const double v = 24.0, r_coil = 40.0, l = 0.30, r = r_coil + r_switch, tau = l / r;
  // i(t) = V/R·(1 − e^(−t/τ)), τ = L/R, sampled every 10 µs from 1 ms before to 5τ after.
  scenario::Capture c;
  std::mt19937_64 gen(7);
  std::normal_distribution<double> noise(0.0, 1e-3);
  for (double t = -1e-3; t < 5.0 * tau; t += 10e-6) {
    const double i = t < 0.0 ? 0.0 : v / r * (1.0 - std::exp(-t / tau));
    c.time_s.push_back(t + 2e-3);
    c.current_A.push_back(i + noise(gen));
    c.voltage_V.push_back(t < 0.0 ? v : i * r_switch);
  }
  const auto fit = analyses::fit_capture(s, parts, c, analyses::default_fit_keys(s, analyses::CaptureEdge::switch_on), noise_of(1e-3));
  CHECK(fit.edge == analyses::CaptureEdge::switch_on);
  REQUIRE(fit.keys == std::vector<std::string>{"coil.inductance", "coil.resistance"});
  const auto& p = fit.result.parameters;
  const auto& se = fit.result.standard_errors;
  CAPTURE(p[0]);
  CAPTURE(p[1]);
  CAPTURE(r_switch);
  CHECK(std::abs(p[0] - l) < 3.0 * se[0]);
  CHECK(std::abs(p[1] - r_coil) < 3.0 * se[1]);
  CHECK(fit.result.residual_rms == rel(1.0).epsilon(0.1));  // as above: the model is the closed form
  CHECK_FALSE(fit.measured_motion.found());  // a plain coil: no dip
}

TEST_CASE("armature motion: a dip's ends found on a noisy current of known shape") {
  // A current rising to 0.4 A, falling linearly by 60 mA from 6 ms to 8 ms, rising again; 1 mA noise.
  std::vector<double> t, i;
  std::mt19937_64 gen(2);
  std::normal_distribution<double> noise(0.0, 1e-3);
  for (int k = 0; k < 4000; ++k) {
    const double tk = k * 5e-6;
    double x = 0.4 * (1.0 - std::exp(-tk / 4e-3));
    const double at6 = 0.4 * (1.0 - std::exp(-6e-3 / 4e-3));
    if (tk > 6e-3 && tk <= 8e-3) x = at6 - 0.06 * (tk - 6e-3) / 2e-3;
    if (tk > 8e-3) x = at6 - 0.06 + 0.3 * (1.0 - std::exp(-(tk - 8e-3) / 4e-3));
    t.push_back(tk);
    i.push_back(x + noise(gen));
  }
  const auto m = analyses::find_armature_motion(t, i, 1e-3);
  REQUIRE(m.found());
  // The smoothing window is 21 samples (105 µs); the corners are found within a window.
  CHECK(m.start_s == doctest::Approx(6e-3).epsilon(105e-6 / 6e-3));
  CHECK(m.end_s == doctest::Approx(8e-3).epsilon(105e-6 / 8e-3));
  // A plain rise has no dip; nor has noise alone.
  std::vector<double> rise;
  for (double tk : t) rise.push_back(0.4 * (1.0 - std::exp(-tk / 4e-3)) + noise(gen));
  CHECK_FALSE(analyses::find_armature_motion(t, rise, 1e-3).found());
}

TEST_CASE("armature motion: the dip of a relay's switch-on marks the armature's flight") {
  // The bundled fan relay with the armature model, its switch-on traced every 5 µs with 0.2 mA of
  // noise: the dip's end must be where the engine's armature reaches its stop, and contact make
  // (IEC 61810-1 operate time) inside the flight.
  const auto parts = catalogue::load_default_catalogue();
  const auto s = scenario::read_scenario_file(catalogue::default_models_directory() + "/scenarios/fan_relay.toml", parts);
  std::vector<double> t;
  for (int k = 0; k < 5000; ++k) t.push_back(-1e-3 + k * 5e-6);
  const auto trace = analyses::model_trace(s, parts, analyses::CaptureEdge::switch_on, t);
  std::mt19937_64 gen(4);
  std::normal_distribution<double> noise(0.0, 0.2e-3);
  std::vector<double> i = trace.current_A;
  for (double& x : i) x += noise(gen);
  const auto m = analyses::find_armature_motion(t, i, 0.2e-3);
  REQUIRE(m.found());
  const double make = trace.make_time_s - trace.edge_time_s;  // after the switch-voltage edge
  CAPTURE(m.start_s);
  CAPTURE(m.end_s);
  CAPTURE(make);
  CHECK(m.start_s < make);
  CHECK(make < m.end_s);
  // The armature on its stop: the gap state at its smallest; the dip's end within the 65 µs
  // smoothing window (13 samples) and the current's flat bottom there.
  const auto built = drivers::build_driver_network(s.driver, parts);
  const auto run = drivers::simulate_switch_on(s.driver, built, 25e-3);
  const auto& tr = *run.transient;
  const int gap = tr.circuit().state_index("coil.gap");
  double t_stop = 0.0, smallest = 1.0;
  for (std::size_t k = 0; k < tr.times_s().size(); ++k) {
    const double g = tr.sample(tr.times_s()[k])[gap];
    if (g < smallest) {
      smallest = g;
      t_stop = tr.times_s()[k] - run.edge_time_s - trace.edge_time_s;
    }
  }
  CAPTURE(t_stop);
  CHECK(std::abs(m.end_s - t_stop) < 0.2e-3);
}
