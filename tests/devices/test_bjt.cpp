// Bipolar transistor models.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "coilkick/devices/bjt.hpp"
#include "coilkick/devices/darlington.hpp"
#include "coilkick/devices/dual.hpp"
#include "device_fixture.hpp"

using namespace coilkick::devices;
using namespace coilkick::engine;

namespace {
BjtParameters small_npn() {
  // Typical of a 40 V small-signal NPN, from memory (values also in models/).
  BjtParameters p;
  p.saturation_current_A = 1e-14;
  p.forward_beta = 200;
  p.reverse_beta = 3;
  p.forward_early_voltage_V = 80;
  p.collector_resistance_ohm = 1.5;
  p.base_emitter_capacitance_F = 20e-12;
  p.base_collector_capacitance_F = 6e-12;
  p.forward_transit_time_s = 0.4e-9;
  p.reverse_transit_time_s = 50e-9;
  p.collector_emitter_breakdown_voltage_V = 55.0;
  p.breakdown_test_current_A = 1e-3;
  p.breakdown_dynamic_resistance_ohm = 20.0;
  p.pwl_reference_collector_current_A = 0.05;
  return p;
}
std::array<double, 3> currents(const coilkick::engine::Element& e, std::array<double, 3> v) {
  std::array<double, 3> i{};
  if (auto* p = dynamic_cast<const PhysicalBjt*>(&e)) p->currents(v.data(), i.data());
  if (auto* p = dynamic_cast<const PwlBjt*>(&e)) p->currents(v.data(), i.data());
  return i;
}
}  // namespace

TEST_CASE("Ebers-Moll: forward-active current gain is the forward beta (Ebers & Moll 1954)") {
  BjtParameters p = small_npn();
  p.collector_resistance_ohm = 0.0;  // terminal voltages are then the junction voltages
  BjtParameters with_early = p;
  p.forward_early_voltage_V = std::numeric_limits<double>::infinity();
  const PhysicalBjt q("q", "c", "b", "e", p);
  const auto i = currents(q, {5.0, 0.65, 0.0});  // V_BC = −4.35 V: forward active
  // 1e-6: the reverse-junction leakage I_s and the 1e-12 S minimum conductance perturb the ratio.
  CHECK(i[0] / i[1] == rel(200.0).epsilon(1e-6));
  // Early effect: I_C grows by the factor (1 + V_CB/V_A) (J. M. Early, Proc. IRE 40, 1952).
  const PhysicalBjt qe("q", "c", "b", "e", with_early);
  const auto ie = currents(qe, {5.0, 0.65, 0.0});
  CHECK(ie[0] / i[0] == rel(1.0 + 4.35 / 80.0).epsilon(1e-6));
}

TEST_CASE("common practice: small-signal V_BE about 0.6-0.75 V at 1 mA") {
  const PhysicalBjt q("q", "c", "b", "e", small_npn());
  double lo = 0.3, hi = 1.0;  // bisection on V_BE for I_C = 1 mA at V_CE = 5 V
  for (int k = 0; k < 60; ++k) {
    const double m = 0.5 * (lo + hi);
    (currents(q, {5.0, m, 0.0})[0] < 1e-3 ? lo : hi) = m;
  }
  CHECK(lo > 0.6);
  CHECK(lo < 0.75);
}

