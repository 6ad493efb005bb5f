// Bad networks and bad options give an error naming the element/field, never a crash.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include "coilkick/coilkick.hpp"

using namespace coilkick::engine;

TEST_CASE("element parameters are checked with the element and field named") {
  Network net;
  CHECK_THROWS_WITH_AS(net.add_coil("valve", "a", "b", {-0.1, 10.0}),
                       "coil 'valve': inductance_H must be finite and > 0, got -0.1",
                       std::invalid_argument);
  CHECK_THROWS_WITH_AS(net.add_resistor("r1", "a", "b", 0.0),
                       "resistor 'r1': resistance_ohm must be finite and > 0, got 0",
                       std::invalid_argument);
  CHECK_THROWS_WITH_AS(net.add_capacitor("c1", "a", "b", std::nan("")),
                       doctest::Contains("capacitor 'c1': capacitance_F"), std::invalid_argument);
}

TEST_CASE("network structure is checked") {
  Network net;
  net.add_resistor("r1", "a", Network::ground, 10.0);
  CHECK_THROWS_WITH_AS(net.add_resistor("r1", "a", "b", 10.0), doctest::Contains("used twice"),
                       std::invalid_argument);
  CHECK_THROWS_WITH_AS(net.add_voltage_source("v", Network::ground, Waveform::constant(1.0)),
                       doctest::Contains("cannot fix the ground node"), std::invalid_argument);
  net.add_voltage_source("v", "a", Waveform::constant(1.0));
  CHECK_THROWS_WITH_AS(net.add_voltage_source("v2", "a", Waveform::constant(2.0)),
                       doctest::Contains("already fixed by source 'v'"), std::invalid_argument);
  const Network empty;
  CHECK_THROWS_WITH_AS(Circuit{empty}, doctest::Contains("no elements"), std::invalid_argument);
}

TEST_CASE("unknown names get a suggestion") {
  Network net;
  net.add_coil("valve", "supply", "switch", {0.1, 10.0});
  net.add_voltage_source("supply", "supply", Waveform::constant(1.0));
  Circuit c(net);
  CHECK_THROWS_WITH_AS(c.state_index("valve.curent"),
                       "circuit: no state named 'valve.curent' (did you mean 'valve.current'?)",
                       std::invalid_argument);
  CHECK_THROWS_WITH_AS(Probe::node_voltage(c, "swich"), doctest::Contains("did you mean 'switch'"),
                       std::invalid_argument);
}

TEST_CASE("a node without capacitance is refused when the stray capacitance is zero") {
  Network net;
  net.add_resistor("r", "a", Network::ground, 10.0);
  net.set_stray_capacitance_F(0.0);
  CHECK_THROWS_WITH_AS(Circuit{net}, doctest::Contains("'node:a' has no capacitance"),
                       std::invalid_argument);
}

TEST_CASE("transient options are checked") {
  Network net;
  net.add_resistor("r", "a", Network::ground, 10.0);
  Circuit c(net);
  TransientOptions o;
  o.stop_time_s = -1.0;
  CHECK_THROWS_WITH_AS(simulate(c, zero_state(c, 0.0), o), doctest::Contains("stop_time_s"),
                       std::invalid_argument);
  o.stop_time_s = 1.0;
  o.relative_tolerance = 0.0;
  CHECK_THROWS_WITH_AS(simulate(c, zero_state(c, 0.0), o), doctest::Contains("relative_tolerance"),
                       std::invalid_argument);
}

TEST_CASE("operating point of a node held by picosiemens: the divider's own value, and the run starts stationary") {
  // 10 V -> 1 TΩ -> node m -> 1 TΩ -> ground: v_m = 5 V (the voltage divider, e.g. Nilsson &
  // Riedel, "Electric Circuits", 10th ed., §3.3). The solver's 1 pS from every node to ground
  // would put m at 10/3 V; it is taken out again where the circuit has a DC path without it
  // (a node held only by leakage, as a junction at its knee is). The transient has no such
  // conductance, so a point that kept it would start the run drifting.
  Network net;
  net.add_voltage_source("v", "in", Waveform::constant(10.0));
  net.add_resistor("r1", "in", "m", 1e12);
  net.add_resistor("r2", "m", Network::ground, 1e12);
  // And a node between two capacitors, with no DC path at all: the 1 pS keeps it defined (0 V).
  net.add_capacitor("c1", "in", "f", 1e-9);
  net.add_capacitor("c2", "f", Network::ground, 1e-9);
  Circuit c(net);
  const auto op = solve_operating_point(c, 0.0);
  // 1e-9: Newton on a linear network, to the operating point's tolerance.
  CHECK(get_state(c, op, "node:m") == rel(5.0).epsilon(1e-9));
  CHECK(get_state(c, op, "node:f") == doctest::Approx(0.0).epsilon(1e-9));
  // Stationary: one step from the point to the stop time (none moves by its tolerance).
  TransientOptions o;
  o.stop_time_s = 1e-3;
  const auto r = simulate(c, op, o);
  CHECK(r.statistics().accepted_steps == 1);
  CHECK(r.node_voltage_V("m").tail(1)[0] == rel(5.0).epsilon(1e-9));
}

TEST_CASE("operating point of a divider with a coil (nodal analysis by hand)") {
  // 10 V -> 1 kohm -> node m -> coil (100 ohm) -> ground, and 1 kohm from m to ground:
  // v_m = 10·(1000 ∥ 100)/(1000 + 1000 ∥ 100) = 10·90.909/1090.909 = 0.83333 V.
  Network net;
  net.add_voltage_source("v", "in", Waveform::constant(10.0));
  net.add_resistor("r1", "in", "m", 1000.0);
  net.add_resistor("r2", "m", Network::ground, 1000.0);
  net.add_coil("l", "m", Network::ground, {0.1, 100.0});
  Circuit c(net);
  const auto op = solve_operating_point(c, 0.0);
  const double rp = 1000.0 * 100.0 / 1100.0;
  // 1e-9 relative: Newton on a linear network converges in one step; gmin 1e-12 S shifts ~1e-13.
  CHECK(get_state(c, op, "node:m") == rel(10.0 * rp / (1000.0 + rp)).epsilon(1e-9));
  CHECK(get_state(c, op, "l.current") == rel(10.0 * rp / (1000.0 + rp) / 100.0).epsilon(1e-9));
}
