#pragma once
// MOSFETs, N and P channel, at two levels. Terminals: drain, gate, source.
//
// Physical level — square-law channel (H. Shichman & D. A. Hodges, IEEE J. Solid-State
// Circuits SC-3, 285 (1968), from memory): with V_ov = V_GS − V_th,
//   ohmic (V_DS < V_ov):      I_D = K·(V_ov·V_DS − V_DS²/2)·(1 + λ·V_DS)
//   saturated (V_DS ≥ V_ov):  I_D = (K/2)·V_ov²·(1 + λ·V_DS)
//   off (V_ov ≤ 0): 0; current and conductance continuous at both boundaries; the channel is
//   symmetric (V_DS < 0 swaps drain and source).
//   Constant gate–source and gate–drain capacitances; a body diode (source to drain for N)
//   with Shockley law and its junction and diffusion charge; drain avalanche as a knee branch
//   at the drain–source breakdown voltage (test current, dynamic resistance).
//   Temperature: V_th(T) = V_th + tc·(T − T_nom), K(T) = K·(T/T_nom)^mobility exponent.
// Piecewise-linear level: channel min(g·V_ov, V_DS/R_on) (off below threshold), body diode
//   and avalanche as pwl diodes; R_on and g derived at pwl_gate_drive_V unless given.
#include <limits>
#include <memory>
#include <string>

#include "coilkick/devices/diode.hpp"
#include "coilkick/devices/fixed_capacitances.hpp"
#include "coilkick/devices/junction.hpp"
#include "coilkick/devices/model_level.hpp"
#include "coilkick/devices/terminal_device.hpp"

namespace coilkick::devices {

// Defaults: an ideal logic-level power MOSFET (no capacitances, no breakdown); catalogue parts
// (models/parts) set every value with its source. Sources of the defaults: [ideal] the effect
// off (chosen); [class] typical of small logic-level power MOSFETs, from memory.
struct MosfetParameters {
  Polarity polarity = Polarity::n;
  double threshold_voltage_V = 2.0;  // magnitude; [class]
  double transconductance_parameter_A_per_V2 = 1.0;  // K; [class]
  double channel_length_modulation_per_V = 0.0;      // λ; [ideal]
  double gate_source_capacitance_F = 0.0;            // [ideal]
  double gate_drain_capacitance_F = 0.0;             // [ideal]
  double threshold_temperature_coefficient_V_per_K = -4e-3;  // [class]
  double mobility_temperature_exponent = -1.5;       // [class] (lattice scattering, from memory)
  double nominal_temperature_C = 25.0;               // data-sheet reference temperature (common practice)
  double temperature_C = 25.0;
  DiodeParameters body_diode;  // its breakdown fields are not used: see drain avalanche below
  double drain_source_breakdown_voltage_V = std::numeric_limits<double>::infinity();  // [ideal]
  double breakdown_test_current_A = 250e-6;          // [class] data sheets rate it at 250 µA
  double breakdown_dynamic_resistance_ohm = 1.0;     // [class]
  double breakdown_knee_emission_coefficient = 1.0;  // [ideal]
  // Piecewise-linear level (NaN: derive at pwl_gate_drive_V)
  double on_resistance_ohm = std::numeric_limits<double>::quiet_NaN();
  double pwl_transconductance_S = std::numeric_limits<double>::quiet_NaN();
  double pwl_gate_drive_V = 5.0;
  // pwl drain avalanche line: tangent of the physical curve at this current (NaN: at the test
  // current). The driver builder sets it to the coil's current for the switch.
  double pwl_breakdown_reference_current_A = std::numeric_limits<double>::quiet_NaN();
  double minimum_conductance_S = 1e-12;
  double critical_current_A = 1e3;
};

void check_mosfet_parameters(const std::string& owner, const MosfetParameters& p);

struct MosfetDerived {
  double sign, vth, k;
  DiodeParameters body;      // at the simulated temperature, no breakdown
  DiodeCurves body_curves;
  bool has_breakdown;
  ExpBranch breakdown;
  double breakdown_knee_V, breakdown_resistance_ohm;
  double on_resistance_ohm, pwl_transconductance_S;
};
MosfetDerived derive_mosfet(const MosfetParameters& p);

template <class S>
S square_law_channel_A(const S& vgs, const S& vds, const MosfetDerived& d, double lambda) {
  // Drain current for vds >= 0.
  const S vov = vgs - d.vth;
  if (value_of(vov) <= 0.0) return S(0.0);
  const S clm = 1.0 + lambda * vds;
  if (value_of(vds) < value_of(vov)) return d.k * (vov * vds - 0.5 * vds * vds) * clm;
  return 0.5 * d.k * vov * vov * clm;
}

class PhysicalMosfet final : public TerminalDevice<PhysicalMosfet, 3> {
 public:
  PhysicalMosfet(std::string name, std::string drain, std::string gate, std::string source, MosfetParameters p);
  std::string kind() const override { return p_.polarity == Polarity::n ? "N-MOSFET (physical)" : "P-MOSFET (physical)"; }
  bool has_charges() const { return true; }
  const MosfetParameters& parameters() const { return p_; }
  bool has_breakdown() const { return d_.has_breakdown; }

