#include "coilkick/relay/armature_coil.hpp"

#include <cmath>
#include <stdexcept>

#include "coilkick/engine/parameter_check.hpp"
#include "coilkick/engine/winding.hpp"

namespace coilkick::relay {
namespace {

constexpr int kI = 2, kG = 3, kU = 4;  // local indices of the states (terminals a, b are 0, 1)
// Held armature: the gap relaxes to the held gap at this rate (1/s) and the velocity to
// zero; started there (as the operating point does) both stay exactly put.
constexpr double kHoldRate_per_s = 1e3;

// Stop penetrations and their slopes: closed stop p_c = residual − g, open stop p_o = g − open.
struct Stops {
  double pc = 0.0, po = 0.0;  // penetrations (m), >= 0
  double pc15 = 0.0, po15 = 0.0, pc05 = 0.0, po05 = 0.0;
  Stops(const ArmatureMechanics& m, double g) {
    pc = std::max(0.0, m.residual_gap_m - g);
    po = std::max(0.0, g - m.open_gap_m);
    pc05 = std::sqrt(pc);
    po05 = std::sqrt(po);
    pc15 = pc * pc05;
    po15 = po * po05;
  }
};

// Damping factor of a stop, ψ(z) with z = 1 + α·ṗ: a smooth, positive, increasing version of z
// normalised to ψ(1) = 1, so the stop never pulls (no adhesion when the armature leaves it fast)
// and its damping never feeds energy in: (ψ(z) − 1) has the sign of (z − 1).
constexpr double kSoftness = 0.1;
double soft_positive(double z) { return 0.5 * (z + std::sqrt(z * z + kSoftness * kSoftness)); }
struct StopFactor {
  double value, slope;  // ψ(z), dψ/dz
  explicit StopFactor(double z) {
    const double norm = soft_positive(1.0);
    value = soft_positive(z) / norm;
    slope = 0.5 * (1.0 + z / std::sqrt(z * z + kSoftness * kSoftness)) / norm;
  }
};

}  // namespace

void ArmatureMechanics::check(const std::string& owner) const {
  using engine::require_non_negative;
  using engine::require_positive;
  require_positive(owner, "mass_kg", mass_kg);
  require_positive(owner, "residual_gap_m", residual_gap_m);
  require_positive(owner, "open_gap_m", open_gap_m);
  require_positive(owner, "make_gap_m", make_gap_m);
  require_non_negative(owner, "spring_preload_N", spring_preload_N);
  require_positive(owner, "spring_rate_N_per_m", spring_rate_N_per_m);
  require_non_negative(owner, "contact_spring_rate_N_per_m", contact_spring_rate_N_per_m);
  require_non_negative(owner, "damping_N_s_per_m", damping_N_s_per_m);
  require_positive(owner, "stop_stiffness_N_per_m1_5", stop_stiffness_N_per_m1_5);
  require_non_negative(owner, "stop_damping_s_per_m", stop_damping_s_per_m);
  if (!(residual_gap_m < make_gap_m && make_gap_m < open_gap_m)) {
    throw std::invalid_argument(owner + ": needs residual_gap_m < make_gap_m < open_gap_m, got " + std::to_string(residual_gap_m) +
                                ", " + std::to_string(make_gap_m) + ", " + std::to_string(open_gap_m));
  }
}

double ArmatureMechanics::spring_force_N(double g) const {
  const double over = std::max(0.0, make_gap_m - g);
  return spring_preload_N + spring_rate_N_per_m * (open_gap_m - g) + contact_spring_rate_N_per_m * over;
}

double ArmatureMechanics::spring_energy_J(double g) const {
  const double d = open_gap_m - g, over = std::max(0.0, make_gap_m - g);
  return spring_preload_N * d + 0.5 * spring_rate_N_per_m * d * d + 0.5 * contact_spring_rate_N_per_m * over * over;
}

ArmatureCoil::ArmatureCoil(std::string name, std::string a, std::string b, ArmatureCoilParameters parameters)
    : Element(std::move(name), {std::move(a), std::move(b)}), p_(parameters) {
  const std::string owner = "armature coil '" + this->name() + "'";
  p_.magnetic.check(owner);
  p_.mechanics.check(owner);
  engine::require_non_negative(owner, "resistance_ohm", p_.resistance_ohm);
  engine::require_positive_or_infinite(owner, "core_loss_resistance_ohm", p_.core_loss_resistance_ohm);
  if (!std::isnan(p_.hold_gap_m)) engine::require_positive(owner, "hold_gap_m", p_.hold_gap_m);
}

bool ArmatureCoil::has_core_loss() const { return std::isfinite(p_.core_loss_resistance_ohm); }

std::vector<engine::InternalStateSpec> ArmatureCoil::internal_states() const {
  const auto& m = p_.mechanics;
  const double travel = m.open_gap_m - m.residual_gap_m;
  return {{"current", "A", 0.0, engine::StateKind::branch_current},
          {"gap", "m", 1e-7 * travel, engine::StateKind::internal, m.residual_gap_m},
          {"velocity", "m/s", 1e-7 * travel / 1e-3, engine::StateKind::internal}};  // 1e-7 of the travel per ms
}

std::vector<engine::PowerChannelSpec> ArmatureCoil::power_channels() const {
  using K = engine::PowerChannelSpec::Kind;
  std::vector<engine::PowerChannelSpec> c{{"winding", K::dissipated}};
  if (has_core_loss()) c.push_back({"core", K::dissipated});
  c.push_back({"damping", K::dissipated});
  c.push_back({"stops", K::dissipated});
  return c;
}

void ArmatureCoil::load(const engine::ElementContext& ctx, engine::Stamper& out) const {
  engine::stamp_winding(ctx, out, p_.resistance_ohm, has_core_loss() ? 1.0 / p_.core_loss_resistance_ohm : 0.0);
  const int ch_damping = has_core_loss() ? 2 : 1, ch_stops = ch_damping + 1;
  const auto& mg = p_.magnetic;
  const auto& m = p_.mechanics;
  const double i = ctx.value(kI), g = ctx.value(kG), u = ctx.value(kU);
  if (p_.hold_closed) {
    out.add_mass(kI, kI, mg.inductance_H(p_.held_gap_m()));
    out.add_mass(kG, kG, 1.0);
    out.add_flow(kG, kHoldRate_per_s * (p_.held_gap_m() - g));
    out.add_flow_slope(kG, kG, -kHoldRate_per_s);
    out.add_mass(kU, kU, 1.0);
    out.add_flow(kU, -kHoldRate_per_s * u);
    out.add_flow_slope(kU, kU, -kHoldRate_per_s);
    return;
  }
  // Flux linkage row: d/dt[L(g)·i] = v_L.
  const double l = mg.inductance_H(g), dl = mg.inductance_slope_H_per_m(g), d2l = mg.inductance_curvature_H_per_m2(g);
  out.add_mass(kI, kI, l);
  out.add_mass(kI, kG, dl * i);
  // Kinematics.
  out.add_mass(kG, kG, 1.0);
  out.add_flow(kG, u);
  out.add_flow_slope(kG, kU, 1.0);
  // Forces on the armature (opening direction positive).
  const Stops s(m, g);
  const double ks = m.stop_stiffness_N_per_m1_5, alpha = m.stop_damping_s_per_m;
  const double f_spring = m.spring_force_N(g);
  const double df_spring = -m.spring_rate_N_per_m - (g < m.make_gap_m ? m.contact_spring_rate_N_per_m : 0.0);
  const double f_mag = 0.5 * i * i * dl;
  // Stops: closed F_c = A_c·ψ(1 − α·u) with A_c = k_s·p_c^1.5 (pushes open), open
  // F_o = −A_o·ψ(1 + α·u) (pushes closed); ψ as StopFactor.
  const double a_c = ks * s.pc15, da_c = -1.5 * ks * s.pc05;  // slopes along g
  const double a_o = ks * s.po15, da_o = 1.5 * ks * s.po05;
  const StopFactor psi_c(1.0 - alpha * u), psi_o(1.0 + alpha * u);
  const double f_stops = a_c * psi_c.value - a_o * psi_o.value;
  const double df_stops_dg = da_c * psi_c.value - da_o * psi_o.value;
  const double df_stops_du = -alpha * (a_c * psi_c.slope + a_o * psi_o.slope);
  const double b = m.damping_N_s_per_m;
  out.add_mass(kU, kU, m.mass_kg);
  out.add_flow(kU, f_spring + f_mag + f_stops - b * u);
  out.add_flow_slope(kU, kI, i * dl);
  out.add_flow_slope(kU, kG, df_spring + 0.5 * i * i * d2l + df_stops_dg);
  out.add_flow_slope(kU, kU, df_stops_du - b);
  // Heat of the viscous damping, and of the stops: what their force does beyond the elastic part,
  // P = −(F_c − A_c)·u − (F_o + A_o)·u = −A_c·(ψ_c − 1)·u + A_o·(ψ_o − 1)·u >= 0.
  out.add_power(ch_damping, b * u * u);
  out.add_power_slope(ch_damping, kU, 2.0 * b * u);
  out.add_power(ch_stops, -a_c * (psi_c.value - 1.0) * u + a_o * (psi_o.value - 1.0) * u);
  out.add_power_slope(ch_stops, kG, -da_c * (psi_c.value - 1.0) * u + da_o * (psi_o.value - 1.0) * u);
  out.add_power_slope(ch_stops, kU,
                      -a_c * ((psi_c.value - 1.0) - alpha * psi_c.slope * u) + a_o * ((psi_o.value - 1.0) + alpha * psi_o.slope * u));
}

void ArmatureCoil::load_mass_slope(const engine::ElementContext& ctx, engine::Stamper& out) const {
  if (p_.hold_closed) return;
  // Row kI holds L(g)·di/dt + L'(g)·i·dg/dt; its slopes along i and g.
  const auto& mg = p_.magnetic;
  const double i = ctx.value(kI), g = ctx.value(kG);
  const double di = ctx.rate(kI), dg = ctx.rate(kG);
  const double dl = mg.inductance_slope_H_per_m(g), d2l = mg.inductance_curvature_H_per_m2(g);
  out.add_mass_slope(kI, kI, dl * dg);
  out.add_mass_slope(kI, kG, dl * di + d2l * i * dg);
}

double ArmatureCoil::stored_energy_J(const engine::ElementContext& ctx) const {
  const auto& m = p_.mechanics;
  const double i = ctx.value(kI), g = ctx.value(kG), u = ctx.value(kU);
  if (p_.hold_closed) return 0.5 * p_.magnetic.inductance_H(p_.held_gap_m()) * i * i;
  const Stops s(m, g);
  const double stops = m.stop_stiffness_N_per_m1_5 / 2.5 * (s.pc15 * s.pc + s.po15 * s.po);
  return 0.5 * p_.magnetic.inductance_H(g) * i * i + 0.5 * m.mass_kg * u * u + m.spring_energy_J(g) + stops;
}

}  // namespace coilkick::relay
