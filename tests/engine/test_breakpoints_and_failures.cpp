// A narrow pulse inside a long run is never stepped over; solver failures raise with a message
// that says when, which state and why.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>
#include <limits>

#include "coilkick/coilkick.hpp"

using namespace coilkick::engine;

TEST_CASE("a 1.1 ns current pulse inside a 10 ms run delivers its charge") {
  // Charge Q = 1 A × (0.1 ns/2 + 1 ns + 0.1 ns/2) = 1.1 nC into 1 nF: +1.1 V, then RC decay
  // with τ = 1 ms (first-order RC, Nilsson & Riedel 10th ed., ch. 7).
  Network net;
  net.add_current_source("pulse", Network::ground, "n",
                         Waveform::pulse_train(0.0, 1.0, 5e-3, 0.1e-9, 1e-9, 0.1e-9, 1.0, 1));
  net.add_capacitor("c", "n", Network::ground, 1e-9);
  net.add_resistor("r", "n", Network::ground, 1e6);
  net.set_stray_capacitance_F(0.0);
  Circuit c(net);
  TransientOptions o;
  o.stop_time_s = 10e-3;
  o.relative_tolerance = 1e-8;
  o.voltage_tolerance_V = 1e-10;
  const auto res = simulate(c, zero_state(c, 0.0), o);
  const double expect = 1.1 * std::exp(-(10e-3 - 5e-3 - 1.1e-9) / 1e-3);
  const auto v = res.node_voltage_V("n");
  CHECK(v[v.size() - 1] == rel(expect).epsilon(1e-6));
}

TEST_CASE("step budget exhausted: SimulationError with time and state") {
  Network net;
  net.add_coil("coil", "a", Network::ground, {0.1, 10.0});
  net.add_resistor("r", "a", Network::ground, 100.0);
  Circuit c(net);
  CircuitState s0 = zero_state(c, 0.0);
  set_state(c, s0, "coil.current", 1.0);
  TransientOptions o;
  o.stop_time_s = 1.0;
  o.maximum_steps = 5;
  CHECK_THROWS_WITH_AS(simulate(c, s0, o), doctest::Contains("step budget of 5 steps"), SimulationError);
  try {
    simulate(c, s0, o);
  } catch (const SimulationError& e) {
    CHECK(std::string(e.what()).find("t = ") != std::string::npos);
    CHECK(std::string(e.what()).find("'") != std::string::npos);  // names a state
  }
}

TEST_CASE("impossible tolerance: the step collapses and the run fails instead of hanging") {
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::edge(0.0, 12.0, 1e-6, 1e-9));
  net.add_coil("coil", "supply", "a", {0.1, 10.0});
  net.add_resistor("r", "a", Network::ground, 100.0);
  Circuit c(net);
  TransientOptions o;
  o.stop_time_s = 1e-3;
  o.relative_tolerance = 1e-16;
  o.voltage_tolerance_V = 1e-300;
  o.current_tolerance_A = 1e-300;
  o.energy_tolerance_J = 1e-300;
  o.maximum_steps = 100000;
  CHECK_THROWS_AS(simulate(c, zero_state(c, 0.0), o), SimulationError);
}

TEST_CASE("minimum step larger than the edge needs: fails naming the minimum") {
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::constant(12.0));
  net.add_resistor("r", "supply", "a", 100.0);
  net.add_capacitor("c", "a", Network::ground, 1e-9);
  Circuit c(net);
  TransientOptions o;
  o.stop_time_s = 1e-3;
  o.minimum_step_s = 1e-6;
  CHECK_THROWS_WITH_AS(simulate(c, zero_state(c, 0.0), o), doctest::Contains("below the minimum"),
                       SimulationError);
}

TEST_CASE("a step below the time's own resolution fails as such, and the same edge earlier runs") {
  // A 5 V edge of 2 ns through 50 Ω into 10 pF (τ = 0.5 ns), asked for to 1e-10 and 1 pV. At
  // t = 1 s a double resolves 2.2e-16 s: the stages' times round by that, 5e-7 V on the 2.5e9 V/s
  // ramp, and the steps shrink to 64 ulps of t (1.4e-14 s), where no step can be made: the run
  // fails, naming the time's rounding (TimeResolutionError). The same edge at 1 µs (a double
  // resolves 2e-22 s there) runs, its end the source's 5 V (the RC's steady state).
  for (const double edge_s : {1.0, 1e-6}) {
    CAPTURE(edge_s);
    Network net;
    net.add_voltage_source("logic", "logic", Waveform::edge(0.0, 5.0, edge_s, 2e-9));
    net.add_resistor("r", "logic", "a", 50.0);
    net.add_capacitor("c", "a", Network::ground, 10e-12);
    Circuit c(net);
    TransientOptions o;
    o.stop_time_s = edge_s + 20e-9;
    o.relative_tolerance = 1e-10;
    o.voltage_tolerance_V = 1e-12;
    o.maximum_steps = 200000;
    if (edge_s == 1.0) {
      CHECK_THROWS_WITH_AS(simulate(c, zero_state(c, 0.0), o), doctest::Contains("the shortest step the rounding of t allows"),
                           TimeResolutionError);
    } else {
      const auto res = simulate(c, zero_state(c, 0.0), o);
      const auto v = res.node_voltage_V("a");
      CHECK(v[v.size() - 1] == rel(5.0).epsilon(1e-9));
    }
  }
}

namespace {
// An element that produces NaN after 1 µs: stands for a device model breaking down.
class BrokenElement final : public Element {
 public:
  BrokenElement() : Element("broken", {"a", Network::ground}) {}
  std::string kind() const override { return "test element"; }
  void load(const ElementContext& ctx, Stamper& out) const override {
    const double i = ctx.time_s() > 1e-6 ? std::numeric_limits<double>::quiet_NaN() : 0.0;
    out.add_flow(0, -i);
  }
};
}  // namespace

TEST_CASE("non-finite state: the run fails with a clear reason") {
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::constant(1.0));
  net.add_resistor("r", "supply", "a", 1e3);
  net.add(std::make_shared<BrokenElement>());
  Circuit c(net);
  TransientOptions o;
  o.stop_time_s = 1e-5;
  CHECK_THROWS_WITH_AS(simulate(c, zero_state(c, 0.0), o), doctest::Contains("non-finite"),
                       SimulationError);
}
