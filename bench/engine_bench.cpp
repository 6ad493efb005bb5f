// Engine benchmarks (speed is measured here, never in the tests). Each prints its own ratio
// against a baseline measured in the same run:
//  - RlcSwitchOff: series RLC ringing after switch-off (coil 0.6 H / 400 ohm, 100 nF), 3 ms;
//  - RlcEvaluate: one right-hand-side evaluation, the unit of cost of the integrator;
//  - StepMethods: the same switch-off with the blockwise Rosenbrock step and with Boost.Odeint's
//    rosenbrock4 on the full system (the baseline), alternately in one loop;
// counters report accepted steps and right-hand-side evaluations per run.
#include <benchmark/benchmark.h>

#include <chrono>

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

// The switch-off run the benchmarks time: 30 mA in the coil, the capacitor empty, 3 ms.
struct RlcRun {
  Circuit circuit{rlc_network()};
  CircuitState initial = zero_state(circuit, 0.0);
  TransientOptions options;
  RlcRun() {
    set_state(circuit, initial, "coil.current", 0.03);
    options.stop_time_s = 3e-3;
    options.relative_tolerance = 1e-6;
  }
  TransientResult simulate() const {
    return coilkick::engine::simulate(circuit, initial, options,
                                      {EventSpec::maximum("peak", Probe::node_voltage(circuit, "sw"))});
  }
};
}  // namespace

static void RlcSwitchOff(benchmark::State& state) {
  const RlcRun run;
  const Circuit& c = run.circuit;
  long steps = 0, rates = 0;
  // Baseline measured in the same run: one right-hand-side evaluation of this circuit.
  Workspace w = c.make_workspace();
  const auto b0 = std::chrono::steady_clock::now();
  constexpr int baseline_calls = 20000;
  for (int k = 0; k < baseline_calls; ++k) {
    c.evaluate(1e-4, 1e-4, run.initial.values.data(), w, false);
    benchmark::DoNotOptimize(w.rate.data());
  }
  const double one_evaluation_s =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - b0).count() / baseline_calls;
  const auto r0 = std::chrono::steady_clock::now();
  long runs = 0;
  for (auto _ : state) {
    ++runs;
    const auto r = run.simulate();
    benchmark::DoNotOptimize(r.event("peak").value);
    steps = r.statistics().accepted_steps;
    rates = r.statistics().rate_evaluations;
  }
  const double run_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - r0).count() / static_cast<double>(runs);
  // Ratio against the baseline: how many right-hand-side evaluations one run costs in time.
  state.counters["run_over_one_evaluation"] = run_s / one_evaluation_s;
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

static void StepMethods(benchmark::State& state) {
  RlcRun run;
  double blockwise_s = 0.0, odeint_s = 0.0;
  auto timed = [&](StepMethod m) {
    run.options.step_method = m;
    const auto t0 = std::chrono::steady_clock::now();
    const auto r = run.simulate();
    benchmark::DoNotOptimize(r.event("peak").value);
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  };
  for (auto _ : state) {
    blockwise_s += timed(StepMethod::rosenbrock4_blockwise);
    odeint_s += timed(StepMethod::rosenbrock4_odeint);
  }
  // Ratio against the baseline measured in the same loop: how much slower odeint's stepper is.
  state.counters["odeint_over_blockwise"] = odeint_s / blockwise_s;
}
BENCHMARK(StepMethods)->Unit(benchmark::kMicrosecond);
