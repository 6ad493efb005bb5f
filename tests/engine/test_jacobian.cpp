// The analytic Jacobian against central finite differences, for every element, at states and
// instants where every time dependence is active (mid-edge, mid-transition).
#include <doctest/doctest.h>

#include <random>

#include "coilkick/coilkick.hpp"
#include "coilkick/engine/jacobian_check.hpp"

using namespace coilkick::engine;

TEST_CASE("analytic Jacobian equals finite differences for every engine element") {
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::edge(0.0, 24.0, 0.0, 1e-6));
  net.add_coil("coil", "supply", "sw", {0.2, 30.0, 2e3});
  net.add_coil("plain_coil", "sw", "x", {1e-3, 0.0});
  net.add_timed_switch("switch", "sw", Network::ground, {0.1, 1e8, 0.0, 1e-6});
  net.add_resistor("r", "x", "y", 470.0);
  net.add_capacitor("c", "y", Network::ground, 47e-9);
  net.add_capacitor("c_supply", "supply", "y", 1e-9);  // capacitance to a moving source node
  net.add_current_source("i", Network::ground, "y", Waveform::edge(0.0, 0.01, 0.0, 1e-6));
  Circuit c(net);
  std::mt19937 rng(7);
  std::uniform_real_distribution<double> u(-5.0, 5.0);
  for (int trial = 0; trial < 5; ++trial) {
    Eigen::VectorXd x(c.state_count());
    for (int i = 0; i < x.size(); ++i) x[i] = u(rng) * (c.states()[static_cast<std::size_t>(i)].unit == "A" ? 0.01 : 1.0);
    const auto cmp = compare_jacobian(c, 0.37e-6, x.data());
    CAPTURE(cmp.row_name);
    CAPTURE(cmp.column_name);
    CAPTURE(cmp.analytic);
    CAPTURE(cmp.numeric);
    // Central differences with h = 1e-6·|x| have truncation error ~h² and round-off ~1e-16/h:
    // about 1e-9 of the row scale; 1e-6 leaves room and still catches any wrong term.
    CHECK(cmp.worst_error < 1e-6);
  }
}

TEST_CASE("analytic Jacobian equals finite differences for a line, at its DC point and reading its past") {
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::edge(0.0, 24.0, 10e-9, 40e-9));
  net.add_resistor("source", "supply", "near", 20.0);
  TransmissionLineParameters line{80.0, 30e-9, 1.5, 2e-9};
  line.common_mode_resistance_ohm = 0.375;  // its common-mode path stamped too
  net.add(std::make_shared<TransmissionLine>("line", "near", Network::ground, "far", "far_return", line));
  net.add_coil("coil", "far", "far_return", {1e-3, 40.0});
  net.add_resistor("return", "far_return", Network::ground, 5.0);
  Circuit c(net);
  std::mt19937 rng(11);
  std::uniform_real_distribution<double> u(-5.0, 5.0);
  auto random_state = [&] {
    Eigen::VectorXd x(c.state_count());
    for (int i = 0; i < x.size(); ++i) x[i] = u(rng) * (c.states()[static_cast<std::size_t>(i)].unit == "A" ? 0.01 : 1.0);
    return x;
  };
  // (Tolerance as in the case above: finite differences reach ~1e-9 of the row scale.)
  const Eigen::VectorXd x_dc = random_state();
  CHECK(compare_jacobian(c, 5e-9, x_dc.data()).worst_error < 1e-6);
  TransientOptions o;
  o.stop_time_s = 200e-9;
  (void)simulate(c, solve_operating_point(c, 0.0), o);  // the circuit keeps the run's past
  for (double t : {47e-9, 61e-9, 75e-9}) {  // the past read at t − 28 ns lies inside the edge (10–50 ns)
    const Eigen::VectorXd x = random_state();
    const auto cmp = compare_jacobian(c, t, x.data());
    CAPTURE(cmp.row_name);
    CAPTURE(cmp.column_name);
    CAPTURE(t);
    CAPTURE(cmp.analytic);
    CAPTURE(cmp.numeric);
    CHECK(cmp.worst_error < 1e-6);
  }
}
