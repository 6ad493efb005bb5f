// Series RLC after switch-off: coil (L, R) from a supply into a capacitor C across the open
// switch, carrying I0 at t = 0 with the capacitor empty.
// Closed form: second-order natural/step response, Nilsson & Riedel, "Electric Circuits",
// 10th ed. (Pearson 2015), ch. 8 (chapter from memory): α = R/(2L), ω0 = 1/√(LC),
// ωd = √(ω0² − α²). With I0 = Vs/R and v(0) = 0 the capacitor voltage peaks where the current
// first crosses zero, t_pk = (π − atan(ωd/α))/ωd, at V_pk = Vs + I0·√(L/C)·e^(−α·t_pk)
// (derived from that response; successive maxima are one period 2π/ωd apart and shrink by
// e^(−α·2π/ωd)).
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "coilkick/coilkick.hpp"

using namespace coilkick::engine;

namespace {
struct Rlc {
  double vs, r, l, c, i0;
};

TransientResult run_rlc(const Rlc& p, double stop_s, Circuit*& keep) {
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::constant(p.vs));
  net.add_coil("coil", "supply", "sw", {p.l, p.r});
  net.add_capacitor("c", "sw", Network::ground, p.c);
  net.set_stray_capacitance_F(0.0);
  keep = new Circuit(net);
  CircuitState s0 = zero_state(*keep, 0.0);
  set_state(*keep, s0, "coil.current", p.i0);
  TransientOptions o;
  o.stop_time_s = stop_s;
  o.relative_tolerance = 1e-10;
  o.voltage_tolerance_V = 1e-9;
  o.current_tolerance_A = 1e-13;
  return simulate(*keep, s0, o,
                  {EventSpec::maximum("peak", Probe::node_voltage(*keep, "sw")),
                   EventSpec::crossing("current_zero", Probe::state(*keep, "coil.current"), 0.0,
                                       Direction::falling),
                   EventSpec::crossing("current_back", Probe::state(*keep, "coil.current"), 0.0,
                                       Direction::rising)});
}
}  // namespace

TEST_CASE("series RLC: peak voltage, time of peak, ringing frequency and damping") {
  // 12 V / 400 ohm / 0.6 H coil, 30 mA, 100 nF across the switch (invented values).
  // The hand-evaluated closed form gives 76.1802809 V at 406.143313 µs and 647.578 Hz.
  const Rlc p{12.0, 400.0, 0.6, 100e-9, 0.03};
  const double alpha = p.r / (2 * p.l), w0 = 1.0 / std::sqrt(p.l * p.c);
  const double wd = std::sqrt(w0 * w0 - alpha * alpha);
  const double t_pk = (M_PI - std::atan(wd / alpha)) / wd;
  const double v_pk = p.vs + p.i0 * std::sqrt(p.l / p.c) * std::exp(-alpha * t_pk);
  CHECK(v_pk == rel(76.1802809).epsilon(1e-8));
  CHECK(t_pk == rel(406.143313e-6).epsilon(1e-8));

  Circuit* c = nullptr;
  const auto res = run_rlc(p, 6e-3, c);
  std::unique_ptr<Circuit> owner(c);
  const auto& peak = res.event("peak");
  // Peak value: 1e-7 relative (run tolerance 1e-10, dense-output peak search).
  CHECK(peak.value == rel(v_pk).epsilon(1e-7));
  // Peak time: the peak is flat (dv/dt = 0), so its time is less well defined than its value:
  // δt ≈ √(2·δv/|v''|); 1e-5 relative covers δv = 1e-8 V.
  CHECK(*peak.time_s == rel(t_pk).epsilon(1e-5));
  CHECK(*res.event("current_zero").time_s == rel(t_pk).epsilon(1e-8));
  // Half a period later the current comes back through zero.
  const double half_period = *res.event("current_back").time_s - *res.event("current_zero").time_s;
  CHECK(1.0 / (2.0 * half_period) == rel(wd / (2 * M_PI)).epsilon(1e-7));
  CHECK(wd / (2 * M_PI) == rel(647.578).epsilon(1e-6));
  // Damping: the second maximum (one period later) shrinks by e^(−α·T).
  const double period = 2 * M_PI / wd;
  const Eigen::VectorXd s2 = res.sample(t_pk + period);
  const double v2 = s2[c->state_index("node:sw")];
  CHECK((v2 - p.vs) / (v_pk - p.vs) == rel(std::exp(-alpha * period)).epsilon(1e-5));
}

TEST_CASE("lossless LC limit: V_pk = Vs + sqrt(Vs^2 + I0^2 L/C) (energy argument)") {
  // R = 0: ½·L·I0² + Vs·C·V_pk = ½·C·V_pk² gives the peak; hand value 86.4580418759 V at
  // 424.414976 µs for 12 V, 0.6 H, 100 nF, 30 mA.
  const Rlc p{12.0, 0.0, 0.6, 100e-9, 0.03};
  Circuit* c = nullptr;
  const auto res = run_rlc(p, 1e-3, c);
  std::unique_ptr<Circuit> owner(c);
  const double v_pk = p.vs + std::sqrt(p.vs * p.vs + p.i0 * p.i0 * p.l / p.c);
  CHECK(v_pk == rel(86.4580418759).epsilon(1e-10));
  CHECK(res.event("peak").value == rel(v_pk).epsilon(1e-7));
  CHECK(*res.event("current_zero").time_s == rel(424.414976e-6).epsilon(1e-7));
}
