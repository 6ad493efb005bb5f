// Diode, Zener and TVS models.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <boost/math/special_functions/lambert_w.hpp>
#include <cmath>

#include "coilkick/devices/diode.hpp"
#include "device_fixture.hpp"

using namespace coilkick::devices;

namespace {
DiodeParameters test_rectifier() {
  // An invented test diode: saturation current 5 nA, emission coefficient 1.8, series resistance 40 mΩ.
  DiodeParameters p;
  p.saturation_current_A = 5e-9;
  p.emission_coefficient = 1.8;
  p.series_resistance_ohm = 0.04;
  p.zero_bias_capacitance_F = 30e-12;
  p.transit_time_s = 3e-6;
  p.temperature_C = 25.0;
  p.nominal_temperature_C = 25.0;
  return p;
}
double current(const PhysicalDiode& d, double v) {
  double vv[2] = {v, 0.0}, i[2];
  d.currents(vv, i);
  return i[0];
}
}  // namespace

TEST_CASE("physical diode current equals the Shockley law with series resistance") {
  // Shockley, Bell Syst. Tech. J. 28 (1949): I = I_s·(exp(V_j/(n·V_T)) − 1), V = V_j + R_s·I.
  // Exact current from terminal voltage: Banwell & Jayakumar, Electron. Lett. 36(4), 291 (2000):
  //   I = (n·V_T/R_s)·W0((I_s·R_s/(n·V_T))·exp((V + I_s·R_s)/(n·V_T))) − I_s  (Boost.Math W0).
  const DiodeParameters p = test_rectifier();
  const PhysicalDiode d("d", "a", "k", p);
  const double nvt = p.emission_coefficient * thermal_voltage_V(25.0);
  const double is = p.saturation_current_A, rs = p.series_resistance_ohm;
  for (double v : {0.3, 0.5, 0.7, 0.9, 1.0, 1.2}) {
    CAPTURE(v);
    const double z = is * rs / nvt * std::exp((v + is * rs) / nvt);
    const double shockley = nvt / rs * boost::math::lambert_w0(z) - is;
    // The model adds its minimum conductance across the junction (1e-12 S, DEVELOPERS.md):
    // g_min·V_j with V_j = V − R_s·I (the second-order shift of V_j by g_min·R_s is ~1e-12).
    const double exact = shockley + p.minimum_conductance_S * (v - rs * shockley);
    // 1e-9 relative: both are double-precision solutions of the same equation.
    CHECK(current(d, v) == rel(exact).epsilon(1e-9));
  }
  // The explicit inverse V(I) = n·V_T·ln(1 + I/I_s) + R_s·I round-trips (plus g_min·V_j, below
  // 1.2e-12 A at these voltages).
  for (double i : {1e-6, 1e-3, 0.03, 1.0}) {
    CHECK(current(d, physical_forward_voltage_V(p, i)) == rel_or_abs(i, 1e-9, 1.5e-12));
  }
}

TEST_CASE("thermal voltage from the exact SI constants") {
  // k = 1.380649e-23 J/K and e = 1.602176634e-19 C (2019 SI, exact): V_T(25 °C) = 25.692579 mV.
  CHECK(thermal_voltage_V(25.0) == rel(25.692579e-3).epsilon(1e-7));
  CHECK(thermal_voltage_V(100.0) == rel(32.155579e-3).epsilon(1e-7));
}

TEST_CASE("diode Jacobian equals finite differences in every region") {
  DiodeParameters p = test_rectifier();
  p.breakdown_voltage_V = 12.0;
  p.breakdown_test_current_A = 20e-3;
  p.breakdown_dynamic_resistance_ohm = 5.0;
  p.critical_current_A = 5.0;  // so that the limited-exponential region is reachable below 2 V
  for (const auto level : {ModelLevel::physical, ModelLevel::pwl}) {
    const auto b = test_support::bench_for(make_diode("d", "a", "k", p, level));
    // forward, off, reverse leakage, breakdown, deep breakdown, limited exponential
    for (double v : {0.71, 0.2, -3.0, -12.3, -14.0, 1.9, 0.9}) {
      CAPTURE(v);
      CAPTURE(to_string(level));
      const auto cmp = test_support::jacobian_at(b, {v, 0.0});
      CAPTURE(cmp.row_name);
      CAPTURE(cmp.column_name);
      CHECK(cmp.worst_error < 1e-5);  // central differences: ~1e-8 truncation/round-off; 1e-5 margin
    }
  }
}

