// First-order responses against closed forms.
// Source: first-order RL and RC natural and step responses — Nilsson & Riedel, "Electric
// Circuits", 10th ed. (Pearson 2015), ch. 7 (chapter from memory); the constant-clamp decay
// i(t) = (I0 + Vc/R)·e^(−t/τ) − Vc/R with τ = L/R is that chapter's general solution
// x(t) = x_f + (x_0 − x_f)·e^(−t/τ) with x_f = −Vc/R.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "closed_forms.hpp"
#include "coilkick/coilkick.hpp"

using namespace coilkick::engine;

namespace {
// Coil (L, R) with an ideal constant clamp voltage Vc opposing its current, carrying I0 at t=0.
struct ClampedCoil {
  Network net;
  explicit ClampedCoil(double l, double r, double vc) {
    net.add_voltage_source("clamp", "k", Waveform::constant(vc));
    net.add_coil("coil", Network::ground, "k", {l, r});
  }
};
}  // namespace

TEST_CASE("RL decay into an ideal constant clamp: current and threshold time (closed form)") {
  // 12 V / 400 ohm / 0.6 H relay-like coil, I0 = 30 mA, release threshold 3 mA (invented values).
  const double l = 0.6, r = 400.0, i0 = 0.03, ith = 0.003, tau = l / r;
  for (const double vc : {0.7, 15.7}) {
    CAPTURE(vc);
    ClampedCoil cc(l, r, vc);
    Circuit c(cc.net);
    CircuitState s0 = zero_state(c, 0.0);
    set_state(c, s0, "coil.current", i0);
    TransientOptions o;
    o.stop_time_s = 6e-3;
    o.relative_tolerance = 1e-9;
    o.current_tolerance_A = 1e-12;
    const auto res = simulate(c, s0, o,
                              {EventSpec::crossing("threshold", Probe::state(c, "coil.current"), ith,
                                                   Direction::falling)});
    const double a = vc / r;
    const double t_th = test_support::threshold_time_s(tau, i0, ith, a);
    // Tolerance 1e-6 relative: the run asks 1e-9 per step; a few thousand steps accumulate
    // far less than 1e-6, and events are bisected to 1e-13 s.
    REQUIRE(res.event("threshold").time_s.has_value());
    CHECK(*res.event("threshold").time_s == rel(t_th).epsilon(1e-6));
    // Spot checks of the whole waveform at every accepted point before the current reverses.
    const auto i = res.state("coil.current");
    double worst = 0.0;
    for (std::size_t k = 0; k < res.times_s().size(); ++k) {
      const double t = res.times_s()[k];
      const double exact = (i0 + a) * std::exp(-t / tau) - a;
      worst = std::max(worst, std::abs(i[static_cast<Eigen::Index>(k)] - exact));
    }
    CHECK(worst < 1e-8 * i0);  // 1e-8 of I0: tolerance 1e-9 plus error growth over the run
  }
}

TEST_CASE("the threshold-time and clamp-charge closed forms, evaluated by hand (worked here, not published)") {
  // Guards the helpers every reference test uses (closed_forms.hpp) against a wrong formula. Same
  // coil, 30 mA to 3 mA, τ = 1.5 ms: 0.7 V clamp, V_c/R = 1.75 mA: 1.5 ms·ln(31.75/4.75) =
  // 1.5 ms·1.899748... = 2.84962216 ms; 15.7 V, V_c/R = 39.25 mA: 1.5 ms·ln(69.25/42.25) =
  // 0.741178187 ms. Charge to zero on 15.7 V: 1.5 ms·[30 mA − 39.25 mA·ln(1 + 30/39.25)]
  // = 1.5 ms·(30 − 22.28...) mA. Tolerance 1e-8: eight digits written down.
  CHECK(test_support::threshold_time_s(1.5e-3, 0.03, 0.003, 0.7 / 400.0) == rel(2.84962216e-3).epsilon(1e-8));
  CHECK(test_support::threshold_time_s(1.5e-3, 0.03, 0.003, 15.7 / 400.0) == rel(0.741178187e-3).epsilon(1e-8));
  CHECK(test_support::clamp_charge_C(1.5e-3, 0.03, 15.7 / 400.0) ==
        rel(1.5e-3 * (0.03 - 0.03925 * std::log(1.0 + 0.03 / 0.03925))).epsilon(1e-12));
}

TEST_CASE("RC charge through a resistor from a ramp edge (closed form)") {
  // Source ramps 0 -> 5 V over T_r = 1 µs starting at 10 µs; R = 1 kohm, C = 10 nF, τ = 10 µs.
  // Ramp response of a first-order RC (Nilsson & Riedel, ch. 7, by superposition of two ramps):
  //   v(t) = (V/T_r)·[r(t') − r(t' − T_r)],  r(u) = u − τ(1 − e^(−u/τ)) for u > 0, else 0.
  const double v = 5.0, tr = 1e-6, t0 = 10e-6, rr = 1e3, cc = 10e-9, tau = rr * cc;
  Network net;
  net.add_voltage_source("source", "in", Waveform::edge(0.0, v, t0, tr));
  net.add_resistor("r", "in", "out", rr);
  net.add_capacitor("c", "out", Network::ground, cc);
  net.set_stray_capacitance_F(0.0);
  Circuit c(net);
  TransientOptions o;
  o.stop_time_s = 80e-6;
  o.relative_tolerance = 1e-9;
  o.voltage_tolerance_V = 1e-10;
  const auto res = simulate(c, zero_state(c, 0.0), o);
  auto ramp = [&](double u) { return u > 0 ? u - tau * (1.0 - std::exp(-u / tau)) : 0.0; };
  const auto out = res.node_voltage_V("out");
  double worst = 0.0;
  for (std::size_t k = 0; k < res.times_s().size(); ++k) {
    const double tp = res.times_s()[k] - t0;
    const double exact = v / tr * (ramp(tp) - ramp(tp - tr));
    worst = std::max(worst, std::abs(out[static_cast<Eigen::Index>(k)] - exact));
  }
  CHECK(worst < 1e-7);  // 1e-7 V of 5 V: tolerance 1e-9 relative, 1e-10 V absolute
  // Uniform resampling by Hermite interpolation stays close to the closed form too.
  const auto u = res.resample(1e-6);
  double worst_u = 0.0;
  const int col = c.state_index("node:out");
  for (std::size_t k = 0; k < u.times_s.size(); ++k) {
    const double tp = u.times_s[k] - t0;
    worst_u = std::max(worst_u, std::abs(u.states(static_cast<Eigen::Index>(k), col) - v / tr * (ramp(tp) - ramp(tp - tr))));
  }
  CHECK(worst_u < 1e-4);  // third-order interpolation between steps of up to ~several µs
}
