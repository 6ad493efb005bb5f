// The relay armature model: the magnetic force against closed forms, the element's Jacobian and
// energy account, exact reduction to the fixed coil, and the reference relay of the project's
// physics notes (an invented relay whose release was solved independently with scipy).
#include <doctest/doctest.h>

#include <cmath>
#include <memory>

#include "coilkick/engine/jacobian_check.hpp"
#include "coilkick/engine/network.hpp"
#include "coilkick/engine/operating_point.hpp"
#include "coilkick/engine/transient.hpp"
#include "coilkick/relay/armature_coil.hpp"
#include "coilkick/relay/relay_calibration.hpp"

using namespace coilkick;
using relay::ArmatureCoilParameters;

namespace {

// The reference relay (project physics notes, §4.5; invented parameters): N = 1500, A = 20 mm²,
// iron path 40 mm at μr = 2000, residual gap 0.05 mm, open gap 0.5 mm, contact opens at 0.15 mm,
// 1 g, return spring 0.5 N at the closed stop falling by 200 N/m, viscous 0.05 N·s/m, 400 Ω, 12 V.
ArmatureCoilParameters reference_relay() {
  ArmatureCoilParameters p;
  p.magnetic.turns = 1500.0;
  p.magnetic.pole_area_m2 = 20e-6;
  p.magnetic.core_reluctance_per_H = 40e-3 / (2000.0 * relay::kVacuumPermeability_H_per_m * 20e-6);
  p.magnetic.leakage_inductance_H = 0.0;
  auto& m = p.mechanics;
  m.mass_kg = 1e-3;
  m.residual_gap_m = 0.05e-3;
  m.open_gap_m = 0.5e-3;
  m.make_gap_m = 0.15e-3;
  m.spring_rate_N_per_m = 200.0;
  m.spring_preload_N = 0.5 - 200.0 * (m.open_gap_m - m.residual_gap_m);  // at the open stop
  m.contact_spring_rate_N_per_m = 0.0;
  m.damping_N_s_per_m = 0.05;
  // Stiff stops: 0.1 µm of penetration under the 4.7 N net holding force at 30 mA, so the
  // stops shift the motion by well under 0.1 % of the 100 µm travel to contact opening.
  m.stop_stiffness_N_per_m1_5 = 4.7 / std::pow(0.1e-6, 1.5);
  m.stop_damping_s_per_m = 2.0;
  p.resistance_ohm = 400.0;
  return p;
}

}  // namespace

TEST_CASE("magnetic force equals the closed-form reluctance result and the Maxwell stress") {
  // Fitzgerald, Kingsley & Umans, Electric Machinery, 6th ed., ch. 3 (force from co-energy):
  // one working gap, L(g) = μ0·N²·A/(g + ℛ_core·μ0·A), F = −μ0·N²·A·i²/[2·(g + ℛ_core·μ0·A)²];
  // the same force as the Maxwell stress on one pole face, B²·A/(2·μ0) with B = μ0·N·i/(g + g_core).
  const auto p = reference_relay();
  const double mu0 = relay::kVacuumPermeability_H_per_m, n = 1500.0, a = 20e-6;
  const double g_core = p.magnetic.core_reluctance_per_H * mu0 * a;
  for (double g : {0.05e-3, 0.15e-3, 0.5e-3}) {
    for (double i : {0.009, 0.03}) {
      const double closed_form = -mu0 * n * n * a * i * i / (2.0 * (g + g_core) * (g + g_core));
      const double b = mu0 * n * i / (g + g_core);
      CHECK(p.magnetic.force_N(i, g) == doctest::Approx(closed_form).epsilon(1e-12));
      CHECK(-p.magnetic.force_N(i, g) == doctest::Approx(b * b * a / (2.0 * mu0)).epsilon(1e-12));
      // Same force from the field energy at constant flux linkage, W = λ²/(2L): F = −∂W/∂g|λ
      // (Woodson & Melcher, Electromechanical Dynamics, Part I, §3.1.2); central difference,
      // step 1e-9 m: truncation ~1e-8 relative.
      const double lambda = p.magnetic.inductance_H(g) * i, h = 1e-9;
      auto w = [&](double gg) { return lambda * lambda / (2.0 * p.magnetic.inductance_H(gg)); };
      CHECK(-(w(g + h) - w(g - h)) / (2.0 * h) == doctest::Approx(p.magnetic.force_N(i, g)).epsilon(1e-6));
    }
  }
  // The physics notes' numbers for this relay (§4.5, computed there independently).
  CHECK(p.magnetic.inductance_H(0.05e-3) == doctest::Approx(0.8078).epsilon(1e-4));
  CHECK(p.magnetic.inductance_H(0.5e-3) == doctest::Approx(0.1087).epsilon(1e-3));
  CHECK(-p.magnetic.force_N(0.03, 0.05e-3) == doctest::Approx(5.193).epsilon(1e-3));
  // Release current I_rel = √(2·F_spring/|dL/dg|) at the closed stop: 9.30865 mA.
  CHECK(relay::static_release_current_A(p) == doctest::Approx(9.30865e-3).epsilon(1e-5));
}

TEST_CASE("armature coil Jacobian equals finite differences in every region") {
  auto p = reference_relay();
  p.mechanics.contact_spring_rate_N_per_m = 500.0;
  p.core_loss_resistance_ohm = 5e3;
  engine::Network net;
  net.add_voltage_source("supply", "supply", engine::Waveform::edge(0.0, 12.0, 0.0, 1e-6));
  net.add_resistor("r", "supply", "top", 10.0);
  net.add(std::make_shared<relay::ArmatureCoil>("coil", "top", engine::Network::ground, p));
  const engine::Circuit c(net);
  // Free travel (with and without the contact spring), inside each stop, moving both ways.
  for (double g : {0.03e-3, 0.1e-3, 0.3e-3, 0.52e-3}) {
    for (double u : {-0.4, 0.3}) {
      Eigen::VectorXd x = Eigen::VectorXd::Zero(c.state_count());
      x[c.state_index("node:top")] = 7.0;
      x[c.state_index("coil.current")] = 0.02;
      x[c.state_index("coil.gap")] = g;
      x[c.state_index("coil.velocity")] = u;
      const auto cmp = engine::compare_jacobian(c, 0.37e-6, x.data());
      CAPTURE(g);
      CAPTURE(cmp.row_name);
      CAPTURE(cmp.column_name);
      // Central differences: ~1e-9 of the row scale; 1e-6 catches any wrong term.
      CHECK(cmp.worst_error < 1e-6);
    }
  }
}