TEST_CASE("physical diode: current and conductance continuous where the exponential is limited") {
  DiodeParameters p = test_rectifier();
  p.series_resistance_ohm = 0.0;
  p.critical_current_A = 2.0;
  const PhysicalDiode d("d", "a", "k", p);
  const double nvt = p.emission_coefficient * thermal_voltage_V(25.0);
  const double vc = nvt * std::log(2.0 / p.saturation_current_A + 1.0);
  const double h = 1e-7;
  const double gl = (current(d, vc) - current(d, vc - h)) / h, gr = (current(d, vc + h) - current(d, vc)) / h;
  CHECK(current(d, vc + 1e-12) == rel(current(d, vc - 1e-12)).epsilon(1e-9));
  CHECK(gr == rel(gl).epsilon(1e-4));  // C¹: one-sided slopes agree to O(h·I'')
  // Beyond the limit the current grows linearly, so it stays finite far out.
  CHECK(std::isfinite(current(d, 1e3)));
  CHECK(current(d, 1e3) < 1e7);
}

TEST_CASE("pwl diode: continuous current at its segment boundaries") {
  DiodeParameters p = test_rectifier();
  p.breakdown_voltage_V = 15.0;
  p.breakdown_test_current_A = 10e-3;
  p.breakdown_dynamic_resistance_ohm = 8.0;
  const PwlDiode d("d", "a", "k", p);
  auto i = [&](double v) {
    double vv[2] = {v, 0.0}, out[2];
    d.currents(vv, out);
    return out[0];
  };
  const auto& s = d.segments();
  // Both sides of each knee carry ~0 A; a segment mismatch would be a jump there. The slope
  // times the 2e-12 V step is ~1e-11 A; any real jump would be orders above 1 nA.
  CHECK(std::abs(i(s.knee_voltage_V + 1e-12) - i(s.knee_voltage_V - 1e-12)) < 1e-9);
  CHECK(std::abs(i(-s.breakdown_knee_V - 1e-12) - i(-s.breakdown_knee_V + 1e-12)) < 1e-9);
}

TEST_CASE("pwl and physical levels agree at the point the segments were derived from") {
  DiodeParameters p = test_rectifier();
  p.pwl_reference_current_A = 0.5;
  p.breakdown_voltage_V = 15.0;
  p.breakdown_test_current_A = 10e-3;
  p.breakdown_dynamic_resistance_ohm = 8.0;
  const PhysicalDiode phys("d", "a", "k", p);
  const PwlDiode pwl("d", "a", "k", p);
  const double v_ref = physical_forward_voltage_V(p, 0.5);
  double vv[2] = {v_ref, 0.0}, i_pwl[2];
  pwl.currents(vv, i_pwl);
  // Same current (the pwl line is the tangent there); 1e-6 covers the 1e-12 S minimum conductance.
  CHECK(i_pwl[0] == rel(0.5).epsilon(1e-6));
  CHECK(current(phys, v_ref) == rel(0.5).epsilon(1e-9));
  // Reverse: both carry the test current at the breakdown voltage.
  double vr[2] = {-15.0, 0.0}, ir[2];
  pwl.currents(vr, ir);
  CHECK(-ir[0] == rel(10e-3).epsilon(1e-6));
  CHECK(-current(phys, -15.0) == rel(10e-3).epsilon(1e-4));  // + forward leakage I_s
}

TEST_CASE("breakdown voltage follows its temperature coefficient") {
  DiodeParameters p = test_rectifier();
  p.breakdown_voltage_V = 24.0;
  p.breakdown_test_current_A = 5e-3;
  p.breakdown_temperature_coefficient_per_K = 9e-4;
  p.temperature_C = 85.0;
  const auto c = derive_diode_curves(p);
  CHECK(c.breakdown_voltage_V == rel(24.0 * (1 + 9e-4 * 60.0)));
}

