// A line by its travelling waves (engine/transmission_line.hpp) against the closed forms of the
// lossless line: a step launched through a source resistance R_s into a line of impedance Z0 is
// V·Z0/(R_s + Z0); it arrives one delay later and the end multiplies it by 1 + Γ, Γ = (Z_L − Z0)/(Z_L + Z0)
// — D. M. Pozar, "Microwave Engineering", 4th ed. (Wiley, 2012), §2.1 (the telegrapher's
// equations and their travelling-wave solution) and §2.3 (the terminated lossless line), section
// numbers from memory. Energy: what the source delivered is the heat plus the energy of the waves
// still in transit (docs/derivations.md, "A cable by its travelling waves").
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "coilkick/coilkick.hpp"

using namespace coilkick::engine;

namespace {
constexpr double kZ0 = 50.0, kDelay = 100e-9, kStep = 1.0, kEdgeAt = 20e-9, kRise = 1e-9;
// 1 mΩ of conductor against 50 Ω: the loss moves the waves by R/(2·Z0) = 1e-5.
constexpr double kLoop = 1e-3;
// The high-frequency loss: 0.1 ns against the 1 ns edge and checks 20 ns after it (e^-200).
constexpr double kLoss = 0.1e-9;

struct Launch {
  Circuit circuit;
  TransientResult result;
};

// Source (edge 0 → 1 V) — R_source — line — R_load to ground.
TransientResult launch(double source_ohm, double load_ohm, double stop_s) {
  Network net;
  net.add_voltage_source("source", "drive", Waveform::edge(0.0, kStep, kEdgeAt, kRise));
  net.add_resistor("source_resistance", "drive", "near", source_ohm);
  net.add(std::make_shared<TransmissionLine>("line", "near", Network::ground, "far", Network::ground,
                                             TransmissionLineParameters{kZ0, kDelay, kLoop, kLoss}));
  net.add_resistor("load", "far", Network::ground, load_ohm);
  Circuit c(net);
  const CircuitState s0 = solve_operating_point(c, 0.0);
  TransientOptions o;
  o.stop_time_s = stop_s;
  o.relative_tolerance = std::getenv("RT") ? std::atof(std::getenv("RT")) : 1e-7;
  o.voltage_tolerance_V = 0.1 * o.relative_tolerance;
  o.energy_tolerance_J = 1e-18;  // the run delivers nanojoules
  return simulate(c, s0, o);
}

double at(const TransientResult& r, const std::string& node, double t) {
  const int k = r.circuit().state_index("node:" + node);
  return r.sample(t)[k];
}
}  // namespace

TEST_CASE("a line: a step travels one delay and doubles at an open end (telegrapher's equations)") {
  const double open = 1e6;
  if (std::getenv("STOPS")) for (double m : {0.1, 0.5, 0.9, 1.1, 1.5, 2.0, 2.5, 3.0, 3.5}) { auto rr = launch(kZ0, open, kEdgeAt + m * kDelay); MESSAGE(m << " " << rr.energy().balance_error << " " << rr.times_s().size()); }
  const auto r = launch(kZ0, open, kEdgeAt + 3.5 * kDelay);
  const double gamma_load = (open - kZ0) / (open + kZ0);
  const double launched = kStep * kZ0 / (kZ0 + kZ0);
  const double settled = kEdgeAt + kRise + 20e-9;  // 20 ns after the edge: the 1 pF strays (50 ps) long settled
  // Tolerance 1e-4: the 1 mΩ loop loss moves the waves by 1e-5, the load's 1 µA by 5e-5 of Γ (in gamma_load).
  CHECK(at(r, "near", settled) == rel(launched).epsilon(1e-4));
  CHECK(std::abs(at(r, "far", kEdgeAt + kDelay - 5e-9)) < 1e-6);  // nothing before the delay
  CHECK(at(r, "far", settled + kDelay) == rel(launched * (1.0 + gamma_load)).epsilon(1e-4));
  // The reflection is back at the near end after two delays, and the matched source absorbs it.
  CHECK(at(r, "near", settled + 1.5 * kDelay) == rel(launched).epsilon(1e-4));
  CHECK(at(r, "near", settled + 2.0 * kDelay) == rel(launched * (1.0 + gamma_load)).epsilon(1e-4));
  CHECK(at(r, "far", settled + 2.5 * kDelay) == rel(launched * (1.0 + gamma_load)).epsilon(1e-4));
  // Energy: delivered = heat + waves in transit + strays. The run reaches ~1e-8 at relative
  // tolerance 1e-7; 1e-5 leaves room and still catches a wrong stored-energy formula (a kink
  // stepped over, before steps landed on arriving kinks, cost 1.2e-4).
  MESSAGE(r.energy().balance_error);MESSAGE(r.times_s().size());CHECK(std::abs(r.energy().balance_error) < 1e-5);
}