  // breakdown: see TerminalDevice (the drain avalanche branch apart, when not null).
  template <class S>
  void currents(const S* v, S* i, S* breakdown = nullptr) const {
    const double sg = d_.sign, g = p_.minimum_conductance_S;
    const S vgs = sg * (v[1] - v[2]), vds = sg * (v[0] - v[2]);
    S id = value_of(vds) >= 0.0 ? square_law_channel_A(vgs, vds, d_, p_.channel_length_modulation_per_V)
                                : -square_law_channel_A(vgs - vds, -vds, d_, p_.channel_length_modulation_per_V);
    id = id - branch_current(-vds, d_.body_curves.forward) + g * vds;
    const S iav = d_.has_breakdown ? branch_current(vds, d_.breakdown) : S(0.0);
    if (!breakdown) id = id + iav;
    const S ig = g * vgs;
    i[0] = sg * id;
    i[1] = sg * ig;
    i[2] = -(i[0] + i[1]);
    if (breakdown) {
      breakdown[0] = sg * iav;
      breakdown[1] = S(0.0);
      breakdown[2] = -breakdown[0];
    }
  }
  template <class S>
  void charges(const S* v, S* q) const {
    const double sg = d_.sign;
    const S vgs = sg * (v[1] - v[2]), vgd = sg * (v[1] - v[0]), vsd = sg * (v[2] - v[0]);
    S uj;
    const S i_body = branch_current(vsd, d_.body_curves.forward, &uj);
    const S q_body = depletion_charge_C(uj, d_.body_curves.depletion) + d_.body.transit_time_s * i_body;
    const S q_gs = p_.gate_source_capacitance_F * vgs, q_gd = p_.gate_drain_capacitance_F * vgd;
    q[0] = sg * (-q_gd - q_body);
    q[1] = sg * (q_gs + q_gd);
    q[2] = sg * (-q_gs + q_body);
  }

 private:
  MosfetParameters p_;
  MosfetDerived d_;
};

class PwlMosfet final : public TerminalDevice<PwlMosfet, 3> {
 public:
  PwlMosfet(std::string name, std::string drain, std::string gate, std::string source, MosfetParameters p);
  std::string kind() const override { return p_.polarity == Polarity::n ? "N-MOSFET (pwl)" : "P-MOSFET (pwl)"; }
  bool has_charges() const { return p_.gate_source_capacitance_F > 0.0 || p_.gate_drain_capacitance_F > 0.0; }
  const MosfetDerived& segments() const { return d_; }
  bool has_breakdown() const { return d_.has_breakdown; }
  // Corners: vds = 0 (slot 0: forward or reverse), the channel's threshold (1), ohmic against
  // saturated (2), the body diode's knee (3), the avalanche knee (4).
  static constexpr int kPieceSlots = 5;
  static constexpr bool kLinearCharges = true;  // fixed capacitances (TerminalDevice)

  // breakdown: see TerminalDevice (the avalanche line apart, when not null).
  template <class S>
  void currents(const S* v, S* i, S* breakdown = nullptr, engine::PieceChoices* pieces = nullptr) const {
    const double sg = d_.sign, g = p_.minimum_conductance_S;
    const S vgs = sg * (v[1] - v[2]), vds = sg * (v[0] - v[2]);
    const bool forward = engine::piece_past(pieces, 0, value_of(vds), true);
    const S vov = (forward ? vgs : vgs - vds) - d_.vth;
    const S vmag = forward ? vds : -vds;
    S ich(0.0);
    if (engine::piece_past(pieces, 1, value_of(vov))) {
      const S sat = d_.pwl_transconductance_S * vov, ohm = vmag / d_.on_resistance_ohm;
      ich = engine::piece_past(pieces, 2, value_of(sat) - value_of(ohm)) ? ohm : sat;
    }
    S id = (forward ? ich : -ich) + g * vds;
    const auto& b = d_.body_curves;
    if (engine::piece_past(pieces, 3, -value_of(vds) - b.knee_voltage_V)) id = id - (-vds - b.knee_voltage_V) / b.on_resistance_ohm;
    S iav(0.0);
    if (d_.has_breakdown && engine::piece_past(pieces, 4, value_of(vds) - d_.breakdown_knee_V)) iav = (vds - d_.breakdown_knee_V) / d_.breakdown_resistance_ohm;
    if (!breakdown) id = id + iav;
    i[0] = sg * id;
    i[1] = sg * (g * vgs);
    i[2] = -(i[0] + i[1]);
    if (breakdown) {
      breakdown[0] = sg * iav;
      breakdown[1] = S(0.0);
      breakdown[2] = -breakdown[0];
    }
  }
  template <class S>
  void charges(const S* v, S* q) const {
    fixed_control_charges(d_.sign, p_.gate_source_capacitance_F, p_.gate_drain_capacitance_F, v, q);
  }

 private:
  MosfetParameters p_;
  MosfetDerived d_;
};

std::shared_ptr<engine::Element> make_mosfet(const std::string& name, const std::string& drain,
                                             const std::string& gate, const std::string& source,
                                             const MosfetParameters& p, ModelLevel level);

}  // namespace coilkick::devices
