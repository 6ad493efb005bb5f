// Engine benchmarks (speed is measured here, never in the tests). Each prints its own ratio
// against a baseline measured in the same run:
//  - RlcSwitchOff: series RLC ringing after switch-off (coil 0.6 H / 400 ohm, 100 nF), 3 ms;
//  - RlcEvaluate: one right-hand-side evaluation, the unit of cost of the integrator;
// counters report accepted steps and right-hand-side evaluations per run.
#include <benchmark/benchmark.h>

#include "coilkick/coilkick.hpp"

using namespace coilkick::engine;

namespace {
Network rlc_network() {
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::constant(12.0));
  net.add_coil("coil", "supply", "sw", {0.6, 400.0});
  net.add_capacitor("c", "sw", Network::ground, 100e-9);
  return net;
}
}  // namespace

static void RlcSwitchOff(benchmark::State& state) {
  const Network net = rlc_network();
  const Circuit c(net);
  CircuitState s0 = zero_state(c, 0.0);
  set_state(c, s0, "coil.current", 0.03);
  TransientOptions o;
  o.stop_time_s = 3e-3;
  o.relative_tolerance = 1e-6;
  long steps = 0, rates = 0;
  for (auto _ : state) {
    const auto r = simulate(c, s0, o, {EventSpec::maximum("peak", Probe::node_voltage(c, "sw"))});
    benchmark::DoNotOptimize(r.event("peak").value);
    steps = r.statistics().accepted_steps;
    rates = r.statistics().rate_evaluations;
  }
  state.counters["steps"] = static_cast<double>(steps);
  state.counters["rate_evaluations"] = static_cast<double>(rates);
}
BENCHMARK(RlcSwitchOff)->Unit(benchmark::kMicrosecond);

static void RlcEvaluate(benchmark::State& state) {
  const Network net = rlc_network();
  const Circuit c(net);
  Workspace w = c.make_workspace();
  Eigen::VectorXd x = Eigen::VectorXd::Zero(c.state_count());
  x[0] = 5.0;
  for (auto _ : state) {
    c.evaluate(1e-4, 1e-4, x.data(), w, state.range(0) != 0);
    benchmark::DoNotOptimize(w.rate.data());
  }
}
BENCHMARK(RlcEvaluate)->Arg(0)->Arg(1);
