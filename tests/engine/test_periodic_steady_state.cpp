// Periodic steady state (engine/periodic_steady_state.hpp) of a coil driven by a square wave:
// the closed form of docs/derivations.md ("Coil under a square-wave drive") — the step-down
// chopper with an RL load of M. H. Rashid, Power Electronics, 3rd ed., ch. "DC–DC Converters" —
// and shooting against simulating every period one by one.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>
#include <memory>

#include "coilkick/coilkick.hpp"
#include "coilkick/engine/periodic_steady_state.hpp"

using namespace coilkick::engine;

namespace {
// A 0.5 H, 50 Ω coil (τ = 10 ms = 200 periods) on a 24 V square wave at 20 kHz, duty 0.4, with
// 1 ns edges; the period starts at the falling edge (t = T).
struct SquareWaveCoil {
  const double L = 0.5, R = 50.0, V = 24.0, T = 50e-6, D = 0.4, edge = 1e-9;
  Network net;
  SquareWaveCoil() {
    net.add_voltage_source("drive", "in", Waveform::pulse_train(0.0, V, T - D * T, edge, D * T - edge, edge, T, 0));
    net.add_coil("coil", "in", Network::ground, {L, R});
  }
  TransientOptions options() const {
    TransientOptions o;
    o.relative_tolerance = 1e-9;
    o.current_tolerance_A = 1e-12;
    o.energy_tolerance_J = 1e-15;
    return o;
  }
};
// dy/dt = rate·y + v(in)/(1 s), one internal state following the node "in" without loading it.
// Its period map under a periodic v(in) is affine, y ↦ e^(rate·T)·y + c: one periodic state, and
// a deviation from it grows or shrinks by the factor e^(rate·T) each period (the scalar linear
// ODE's closed-form solution).
class LinearFollower final : public Element {
 public:
  explicit LinearFollower(double rate_per_s) : Element("follower", {"in", Network::ground}), rate_(rate_per_s) {}
  std::string kind() const override { return "test follower"; }
  std::vector<InternalStateSpec> internal_states() const override { return {{"y", "V", 1e-9, StateKind::internal}}; }
  void load(const ElementContext& ctx, Stamper& out) const override {
    constexpr int y = 2;
    out.add_mass(y, y, 1.0);
    out.add_flow(y, rate_ * ctx.value(y) + ctx.value(0));
    out.add_flow_slope(y, y, rate_);
    out.add_flow_slope(y, 0, 1.0);
  }

 private:
  double rate_;
};
}  // namespace

TEST_CASE("periodic steady state: a coil under a square wave matches the closed form") {
  SquareWaveCoil s;
  const Circuit c(s.net);
  CircuitState guess = zero_state(c, s.T);
  PeriodicOptions p;
  p.period_s = s.T;
  const auto pss = periodic_steady_state(c, guess, s.options(), p);
  CHECK(pss.method == PeriodicMethod::shooting);
  // A linear circuit: the map is affine and Newton lands in one step, or two when the first
  // finite differences are sized from a guess of zero, plus the step that shows convergence.
  CHECK(pss.newton_iterations <= 3);
  const double tau = s.L / s.R, i_inf = s.V / s.R;
  const double i_max = i_inf * (1 - std::exp(-s.D * s.T / tau)) / (1 - std::exp(-s.T / tau));
  const double i_min = i_max * std::exp(-(1 - s.D) * s.T / tau);
  // The state at the period's start is the current just before the fall: I_max. Tolerance: the
  // 1 ns edges move the extremes by about (edge/τ)·I ≈ 1e-7 relative (docs/derivations.md); the
  // runs' own error is 10 error scales of 1e-9.
  CHECK(get_state(c, pss.state, "coil.current") == rel(i_max).epsilon(1e-6));
  // One steady period: the lowest current (at the start of the rise) and the average D·V/R.
  TransientOptions o = s.options();
  o.stop_time_s = 2 * s.T;
  const auto r = simulate(c, pss.state, o, {EventSpec::minimum("low", Probe::state(c, "coil.current"), s.T)});
  CHECK(r.event("low").value == rel(i_min).epsilon(1e-6));
  CHECK(*r.event("low").time_s == rel(s.T + (1 - s.D) * s.T).epsilon(1e-4));
  // The period returns to where it started (the definition of the steady state).
  CHECK(r.state("coil.current")[r.times_s().size() - 1] == rel(i_max).epsilon(1e-6));
}

