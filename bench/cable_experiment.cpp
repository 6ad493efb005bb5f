#include "coilkick/coilkick.hpp"
#include <cstdio>
#include <algorithm>
#include <chrono>
using namespace coilkick::engine;
int main(int argc, char** argv) {
  const bool cable = argc > 1 && atoi(argv[1]);
  const double rt = argc > 2 ? atof(argv[2]) : 1e-6;
  Network net;
  net.set_stray_capacitance_F(10e-12);
  net.add_voltage_source("supply", "supply", Waveform::constant(24.0));
  net.add_timed_switch("switch", "sw", Network::ground, {0.5, 1e8, 1e-4, 20e-9});
  net.add_resistor("clamp", "supply", "sw", 100.0);
  if (cable) {
    net.add(std::make_shared<TransmissionLine>("line", "supply", "sw", "coil_a", "coil_b",
                                               TransmissionLineParameters{80.6, 0.48e-6, 1.4, getenv("TF") ? atof(getenv("TF")) : 20e-9}));
    net.add_coil("coil", "coil_a", "coil_b", {0.35, 48.0});
    if (getenv("TIE")) net.add_resistor("tie", "coil_b", Network::ground, atof(getenv("TIE")));
  } else {
    net.add_coil("coil", "supply", "sw", {0.35, 48.0});
  }
  Circuit c(net);
  TransientOptions o;
  o.stop_time_s = getenv("STOP") ? atof(getenv("STOP")) : 6e-3;
  o.relative_tolerance = rt;
  auto t0 = std::chrono::steady_clock::now();
  auto r = simulate(c, solve_operating_point(c, 0.0), o);
  double dt = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  auto i = r.state("coil.current");
  auto v = r.node_voltage_V("sw");
  {
    const auto& ts = r.times_s();
    std::vector<int> b(60, 0);
    for (double t : ts) b[std::min(59, int(t / 1e-4))]++;
    for (int k = 0; k < 60; ++k) printf("%d ", b[k]);
    printf("\n");
    { std::vector<int> f(100, 0); for (double t : ts) if (t >= 1e-4 && t < 2e-4) f[std::min(99, int((t - 1e-4) / 1e-6))]++; for (int k = 0; k < 100; ++k) printf("%d ", f[k]); printf(" <- per us from 100 us\n"); }
    auto va = r.node_voltage_V("coil_a");
    {
      auto vb = r.node_voltage_V("coil_b");
      for (int w = 0; w < 10; ++w) {
        double lo = 1e300, hi = -1e300, lob = 1e300, hib = -1e300; int n = 0;
        for (size_t k = 0; k < ts.size(); ++k) if (ts[k] >= w * 1e-5 && ts[k] < (w + 1) * 1e-5) { lo = std::min(lo, v[k]); hi = std::max(hi, v[k]); lob = std::min(lob, vb[k]); hib = std::max(hib, vb[k]); ++n; }
        printf("window %d: steps %d sw %.9f..%.9f coil_b %.9f..%.9f\n", w, n, lo, hi, lob, hib);
      }
    }
    int shown = 0;
    for (size_t k = 1; k < ts.size() && shown < 40; ++k) if (ts[k] - ts[k-1] < 0.2e-6) { printf("t %.6e dt %.3e sw %.9f coil_a %.9f\n", ts[k], ts[k]-ts[k-1], v[k], va[k]); ++shown; }
  }
  if (cable) { auto a = r.node_voltage_V("coil_a"), b = r.node_voltage_V("coil_b"); double m = 0; for (int k = 0; k < a.size(); ++k) m = std::max(m, std::abs(a[k] - b[k])); printf("coil-end peak %.5f V\n", m); }
  printf("steps %ld rejected %ld time %.3f s  i_end %.6e  vmax %.4f balance %.2e\n", r.statistics().accepted_steps, r.statistics().rejected_steps, dt, i[i.size()-1], v.maxCoeff(), r.energy().balance_error);
}
// buckets