TEST_CASE("common practice: V_CE(sat) about 0.05-0.3 V at forced gain 10") {
  const BjtParameters p = small_npn();
  for (double ic : {10e-3, 50e-3, 100e-3}) {
    const auto b = physical_bias_at(p, ic, ic / 10.0);
    CAPTURE(ic);
    CHECK(b.collector_emitter_V > 0.05);
    CHECK(b.collector_emitter_V < 0.3);
  }
  // The Ebers–Moll saturation voltage (derived in docs/derivations.md, "Saturation voltage of a
  // bipolar transistor"; terms of the order of the saturation current alone neglected):
  // V_CE(sat) = V_T·ln[(1 + (β_f + 1)/β_R)/(1 − β_f/β_F)] with β_f = I_C/I_B; here without Early.
  BjtParameters q = p;
  q.forward_early_voltage_V = std::numeric_limits<double>::infinity();
  q.collector_resistance_ohm = 0.0;
  const double vt = thermal_voltage_V(25.0);
  const double expect = vt * std::log((1.0 + 11.0 / 3.0) / (1.0 - 10.0 / 200.0));
  CHECK(physical_bias_at(q, 50e-3, 5e-3).collector_emitter_V == rel(expect).epsilon(1e-6));
}

TEST_CASE("NPN and PNP are mirror images") {
  BjtParameters n = small_npn(), pp = small_npn();
  pp.polarity = Polarity::p;
  for (const auto level : {ModelLevel::physical, ModelLevel::pwl}) {
    const auto qn = make_bjt("q", "c", "b", "e", n, level);
    const auto qp = make_bjt("q", "c", "b", "e", pp, level);
    for (const auto& v : std::vector<std::array<double, 3>>{{5, 0.7, 0}, {0.1, 0.75, 0}, {56, 0, 0}, {-2, 0.3, 0.1}}) {
      const auto in = currents(*qn, v);
      const auto ip = currents(*qp, {-v[0], -v[1], -v[2]});
      // Relative 1e-12 (round-off), absolute 1e-24 A for currents that are exactly zero.
      for (int k = 0; k < 3; ++k) CHECK(ip[static_cast<std::size_t>(k)] == rel_or_abs(-in[static_cast<std::size_t>(k)], 1e-12, 1e-24));
    }
  }
}

TEST_CASE("BJT Jacobian equals finite differences in every region, NPN and PNP, both levels") {
  BjtParameters p = small_npn();
  p.critical_current_A = 2.0;  // so that the limited exponential is reached at V_BE = 0.95 V
  // cut-off, active, saturation, reverse active, breakdown, limited exponential
  test_support::check_jacobian_in_regions(
      p, [](const BjtParameters& q, ModelLevel l) { return make_bjt("q", "c", "b", "e", q, l); },
      {{5, 0.2, 0}, {5, 0.68, 0}, {0.1, 0.76, 0}, {-1, 0.3, 0.2}, {61, 0.1, 0}, {1, 0.95, 0}});
}

TEST_CASE("pwl and physical BJT agree at the saturated point the segments come from") {
  const BjtParameters p = small_npn();
  const PwlBjt pwl("q", "c", "b", "e", p);
  const PhysicalBjt phys("q", "c", "b", "e", p);
  const double ic = p.pwl_reference_collector_current_A, ib = ic / p.pwl_forced_beta;
  const auto bias = physical_bias_at(p, ic, ib);
  const std::array<double, 3> v{bias.collector_emitter_V, bias.base_emitter_V, 0.0};
  const auto i_pwl = currents(pwl, v), i_phys = currents(phys, v);
  // 1e-4: the physical point carries the 55 V breakdown knee's leakage and the minimum conductance.
  CHECK(i_pwl[0] == rel(ic).epsilon(1e-4));
  CHECK(i_pwl[1] == rel(ib).epsilon(1e-4));
  CHECK(i_phys[0] == rel(ic).epsilon(1e-4));
  CHECK(i_phys[1] == rel(ib).epsilon(1e-4));
}