TEST_CASE("stored energy of a nonlinear junction charge equals the integral of v dq") {
  // W(V) = ∫0^V v·C(v) dv with C from the model's own capacitance (midpoint rule, 20000 steps:
  // error ~1e-9 relative for this smooth C). A wrong W shows as a failed energy balance.
  // Reverse: depletion charge only. Forward at 0.95 V with a transit time: the diffusion charge
  // grows as e^(v/(n·V_T)), the steepest integrand the model's quadrature meets (midpoint error
  // ~h²·(1/(n·V_T))²/24 ≈ 1e-9 relative here).
  struct Case {
    double transit_time_s, v_end;
  };
  for (const Case k : {Case{0.0, -30.0}, Case{50e-9, 0.95}}) {
    CAPTURE(k.v_end);
    DiodeParameters p = test_rectifier();
    p.transit_time_s = k.transit_time_s;
    p.zero_bias_capacitance_F = 2e-9;
    p.grading_coefficient = 0.4;
    const auto b = test_support::bench_for(make_diode("d", "a", "k", p, ModelLevel::physical));
    const auto& c = *b.circuit;
    auto w = c.make_workspace();
    const int ia = c.state_index("node:a");
    double integral = 0.0;
    const int n = 20000;
    for (int i = 0; i < n; ++i) {
      Eigen::VectorXd x = Eigen::VectorXd::Zero(c.state_count());
      const double v = (i + 0.5) * k.v_end / n;
      x[ia] = v;
      c.assemble(0.0, 0.0, x.data(), w);
      integral += (w.mass(ia, ia) - 10e-6 - c.stray_capacitance_F()) * v * (k.v_end / n);  // minus the bench capacitor
    }
    Eigen::VectorXd x = Eigen::VectorXd::Zero(c.state_count());
    x[ia] = k.v_end;
    CHECK(c.stored_energy_J(c.element_index("d"), 0.0, x.data(), w) == rel(integral).epsilon(1e-6));
  }
}

TEST_CASE("a diode's junction for the operating-point Newton: dV/d(ln I) of the Shockley law with series resistance") {
  // V = n·V_T·ln(1 + I/I_s) + R_s·I (Shockley 1949, with the series resistance) gives
  // dV/d(ln I) = n·V_T·I/(I + I_s) + R_s·I, reported as n·V_T + R_s·(I + I_s): the same to I_s/I
  // (below e^-10 on the exponential part). Checked against I/(dI/dV) from central differences
  // of the model's own current (h = 1 µV against n·V_T = 46 mV: truncation ~(h/n·V_T)² = 5e-10,
  // rounding ~1e-16·n·V_T/h = 5e-12), to 1e-7 plus that I_s/I.
  const DiodeParameters p = test_rectifier();
  const PhysicalDiode d("d", "a", "k", p);
  const double nvt = p.emission_coefficient * thermal_voltage_V(25.0);
  auto report = [&](double v) {
    const double values[2] = {v, 0.0};
    const int map[2] = {0, 1};
    std::vector<coilkick::engine::JunctionState> out;
    d.junction_states(coilkick::engine::ElementContext(0.0, values, values, map), out);
    REQUIRE(out.size() == 1);
    CHECK(out[0].anode == 0);
    CHECK(out[0].cathode == 1);
    return out[0];
  };
  for (double v : {0.7, 0.9, 1.1}) {
    CAPTURE(v);
    const auto j = report(v);
    CHECK(j.exponential);
    const double h = 1e-6, i = current(d, v);
    const double di_dv = (current(d, v + h) - current(d, v - h)) / (2.0 * h);
    CHECK(j.log_slope_V == rel(i / di_dv).epsilon(1e-7 + p.saturation_current_A / i));
    CHECK(j.log_slope_V == rel(nvt + p.series_resistance_ohm * (i + p.saturation_current_A)).epsilon(1e-7));
  }
  // Near the saturation current (V_j < 10·n·V_T) and on the limited exponential's straight
  // continuation (beyond the 1 kA critical current: V > 40 V with R_s = 40 mΩ) it is not on the
  // exponential; nor in reverse.
  CHECK_FALSE(report(0.3).exponential);
  CHECK_FALSE(report(100.0).exponential);
  CHECK_FALSE(report(-5.0).exponential);
}

