// MOSFET models.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include "coilkick/devices/mosfet.hpp"
#include "device_fixture.hpp"

using namespace coilkick::devices;

namespace {
MosfetParameters logic_nmos() {
  // Typical of a 60 V logic-level N-MOSFET, from memory.
  MosfetParameters p;
  p.threshold_voltage_V = 1.8;
  p.transconductance_parameter_A_per_V2 = 2.0;
  p.channel_length_modulation_per_V = 0.01;
  p.gate_source_capacitance_F = 300e-12;
  p.gate_drain_capacitance_F = 40e-12;
  p.body_diode.saturation_current_A = 1e-12;
  p.body_diode.emission_coefficient = 1.2;
  p.body_diode.zero_bias_capacitance_F = 100e-12;
  p.body_diode.transit_time_s = 20e-9;
  p.drain_source_breakdown_voltage_V = 65.0;
  p.pwl_gate_drive_V = 4.5;
  return p;
}
std::array<double, 3> currents(const coilkick::engine::Element& e, std::array<double, 3> v) {
  std::array<double, 3> i{};
  if (auto* p = dynamic_cast<const PhysicalMosfet*>(&e)) p->currents(v.data(), i.data());
  if (auto* p = dynamic_cast<const PwlMosfet*>(&e)) p->currents(v.data(), i.data());
  return i;
}
}  // namespace

TEST_CASE("square-law channel (Shichman & Hodges 1968): saturation and ohmic values") {
  MosfetParameters p = logic_nmos();
  p.channel_length_modulation_per_V = 0.0;
  const PhysicalMosfet m("m", "d", "g", "s", p);
  // Saturated: K/2·(V_GS − V_th)² = 1·(2.7)² = 7.29 A at V_GS = 4.5 V, V_DS = 10 V.
  CHECK(currents(m, {10.0, 4.5, 0.0})[0] == rel(7.29).epsilon(1e-9));
  // Ohmic: K·(V_ov·V_DS − V_DS²/2) at V_DS = 0.1 V: 2·(0.27 − 0.005) = 0.53 A.
  CHECK(currents(m, {0.1, 4.5, 0.0})[0] == rel(0.53).epsilon(1e-9));
  // Below threshold: only the minimum conductances (1e-12 S each, drain–source and body diode)
  // at 10 V, ~1e-11 A.
  CHECK(std::abs(currents(m, {10.0, 1.0, 0.0})[0]) < 5e-11);
}

TEST_CASE("MOSFET current and conductance are continuous at the ohmic/saturated boundary") {
  const PhysicalMosfet m("m", "d", "g", "s", logic_nmos());
  const double vov = 4.5 - 1.8, h = 1e-7;
  const double il = currents(m, {vov - h, 4.5, 0})[0], ic = currents(m, {vov, 4.5, 0})[0],
               ir = currents(m, {vov + h, 4.5, 0})[0];
  CHECK(ir == rel(il).epsilon(1e-6));
  CHECK((ir - ic) / h == rel((ic - il) / h).epsilon(1e-4));
}

TEST_CASE("N and P MOSFETs are mirror images") {
  MosfetParameters n = logic_nmos(), pp = logic_nmos();
  pp.polarity = Polarity::p;
  for (const auto level : {ModelLevel::physical, ModelLevel::pwl}) {
    const auto mn = make_mosfet("m", "d", "g", "s", n, level);
    const auto mp = make_mosfet("m", "d", "g", "s", pp, level);
    for (const auto& v : std::vector<std::array<double, 3>>{{10, 4.5, 0}, {0.2, 5, 0}, {-0.8, 0, 0}, {66, 0, 0}}) {
      const auto in = currents(*mn, v), ip = currents(*mp, {-v[0], -v[1], -v[2]});
      // Relative 1e-12 (round-off), absolute 1e-24 A for currents that are exactly zero.
      for (int k = 0; k < 3; ++k) CHECK(ip[static_cast<std::size_t>(k)] == rel_or_abs(-in[static_cast<std::size_t>(k)], 1e-12, 1e-24));
    }
  }
}

TEST_CASE("MOSFET Jacobian equals finite differences in every region") {
  // off, saturated, ohmic, reversed channel, body diode on, avalanche
  test_support::check_jacobian_in_regions(
      logic_nmos(), [](const MosfetParameters& q, ModelLevel l) { return make_mosfet("m", "d", "g", "s", q, l); },
      {{10, 1.0, 0}, {10, 3.5, 0}, {0.3, 4.5, 0}, {-0.3, 4.5, 0}, {-0.8, 0, 0}, {66, 0, 0}});
}

TEST_CASE("pwl and physical MOSFET agree at the gate drive the segments come from") {
  const MosfetParameters p = logic_nmos();
  const PwlMosfet pwl("m", "d", "g", "s", p);
  const PhysicalMosfet phys("m", "d", "g", "s", p);
  // Small V_DS: the ohmic slope K·V_ov; 1 % covers the V_DS²/2 and λ terms at 10 mV.
  const double i_pwl = currents(pwl, {0.01, 4.5, 0})[0], i_phys = currents(phys, {0.01, 4.5, 0})[0];
  CHECK(i_pwl == rel(i_phys).epsilon(0.01));
  // Saturation current at the drive voltage, λ = 0 there by V_DS → the pwl g·V_ov = K·V_ov²/2.
  MosfetParameters q = p;
  q.channel_length_modulation_per_V = 0.0;
  CHECK(currents(PwlMosfet("m", "d", "g", "s", q), {20, 4.5, 0})[0] ==
        rel(currents(PhysicalMosfet("m", "d", "g", "s", q), {20, 4.5, 0})[0]).epsilon(1e-9));
}