TEST_CASE("periodic steady state: shooting and the periods one by one agree to 1e-4") {
  SquareWaveCoil s;
  const Circuit c(s.net);
  CircuitState guess = zero_state(c, s.T);
  PeriodicOptions shoot, direct;
  shoot.period_s = direct.period_s = s.T;
  direct.allow_shooting = false;
  const auto a = periodic_steady_state(c, guess, s.options(), shoot);
  const auto b = periodic_steady_state(c, guess, s.options(), direct);
  CHECK(b.method == PeriodicMethod::direct);
  CHECK(b.note.empty());
  // From zero the coil needs many time constants (200 periods each) to settle.
  CHECK(b.period_runs > 1000);
  CHECK(a.period_runs < 20);
  CHECK(get_state(c, a.state, "coil.current") == rel(get_state(c, b.state, "coil.current")).epsilon(1e-4));
}

TEST_CASE("periodic steady state: bad period and budgets are errors, not results") {
  SquareWaveCoil s;
  const Circuit c(s.net);
  PeriodicOptions p;
  p.period_s = 0.0;
  CHECK_THROWS_AS(periodic_steady_state(c, zero_state(c, s.T), s.options(), p), std::invalid_argument);
  // Direct periods only, with too small a budget: a SimulationError that says how far it got.
  p.period_s = s.T;
  p.allow_shooting = false;
  p.maximum_direct_periods = 50;
  try {
    periodic_steady_state(c, zero_state(c, s.T), s.options(), p);
    FAIL("expected SimulationError");
  } catch (const SimulationError& e) {
    CHECK(std::string(e.what()).find("50 periods") != std::string::npos);
  }
}

TEST_CASE("periodic steady state: a period that returns the state bit for bit has arrived") {
  // A coil whose L/R (1 µs) is a thousandth of the period settles inside every period: once its
  // current has decayed to the floating-point floor the periods one by one repeat the same
  // numbers exactly. The test of convergence had read two such periods in a row as no
  // contraction (0/0) and ran on until the wall-time budget (one of the random drivers of
  // scripts/tolerance_campaign.py, --extras seed 196, a pwl hold, 60 s); started from the steady
  // state itself, it never ended. The state then is the closed form's, i_max =
  // (V/R)·(1 − e^(−D·T/τ))/(1 − e^(−T/τ)) (docs/derivations.md, "Coil under a square-wave
  // drive"), which is V/R to 1e-300 here; tolerance 1e-6 as in the first test case.
  SquareWaveCoil s;
  Network net;
  const double L = 50e-6, T = 1e-3;
  net.add_voltage_source("drive", "in", Waveform::pulse_train(0.0, s.V, T - s.D * T, s.edge, s.D * T - s.edge, s.edge, T, 0));
  net.add_coil("coil", "in", Network::ground, {L, s.R});
  const Circuit c(net);
  PeriodicOptions p;
  p.period_s = T;
  p.allow_shooting = false;
  p.maximum_direct_periods = 200;
  const auto first = periodic_steady_state(c, zero_state(c, T), s.options(), p);
  const auto again = periodic_steady_state(c, first.state, s.options(), p);
  for (const auto& pss : {first, again}) {
    CHECK(pss.method == PeriodicMethod::direct);
    CHECK(pss.period_runs < 20);
    CHECK(get_state(c, pss.state, "coil.current") == rel(s.V / s.R).epsilon(1e-6));
  }
}