TEST_CASE("a line: a mismatched load reflects Γ = (Z_L − Z0)/(Z_L + Z0) and settles at the divider") {
  const double load = 150.0;  // Γ = 0.5
  const auto r = launch(kZ0, load, kEdgeAt + 4.5 * kDelay);
  const double launched = 0.5 * kStep;
  const double settled = kEdgeAt + kRise + 20e-9;
  CHECK(at(r, "far", settled + kDelay) == rel(launched * 1.5).epsilon(1e-4));
  CHECK(at(r, "near", settled + 2.0 * kDelay) == rel(launched * 1.5).epsilon(1e-4));
  // The DC divider through the loop resistance (Ohm's law) once the source has absorbed the wave
  // (1e-5: the source is matched to Z0 but for the 0.5 mΩ of the loop at that end).
  CHECK(at(r, "far", settled + 4.0 * kDelay) == rel(kStep * load / (kZ0 + kLoop + load)).epsilon(1e-5));
  CHECK(std::abs(r.energy().balance_error) < 1e-5);
  CHECK(r.energy().channel_J("line.heat") > 0.0);
}

TEST_CASE("a line far shorter than the coil's time constant: the coil's current rise of the lumped circuit") {
  // An RL circuit through the line: i = V/R·(1 − e^(−t·R/L)) with R = source + loop + winding
  // (Nilsson & Riedel, "Electric Circuits", ch. 7, the step response of an RL circuit). The line's
  // own L and C (Z0·τ = 5 µH, τ/Z0 = 2 nF) shift it by ~L_line/L = 5e-4 of the time constant.
  Network net;
  net.add_voltage_source("source", "drive", Waveform::edge(0.0, kStep, kEdgeAt, kRise));
  net.add_resistor("source_resistance", "drive", "near", 10.0);
  net.add(std::make_shared<TransmissionLine>("line", "near", Network::ground, "far", Network::ground,
                                             TransmissionLineParameters{kZ0, kDelay, 2.0, kLoss}));
  CoilParameters coil{10e-3, 38.0};
  net.add_coil("coil", "far", Network::ground, coil);
  Circuit c(net);
  const CircuitState s0 = solve_operating_point(c, 0.0);
  TransientOptions o;
  const double r_total = 10.0 + 2.0 + 38.0, tc = coil.inductance_H / r_total;
  o.stop_time_s = kEdgeAt + 3.1 * tc;
  o.relative_tolerance = 1e-6;
  const auto r = simulate(c, s0, o);
  const int k = c.state_index("coil.current");
  for (double n : {1.0, 2.0, 3.0}) {
    const double t = kEdgeAt + kRise / 2 + n * tc;
    // 2e-3: the line's 5 µH against the coil's 10 mH, and the edge's half nanosecond.
    CHECK(r.sample(t)[k] == rel(kStep / r_total * (1.0 - std::exp(-n))).epsilon(2e-3));
  }
  // Steps never exceed the delay: the line reads only recorded waves.
  for (std::size_t i = 1; i < r.times_s().size(); ++i) REQUIRE(r.times_s()[i] - r.times_s()[i - 1] <= kDelay * (1 + 1e-12));
  CHECK(std::abs(r.energy().balance_error) < 1e-5);
}

TEST_CASE("a line: bad parameters name the field, and it has no periodic steady state") {
  CHECK_THROWS_WITH_AS(TransmissionLine("cable", "a", "ground", "b", "ground", {0.0, 1e-7, 1.0, 1e-9}),
                       doctest::Contains("characteristic_impedance_ohm"), std::invalid_argument);
  CHECK_THROWS_WITH_AS(TransmissionLine("cable", "a", "ground", "b", "ground", {50.0, -1e-7, 1.0, 1e-9}),
                       doctest::Contains("delay_s"), std::invalid_argument);
  CHECK_THROWS_WITH_AS(TransmissionLine("cable", "a", "ground", "b", "ground", {50.0, 1e-7, 0.0, 1e-9}),
                       doctest::Contains("loop_resistance_ohm"), std::invalid_argument);
}