TEST_CASE("storage time of a saturated NPN against the charge-control estimate") {
  // Charge-control analysis of the Ebers–Moll model (J. L. Moll, "Large-signal transient
  // response of junction transistors", Proc. IRE 42, 1773 (1954), from memory):
  //   t_s = τ_s·ln[(I_B1 + I_B2)/(I_C/β_F + I_B2)],  τ_s = (α_F·τ_F + α_R·τ_R)/(1 − α_F·α_R),
  // for a switch held at I_C by its load, base current switched from +I_B1 to −I_B2; storage ends
  // when the collector junction leaves forward bias (V_BC = 0).
  BjtParameters p = small_npn();
  p.base_emitter_capacitance_F = 0.0;  // the estimate has no depletion charge
  p.base_collector_capacitance_F = 0.0;
  p.forward_early_voltage_V = std::numeric_limits<double>::infinity();
  const double ic = 0.1, ib1 = 10e-3, ib2 = 10e-3, vcc = 12.0, rl = vcc / ic;
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::constant(vcc));
  net.add_resistor("load", "supply", "c", rl);
  net.add_current_source("drive", Network::ground, "b", Waveform::edge(ib1, -ib2, 1e-6, 1e-10));
  net.add(make_bjt("q", "c", "b", Network::ground, p, ModelLevel::physical));
  Circuit c(net);
  const auto on = solve_operating_point(c, 0.0);
  TransientOptions o;
  o.stop_time_s = 5e-6;
  o.relative_tolerance = 1e-8;
  const auto r = simulate(c, on, o,
                          {EventSpec::crossing("desaturated", Probe::voltage_between(c, "b", "c"), 0.0,
                                               Direction::falling, 1e-6, true)});
  REQUIRE(r.event("desaturated").time_s.has_value());
  const double ts = *r.event("desaturated").time_s - 1e-6;
  const double af = 200.0 / 201.0, ar = 3.0 / 4.0;
  const double i_c_sat = (vcc - physical_bias_at(p, ic, ib1).collector_emitter_V) / rl;
  const double tau_s = (af * p.forward_transit_time_s + ar * p.reverse_transit_time_s) / (1 - af * ar);
  const double estimate = tau_s * std::log((ib1 + ib2) / (i_c_sat / 200.0 + ib2));
  CAPTURE(ts);
  CAPTURE(estimate);
  // 3 %: the estimate keeps one time constant of the two the charge equations have; solving
  // those equations with scipy gave 0.3 % difference; the 0.1 ns drive edge adds < 0.2 %.
  CHECK(ts == rel(estimate).epsilon(0.03));
  CHECK(std::abs(r.energy().balance_error) < 1e-3);
}

TEST_CASE("pwl BJT: continuous current across the knee and the active/saturation crossover") {
  const PwlBjt q("q", "c", "b", "e", small_npn());
  const auto& s = q.segments();
  const double e = 1e-12;
  // Base–emitter knee (collector well above saturation).
  const auto a = currents(q, {5.0, s.be_knee_V - e, 0.0}), b = currents(q, {5.0, s.be_knee_V + e, 0.0});
  // At the knee both sides carry ~0 A; a mismatch of the segments would appear as a jump there.
  // The slope times the 2e-12 V step is ~1e-11 A; any jump would be orders above 1 nA.
  CHECK(std::abs(b[1] - a[1]) < 1e-9);
  CHECK(std::abs(b[0] - a[0]) < 1e-9);
  // Crossover where the saturation line meets β·I_B, at V_BE giving I_B = 1 mA.
  const double vbe = s.be_knee_V + 1e-3 * s.be_resistance_ohm;
  const double vx = s.sat_knee_V + s.beta_f * 1e-3 * s.sat_resistance_ohm;
  const auto l = currents(q, {vx - e, vbe, 0.0}), r = currents(q, {vx + e, vbe, 0.0});
  CHECK(r[0] == rel(l[0]).epsilon(1e-9));
}

