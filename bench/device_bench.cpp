// Device-model benchmarks: one full evaluation (currents, conductances, charges) of each
// device, physical against pwl level. The ratio physical/pwl is printed per family as the
// counter "physical_over_pwl" against the pwl timing measured in the same run.
#include <benchmark/benchmark.h>

#include <chrono>

#include "coilkick/coilkick.hpp"
#include "coilkick/devices/bjt.hpp"
#include "coilkick/devices/diode.hpp"
#include "coilkick/devices/mosfet.hpp"

using namespace coilkick;

namespace {
// Seconds per evaluation of one device element in a tiny circuit (1 µF on each terminal).
double seconds_per_evaluation(std::shared_ptr<engine::Element> e, const std::vector<double>& v, int calls) {
  engine::Network net;
  for (const auto& n : e->terminals()) net.add_capacitor("c_" + n, n, engine::Network::ground, 1e-6);
  net.add(e);
  const engine::Circuit c(net);
  engine::Workspace w = c.make_workspace();
  Eigen::VectorXd x = Eigen::VectorXd::Zero(c.state_count());
  for (std::size_t k = 0; k < v.size(); ++k) x[static_cast<Eigen::Index>(k)] = v[k];
  const auto t0 = std::chrono::steady_clock::now();
  for (int k = 0; k < calls; ++k) {
    c.evaluate(0.0, 0.0, x.data(), w, true);
    benchmark::DoNotOptimize(w.jacobian.data());
  }
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count() / calls;
}

devices::BjtParameters npn() {
  devices::BjtParameters p;
  p.collector_resistance_ohm = 1.5;
  p.base_emitter_capacitance_F = 20e-12;
  p.base_collector_capacitance_F = 6e-12;
  p.forward_transit_time_s = 0.4e-9;
  p.reverse_transit_time_s = 50e-9;
  p.collector_emitter_breakdown_voltage_V = 60.0;
  return p;
}
}  // namespace

static void BjtEvaluation(benchmark::State& state) {
  const auto level = state.range(0) ? devices::ModelLevel::physical : devices::ModelLevel::pwl;
  const double pwl_s = seconds_per_evaluation(devices::make_bjt("q", "c", "b", "e", npn(), devices::ModelLevel::pwl), {0.1, 0.75, 0.0}, 1000);
  auto q = devices::make_bjt("q", "c", "b", "e", npn(), level);
  double s = 0.0;
  for (auto _ : state) s = seconds_per_evaluation(q, {0.1, 0.75, 0.0}, 1000);
  state.counters["physical_over_pwl"] = s / pwl_s;
}
BENCHMARK(BjtEvaluation)->Arg(0)->Arg(1)->Unit(benchmark::kMicrosecond);

static void DiodeEvaluation(benchmark::State& state) {
  devices::DiodeParameters p;
  p.series_resistance_ohm = 0.04;
  p.zero_bias_capacitance_F = 25e-12;
  p.transit_time_s = 3e-6;
  p.breakdown_voltage_V = 15.0;
  const auto level = state.range(0) ? devices::ModelLevel::physical : devices::ModelLevel::pwl;
  const double pwl_s = seconds_per_evaluation(devices::make_diode("d", "a", "k", p, devices::ModelLevel::pwl), {0.7, 0.0}, 1000);
  auto d = devices::make_diode("d", "a", "k", p, level);
  double s = 0.0;
  for (auto _ : state) s = seconds_per_evaluation(d, {0.7, 0.0}, 1000);
  state.counters["physical_over_pwl"] = s / pwl_s;
}
BENCHMARK(DiodeEvaluation)->Arg(0)->Arg(1)->Unit(benchmark::kMicrosecond);