TEST_CASE("a node held by leakage between a reverse diode and a forward junction: the DC point from a cold start") {
  // 12 V supply; the switch node held near 0.29 V by 400 Ω from the supply and 10 Ω to ground;
  // a diode from the switch node to `mid` (reverse biased) and a junction from the supply to
  // `mid` (forward): `mid` sits where the junction's forward current equals the diode's reverse
  // leakage, a fraction of a volt below the supply. From the cold guess (every node at 0 V) the
  // junction starts 12 V forward, and plain Newton walks it down one n·V_T per iteration
  // (measured: more than 30 iterations); with the junctions' extension of the step
  // (engine/operating_point.cpp) it arrives within 10, so Newton alone (no continuation after a
  // failure) is given 20. The point itself against the balance solved here by fixed-point
  // iteration of the Shockley laws (Shockley 1949) with each diode's minimum conductance.
  using namespace coilkick::engine;
  const DiodeParameters leak = test_rectifier();  // 5 nA, n = 1.8
  DiodeParameters forward;
  forward.saturation_current_A = 1e-14;
  forward.emission_coefficient = 1.3;
  const double vs = 12.0, r_top = 400.0, r_bottom = 10.0;
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::constant(vs));
  net.add_resistor("top", "supply", "sw", r_top);
  net.add_resistor("bottom", "sw", Network::ground, r_bottom);
  net.add(make_diode("blocking", "sw", "mid", leak, ModelLevel::physical));
  net.add(make_diode("held", "supply", "mid", forward, ModelLevel::physical));
  const Circuit c(net);
  OperatingPointOptions o;
  o.maximum_iterations = 20;
  o.minimum_conductance_S = 0.0;  // every node here has a DC path; the balance below has none
  const auto op = solve_by_newton(c, guess_state(c, 0.0), o);
  const double vt = thermal_voltage_V(25.0), g = leak.minimum_conductance_S;
  // The blocking diode's reverse current at these volts (no series-resistance drop at nanoamperes).
  double sw = vs * r_bottom / (r_top + r_bottom), mid = vs - 0.3;
  for (int k = 0; k < 200; ++k) {
    const double reverse = leak.saturation_current_A * (1.0 - std::exp(-(mid - sw) / (leak.emission_coefficient * vt))) + g * (mid - sw);
    // The held junction carries it (less its own minimum conductance's share).
    double v_held = vs - mid;
    v_held = forward.emission_coefficient * vt * std::log1p((reverse - g * v_held) / forward.saturation_current_A);
    mid = vs - v_held;
    sw = (vs / r_top + reverse) / (1.0 / r_top + 1.0 / r_bottom);
  }
  // 1e-8 V: ten times the Newton step at which the solver stops (1e-9 V); its convergence is
  // quadratic there, so the point is far closer than that step.
  CHECK(op.values[c.state_index("node:mid")] == rel(mid).epsilon(1e-8 / mid));
  CHECK(op.values[c.state_index("node:sw")] == rel(sw).epsilon(1e-8 / sw));
  CHECK(vs - mid > 0.2);  // a fraction of a volt: the junction carries nanoamperes
  CHECK(vs - mid < 0.5);
}

TEST_CASE("pwl diode: its junction holds the physical depletion capacitance at the breakdown voltage, as a fixed capacitor") {
  // A reverse-biased junction's depletion capacitance C_j0/(1 + V_R/V_bi)^m (Sedra & Smith,
  // Microelectronic Circuits, 7th ed., ch. 3), here at V_R = the breakdown voltage, held as a
  // constant capacitor at the pwl level (without it a pwl clamp node has only the board's
  // picofarads against milliohms: a femtosecond pole). Against the physical model's ∂q/∂v there
  // (its diffusion charge adds τ·I_s·e^(u/(n·V_T))/(n·V_T), nothing measurable 24 V reverse;
  // bound 1e-15 F of 5.1 pF), and the same capacitance at every other bias.
  DiodeParameters p = test_rectifier();
  p.breakdown_voltage_V = 24.0;
  p.breakdown_test_current_A = 1e-3;
  const PwlDiode pwl("d", "a", "k", p);
  const PhysicalDiode phys("d", "a", "k", p);
  const double expected = p.zero_bias_capacitance_F / std::pow(1.0 + 24.0 / p.built_in_potential_V, p.grading_coefficient);
  auto capacitance = [](const auto& model, double u) {
    using D = Dual<1>;
    std::array<D, 2> v{D::variable(u, 0), D(0.0)}, q;
    model.charges(v.data(), q.data());
    CHECK(q[0].v + q[1].v == 0.0);  // charge neutrality
    return q[0].g[0];
  };
  CHECK(pwl.fixed_capacitance_F() == rel(expected).epsilon(1e-12));
  CHECK(capacitance(pwl, -24.0) == rel_or_abs(capacitance(phys, -24.0), 1e-12, 1e-15));
  for (const double u : {-5.0, 0.0, 0.6}) CHECK(capacitance(pwl, u) == rel(expected).epsilon(1e-12));
  // Without a breakdown: the zero-bias value.
  p.breakdown_voltage_V = std::numeric_limits<double>::infinity();
  CHECK(PwlDiode("d", "a", "k", p).fixed_capacitance_F() == rel(p.zero_bias_capacitance_F).epsilon(1e-12));
}