TEST_CASE("periodic steady state: a period run stopped by the search's wall-time budget names that budget") {
  // The search's budget is shared out to its period runs, each getting what is left of it (at
  // least 1 ms). A run stopped there had failed with its own share ("the wall-time budget of
  // 0.00999 s is used up") while the user had set the search's. Here steps of at most 1 ns make
  // one 50 µs period 50,000 steps (~0.1 s of work) against a budget of 10 ms.
  SquareWaveCoil s;
  const Circuit c(s.net);
  PeriodicOptions p;
  p.period_s = s.T;
  p.maximum_wall_time_s = 0.01;
  p.allow_shooting = false;  // the periods one by one: a shooting run's failure falls back to them
  TransientOptions o = s.options();
  o.maximum_step_s = 1e-9;
  try {
    periodic_steady_state(c, zero_state(c, s.T), o, p);
    FAIL("expected SimulationError");
  } catch (const SimulationError& e) {
    const std::string m = e.what();
    CAPTURE(m);
    CHECK(m.find("periodic steady state not reached within the wall-time budget of 0.01 s") != std::string::npos);
  }
}

TEST_CASE("periodic steady state: a periodic state that repels is refused, not returned") {
  // The follower under the square wave: with rate·T = −0.05 its periodic state attracts and
  // shooting reports the multiplier e^(−0.05); with +0.05 the same Newton step lands on the
  // periodic state, which now repels (multiplier e^(0.05) = 1.051): the circuit never settles
  // there, so it is refused, and the periods one by one (20 here) drift away from it: an error.
  // The multiplier to 1e-4: the sensitivities are finite differences along replayed steps,
  // good to ~1e-5 of the multipliers (periodic_steady_state.cpp).
  SquareWaveCoil s;
  for (const double sign : {-1.0, 1.0}) {
    Network net;
    net.add_voltage_source("drive", "in", Waveform::pulse_train(0.0, s.V, s.T - s.D * s.T, s.edge, s.D * s.T - s.edge, s.edge, s.T, 0));
    net.add(std::make_shared<LinearFollower>(sign * 0.05 / s.T));
    const Circuit c(net);
    PeriodicOptions p;
    p.period_s = s.T;
    p.maximum_direct_periods = 20;
    if (sign < 0.0) {
      const auto pss = periodic_steady_state(c, zero_state(c, s.T), s.options(), p);
      CHECK(pss.method == PeriodicMethod::shooting);
      CHECK(pss.largest_multiplier == rel(std::exp(-0.05)).epsilon(1e-4));
      continue;
    }
    try {
      periodic_steady_state(c, zero_state(c, s.T), s.options(), p);
      FAIL("expected SimulationError");
    } catch (const SimulationError& e) {
      CHECK(std::string(e.what()).find("repels") != std::string::npos);
      CHECK(std::string(e.what()).find("1.051") != std::string::npos);
    }
  }
}