TEST_CASE("depletion charge: capacitance continuous where the singular law is linearised") {
  // Getreu 1976 (from memory): C_j = C_j0/(1 − v/V_bi)^m below f_c·V_bi (f_c the linearisation fraction), linear above.
  const DepletionParameters d{20e-12, 0.75, 0.33, 0.5};
  using D = Dual<1>;
  const double vf = 0.5 * 0.75, e = 1e-9;
  const D below = depletion_charge_C(D::variable(vf - e, 0), d), above = depletion_charge_C(D::variable(vf + e, 0), d);
  CHECK(above.v == rel(below.v).epsilon(1e-8));
  CHECK(above.g[0] == rel(below.g[0]).epsilon(1e-7));
  CHECK(below.g[0] == rel(20e-12 / std::pow(1.0 - 0.5, 0.33)).epsilon(1e-6));
}

TEST_CASE("Darlington pair saturates about one V_BE above a transistor's V_CE(sat) (common practice)") {
  DarlingtonParameters p;
  p.transistor = small_npn();
  p.transistor.forward_beta = 60;
  p.transistor.collector_resistance_ohm = 0.1;
  p.transistor.collector_emitter_breakdown_voltage_V = 120.0;
  Network net;
  net.add_voltage_source("supply", "supply", Waveform::constant(24.0));
  net.add_resistor("load", "supply", "c", 24.0);  // 1 A
  net.add_voltage_source("drive", "in", Waveform::constant(5.0));
  net.add_resistor("base_resistor", "in", "b", 2.2e3);
  add_darlington(net, "pair", "c", "b", Network::ground, p, ModelLevel::physical);
  Circuit c(net);
  const auto op = solve_operating_point(c, 0.0);
  const double vce = get_state(c, op, "node:c");
  CHECK(vce > 0.7);  // a Darlington cannot saturate below the output V_BE
  CHECK(vce < 1.3);
}

TEST_CASE("pwl BJT: its junctions hold the physical model's zero-bias capacitances, as fixed capacitors") {
  // The pwl level keeps the depletion capacitances at zero bias (C_je, C_jc; a junction's
  // depletion capacitance, Sedra & Smith, Microelectronic Circuits, 7th ed., ch. 3) as constant
  // capacitors, as its MOSFET keeps its gate capacitances: without them a fast loop through its
  // knees (an active clamp on a Darlington) has only the board's picofarads and oscillates at
  // picoseconds. At zero bias the physical model's ∂q/∂v is the same up to its diffusion charge
  // there, τ·I_s/(n·V_T) ≤ 2e-20 F (the 50 ns reverse transit time; bound 1e-19 F); at any other
  // bias the pwl one is unchanged.
  for (const auto polarity : {Polarity::n, Polarity::p}) {
    BjtParameters p = small_npn();
    p.polarity = polarity;
    const PwlBjt pwl("q", "c", "b", "e", p);
    const PhysicalBjt phys("q", "c", "b", "e", p);
    using D = Dual<3>;
    auto capacitances = [](const auto& model, std::array<double, 3> at) {
      std::array<D, 3> v, q;
      for (int k = 0; k < 3; ++k) v[static_cast<std::size_t>(k)] = D::variable(at[static_cast<std::size_t>(k)], k);
      model.charges(v.data(), q.data());
      return q;
    };
    const auto q_pwl = capacitances(pwl, {0.0, 0.0, 0.0}), q_phys = capacitances(phys, {0.0, 0.0, 0.0});
    for (std::size_t k = 0; k < 3; ++k) {
      for (std::size_t j = 0; j < 3; ++j) CHECK(q_pwl[k].g[j] == rel_or_abs(q_phys[k].g[j], 1e-12, 1e-19));
    }
    // ∂q_base/∂v_base = C_je + C_jc; the charges sum to zero (charge neutrality).
    CHECK(q_pwl[1].g[1] == rel(p.base_emitter_capacitance_F + p.base_collector_capacitance_F).epsilon(1e-12));
    const auto q_far = capacitances(pwl, {12.0, 0.7, 0.0});
    CHECK(q_far[1].g[1] == rel(q_pwl[1].g[1]).epsilon(1e-12));
    CHECK(std::abs(q_far[0].v + q_far[1].v + q_far[2].v) <= 1e-24);
  }
}