TEST_CASE("periodic steady state: a search out of periods says how fast it converged and how many more it needs") {
  // The follower with rate·T = −0.01: its period map is affine with the multiplier
  // ρ = e^(−0.01) (the scalar linear ODE's closed form), so the periods one by one shrink the
  // change by exactly ρ each (the runs' error, ~1e-9 of the state, is ~1e-7 of the changes here:
  // ρ read over 100 periods to ~1e-9; the check allows 1e-6). The outlook's count of further
  // periods is then checked by running them: a budget 2 % above it converges, one 2 % below
  // does not (the convergence test reads the same geometric distance, so the count is good to a
  // period or two of its ~1,500).
  SquareWaveCoil s;
  Network net;
  net.add_voltage_source("drive", "in", Waveform::pulse_train(0.0, s.V, s.T - s.D * s.T, s.edge, s.D * s.T - s.edge, s.edge, s.T, 0));
  net.add(std::make_shared<LinearFollower>(-0.01 / s.T));
  const Circuit c(net);
  PeriodicOptions p;
  p.period_s = s.T;
  p.allow_shooting = false;
  p.maximum_direct_periods = 200;
  auto number_after = [](const std::string& m, const std::string& key) {
    const auto at = m.find(key);
    REQUIRE(at != std::string::npos);
    return std::stod(m.substr(at + key.size()));
  };
  double more = 0.0;
  try {
    periodic_steady_state(c, zero_state(c, s.T), s.options(), p);
    FAIL("expected SimulationError");
  } catch (const SimulationError& e) {
    const std::string m = e.what();
    CAPTURE(m);
    CHECK(m.find("over the last 100 periods") != std::string::npos);
    CHECK(number_after(m, "the factor ") == doctest::Approx(std::exp(-0.01)).epsilon(1e-6));
    more = number_after(m, "about ");
  }
  REQUIRE(more > 100.0);
  p.maximum_direct_periods = 200 + static_cast<long>(std::ceil(1.02 * more));
  const auto pss = periodic_steady_state(c, zero_state(c, s.T), s.options(), p);
  CHECK(pss.method == PeriodicMethod::direct);
  p.maximum_direct_periods = 200 + static_cast<long>(std::floor(0.98 * more));
  CHECK_THROWS_AS(periodic_steady_state(c, zero_state(c, s.T), s.options(), p), SimulationError);
}

TEST_CASE("periodic steady state: a slow coil under a fast transient is not taken as arrived") {
  // A coil whose L/R is 2,000 periods started 5e-6 of its current short of the periodic state
  // (5,000 error scales at the relative tolerance 1e-9: it moves by ~2.5 a period), beside the
  // follower of rate·T = −0.7, started from zero (a fast mode: its change halves every period).
  // While the follower's change is the largest, the ratio of the largest changes of two periods
  // is the fast mode's 0.5, and its estimate of the distance left, change·ρ/(1 − ρ), had read the
  // search as arrived after 17 periods, the coil still 5e-6 short. Each state's own
  // contraction over a baseline of periods keeps it going until the coil has arrived: the closed
  // form of docs/derivations.md ("Coil under a square-wave drive"; Rashid, Power Electronics,
  // 3rd ed., ch. "DC–DC Converters") within 1e-6, as in the first test case (the 1 ns edges move
  // it by ~1e-7).
  // A faster follower (rate·T = −3, its change shrinking twentyfold a period) had the same
  // search stopped after 5 periods, before any state had moved one way long enough to be judged
  // by its own contraction: no search ends before that, unless a period returns its state bit
  // for bit.
  SquareWaveCoil s;
  for (const double fast_rate_T : {-0.7, -3.0}) {
    CAPTURE(fast_rate_T);
    Network net;
    const double L = 2000.0 * s.T * s.R;
    net.add_voltage_source("drive", "in", Waveform::pulse_train(0.0, s.V, s.T - s.D * s.T, s.edge, s.D * s.T - s.edge, s.edge, s.T, 0));
    net.add_coil("coil", "in", Network::ground, {L, s.R});
    net.add(std::make_shared<LinearFollower>(fast_rate_T / s.T));
    const Circuit c(net);
    const double tau = L / s.R, i_inf = s.V / s.R;
    const double i_max = i_inf * (1 - std::exp(-s.D * s.T / tau)) / (1 - std::exp(-s.T / tau));
    CircuitState guess = zero_state(c, s.T);
    set_state(c, guess, "coil.current", i_max * (1.0 - 5e-6));
    PeriodicOptions p;
    p.period_s = s.T;
    p.allow_shooting = false;
    const auto pss = periodic_steady_state(c, guess, s.options(), p);
    CHECK(pss.method == PeriodicMethod::direct);
    CAPTURE(pss.period_runs);
    CHECK(get_state(c, pss.state, "coil.current") == rel(i_max).epsilon(1e-6));
  }
}
