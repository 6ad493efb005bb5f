#pragma once
// Bipolar transistors, NPN and PNP, at two levels. Terminals: collector, base, emitter.
//
// Physical level — Ebers–Moll in transport form (J. J. Ebers & J. L. Moll, Proc. IRE 42, 1761
// (1954); transport form as in Getreu, "Modeling the Bipolar Transistor", 1976, ch. 2):
//   I_F = I_s·(exp_lim(v_BE/(n_F·V_T)) − 1), I_R = I_s·(exp_lim(v_BC/(n_R·V_T)) − 1),
//   I_C = (I_F − I_R)·(1 − v_BC/V_A) − I_R/β_R,  I_B = I_F/β_F + I_R/β_R,
//   with the forward Early voltage V_A (J. M. Early, Proc. IRE 40, 1401 (1952)) optional;
//   charges: depletion charge of both junctions plus diffusion charges τ_F·I_F (B–E) and τ_R·I_R
//   (B–C) — the B–C diffusion charge of a saturated switch is what delays its switch-off
//   (storage time);
//   collector breakdown as an equivalent branch from collector to emitter: a knee at the
//   collector–emitter breakdown voltage (at its test current) with a dynamic resistance, so an
//   unclamped coil drives the switch to a finite, physical spike and its energy ends in the
//   switch. (Avalanche multiplication with base current snap-back is not modelled; the branch
//   stands for the sustaining voltage of the part class.)
//   collector resistance R_C (bulk collector, sets most of V_CE(sat) at amperes): the intrinsic
//   collector node is eliminated by solving v_BC,int − R_C·I_C(v_BE, v_BC,int) = v_BC for
//   v_BC,int (monotone; safeguarded Newton, then exact-derivative steps as for diodes);
//   Temperature: I_s(T) as for diodes, β(T) = β·(T/T_nom)^beta_temperature_exponent.
//   PNP: the same equations with all voltages and currents reversed.
// Piecewise-linear level: base–emitter off / on (knee + resistance); collector current
//   min(β_F·I_B·(1 + V_CE/V_A), saturation line (V_CE − V_knee)/R_sat, clipped at 0), plus the
//   breakdown line.
//   Segments derived from the physical model at a saturated operating point (forced gain
//   pwl_forced_beta at pwl_reference_collector_current_A) unless given explicitly.
//   Charges: the junctions' zero-bias depletion capacitances as fixed capacitors (no diffusion
//   charge, so no storage time), as the pwl MOSFET keeps its gate capacitances: without them a
//   loop through the knees (an active clamp on a Darlington) had only the board's picofarads and
//   switched pieces at picoseconds without end.
#include <limits>
#include <memory>
#include <string>

#include "coilkick/devices/fixed_capacitances.hpp"
#include "coilkick/devices/junction.hpp"
#include "coilkick/devices/model_level.hpp"
#include "coilkick/devices/terminal_device.hpp"

namespace coilkick::devices {

// Defaults: an ideal small-signal silicon transistor (no resistances, charges or breakdown);
// catalogue parts (models/parts) set every value with its source. Sources of the defaults:
// [ideal] the effect off (chosen); [Si] typical of silicon, from memory; [class] typical of
// small-signal transistors, from memory.
struct BjtParameters {
  Polarity polarity = Polarity::n;
  double saturation_current_A = 1e-14;             // [class]
  double forward_beta = 200.0;                     // [class]
  double reverse_beta = 2.0;                       // [class]
  double forward_emission_coefficient = 1.0;       // [ideal]
  double reverse_emission_coefficient = 1.0;       // [ideal]
  double forward_early_voltage_V = std::numeric_limits<double>::infinity();  // [ideal]
  double collector_resistance_ohm = 0.0;           // [ideal]
  double base_emitter_capacitance_F = 0.0;  // zero-bias depletion capacitance; [ideal]
  double base_emitter_built_in_potential_V = 0.75;       // [Si]
  double base_emitter_grading_coefficient = 0.33;        // [Si] graded junction
  double base_collector_capacitance_F = 0.0;             // [ideal]
  double base_collector_built_in_potential_V = 0.75;     // [Si]
  double base_collector_grading_coefficient = 0.33;      // [Si] graded junction
  double depletion_linearization_fraction = 0.5;         // [class] (Getreu 1976, ch. 3, from memory)
  double forward_transit_time_s = 0.0;                   // [ideal]
  double reverse_transit_time_s = 0.0;                   // [ideal]
  double collector_emitter_breakdown_voltage_V = std::numeric_limits<double>::infinity();  // [ideal]
  double breakdown_test_current_A = 1e-3;                // [class] data sheets rate it at mA
  double breakdown_dynamic_resistance_ohm = 10.0;        // [class]
  double breakdown_knee_emission_coefficient = 1.0;      // [ideal]
  double energy_gap_eV = 1.11;                           // [Si] silicon at 300 K
  double saturation_current_temperature_exponent = 3.0;  // [Si] (Getreu 1976, ch. 2, from memory)
  double beta_temperature_exponent = 1.5;                // [class]
  double nominal_temperature_C = 25.0;             // data-sheet reference temperature (common practice)
  double temperature_C = 25.0;
  // Piecewise-linear level (NaN: derive)
  double base_emitter_knee_voltage_V = std::numeric_limits<double>::quiet_NaN();
  double base_emitter_on_resistance_ohm = std::numeric_limits<double>::quiet_NaN();
  double saturation_knee_voltage_V = std::numeric_limits<double>::quiet_NaN();
  double saturation_resistance_ohm = std::numeric_limits<double>::quiet_NaN();
  double pwl_reference_collector_current_A = 0.1;
  double pwl_forced_beta = 10.0;
  // pwl collector breakdown line: tangent of the physical curve at this current (NaN: at the test
  // current). The driver builder sets it to the coil's current for the switch.
  double pwl_breakdown_reference_current_A = std::numeric_limits<double>::quiet_NaN();
  // Numerical safeguards
  double critical_current_A = 1e3;
  double minimum_conductance_S = 1e-12;
};

void check_bjt_parameters(const std::string& owner, const BjtParameters& p);

struct BjtDerived {
  double sign;  // +1 NPN, −1 PNP
  double vt, is, beta_f, beta_r, xcrit;
  DepletionCurve be_depletion, bc_depletion;
  bool has_breakdown;
  ExpBranch breakdown;
  double breakdown_knee_V, breakdown_resistance_ohm;
  // pwl
  double be_knee_V, be_resistance_ohm, sat_knee_V, sat_resistance_ohm;
};
BjtDerived derive_bjt(const BjtParameters& p);

// Ebers–Moll operating point at given collector and base currents (magnitudes, saturated or
// active), Early effect included: returns v_BE and v_CE (magnitudes).
struct BjtBias {
  double base_emitter_V, collector_emitter_V;
};
BjtBias physical_bias_at(const BjtParameters& p, double collector_current_A, double base_current_A);

class PhysicalBjt final : public TerminalDevice<PhysicalBjt, 3> {
 public:
  PhysicalBjt(std::string name, std::string collector, std::string base, std::string emitter, BjtParameters p);
  std::string kind() const override { return p_.polarity == Polarity::n ? "NPN (physical)" : "PNP (physical)"; }
  const BjtParameters& parameters() const { return p_; }
  bool has_breakdown() const { return d_.has_breakdown; }
  bool has_charges() const {
    return p_.base_emitter_capacitance_F > 0 || p_.base_collector_capacitance_F > 0 ||
           p_.forward_transit_time_s > 0 || p_.reverse_transit_time_s > 0;
  }

  // Intrinsic transport currents for junction voltages vbe, vbc (polarity-normalised).
  template <class S>
  void transport(const S& vbe, const S& vbc, S& ic, S& ib, S& i_f, S& i_r) const {
    i_f = d_.is * (exp_limited(vbe / (p_.forward_emission_coefficient * d_.vt), d_.xcrit) - 1.0);
    i_r = d_.is * (exp_limited(vbc / (p_.reverse_emission_coefficient * d_.vt), d_.xcrit) - 1.0);
    const S early = std::isinf(p_.forward_early_voltage_V) ? S(1.0) : 1.0 - vbc / p_.forward_early_voltage_V;
    ic = (i_f - i_r) * early - i_r / d_.beta_r;
    ib = i_f / d_.beta_f + i_r / d_.beta_r;
  }
  // ∂I_C/∂v_BC of the transport model (polarity-normalised).
  template <class S>
  S collector_slope(const S& vbc, const S& i_f, const S& i_r) const {
    const double nvt = p_.reverse_emission_coefficient * d_.vt;
    // Below the limit i_r = I_s·(e^x − 1), so dI_R/dv = (i_r + I_s)/(n·V_T): no second exponential.
    const S x = vbc / nvt;
    const S di_r = value_of(x) <= d_.xcrit ? (i_r + d_.is) / nvt : S(d_.is / nvt * std::exp(d_.xcrit));
    const double va = p_.forward_early_voltage_V;
    const S early = std::isinf(va) ? S(1.0) : 1.0 - vbc / va;
    S slope = -di_r * early - di_r / d_.beta_r;
    if (!std::isinf(va)) slope = slope - (i_f - i_r) / va;
    return slope;
  }
  // Intrinsic v_BC behind the collector resistance.
  double intrinsic_vbc_V(double vbe, double vbc_terminal) const;
  template <class S>
  S intrinsic_vbc(const S& vbe, const S& vbc_terminal) const {
    const double rc = p_.collector_resistance_ohm;
    if (rc == 0.0) return vbc_terminal;
    S y = S(intrinsic_vbc_V(value_of(vbe), value_of(vbc_terminal)));
    for (int k = 0; k < derivative_order<S>::value; ++k) {  // exact derivatives of each order
      S ic, ib, i_f, i_r;
      transport(vbe, y, ic, ib, i_f, i_r);
      y = y - (y - rc * ic - vbc_terminal) / (1.0 - rc * collector_slope(y, i_f, i_r));
    }
    return y;
  }

  template <class S>
  void currents(const S* v, S* i, S* breakdown = nullptr) const { currents_and_charges(v, i, static_cast<S*>(nullptr), breakdown); }
  template <class S>
  void charges(const S* v, S* q) const {
    const double sg = d_.sign;
    const S vbe = sg * (v[1] - v[2]), vbc = intrinsic_vbc(vbe, S(sg * (v[1] - v[0])));
    S ic, ib, i_f, i_r;
    transport(vbe, vbc, ic, ib, i_f, i_r);
    junction_charges(vbe, vbc, i_f, i_r, q);
  }
  // Both at once (TerminalDevice::load): the collector-resistance solve and the transport
  // currents are shared. q may be null; breakdown: see TerminalDevice.
  template <class S>
  void currents_and_charges(const S* v, S* i, S* q, S* breakdown = nullptr) const {
    const double sg = d_.sign, g = p_.minimum_conductance_S;
    const S vbe = sg * (v[1] - v[2]), vbc_t = sg * (v[1] - v[0]), vce = sg * (v[0] - v[2]);
    const S vbc = intrinsic_vbc(vbe, vbc_t);
    S ic, ib, i_f, i_r;
    transport(vbe, vbc, ic, ib, i_f, i_r);
    if (q) junction_charges(vbe, vbc, i_f, i_r, q);
    ic = ic - g * vbc_t + g * vce;
    ib = ib + g * vbe + g * vbc_t;
    const S ibr = d_.has_breakdown ? branch_current(vce, d_.breakdown) : S(0.0);
    if (!breakdown) ic = ic + ibr;
    i[0] = sg * ic;
    i[1] = sg * ib;
    i[2] = -(i[0] + i[1]);
    if (breakdown) {
      breakdown[0] = sg * ibr;
      breakdown[1] = S(0.0);
      breakdown[2] = -breakdown[0];
    }
  }

 private:
  BjtParameters p_;
  BjtDerived d_;

  // Depletion and diffusion charges at each terminal from the intrinsic junction voltages.
  template <class S>
  void junction_charges(const S& vbe, const S& vbc, const S& i_f, const S& i_r, S* q) const {
    const double sg = d_.sign;
    const S q_be = depletion_charge_C(vbe, d_.be_depletion) + p_.forward_transit_time_s * i_f;
    const S q_bc = depletion_charge_C(vbc, d_.bc_depletion) + p_.reverse_transit_time_s * i_r;
    q[0] = -sg * q_bc;
    q[1] = sg * (q_be + q_bc);
    q[2] = -sg * q_be;
  }
};

class PwlBjt final : public TerminalDevice<PwlBjt, 3> {
 public:
  PwlBjt(std::string name, std::string collector, std::string base, std::string emitter, BjtParameters p);
  std::string kind() const override { return p_.polarity == Polarity::n ? "NPN (pwl)" : "PNP (pwl)"; }
  bool has_charges() const { return p_.base_emitter_capacitance_F > 0.0 || p_.base_collector_capacitance_F > 0.0; }
  const BjtDerived& segments() const { return d_; }
  bool has_breakdown() const { return d_.has_breakdown; }
  // Corners: base–emitter knee (slot 0), the Early factor's vce = 0 (1), the saturation line's
  // knee (2), saturation against the active line (3), breakdown knee (4).
  static constexpr int kPieceSlots = 5;
  static constexpr bool kLinearCharges = true;  // fixed capacitances (TerminalDevice)

  // breakdown: see TerminalDevice (the breakdown line apart, when not null).
  template <class S>
  void currents(const S* v, S* i, S* breakdown = nullptr, engine::PieceChoices* pieces = nullptr) const {
    const double sg = d_.sign, g = p_.minimum_conductance_S;
    const S vbe = sg * (v[1] - v[2]), vce = sg * (v[0] - v[2]);
    S ib = g * vbe;
    S ic = g * vce;
    if (engine::piece_past(pieces, 0, value_of(vbe) - d_.be_knee_V)) {
      const S ib_on = (vbe - d_.be_knee_V) / d_.be_resistance_ohm;
      ib = ib + ib_on;
      // Early effect on the active line (output conductance): without it a partly-on switch is an
      // ideal current source and the coil rings undamped with the node capacitance.
      const S early = std::isinf(p_.forward_early_voltage_V) || !engine::piece_past(pieces, 1, value_of(vce)) ? S(1.0) : 1.0 + vce / p_.forward_early_voltage_V;
      const S active = d_.beta_f * ib_on * early;
      const S sat = (vce - d_.sat_knee_V) / d_.sat_resistance_ohm;
      if (engine::piece_past(pieces, 2, value_of(sat))) ic = ic + (engine::piece_past(pieces, 3, value_of(active) - value_of(sat)) ? sat : active);
    }
    S ibr(0.0);
    if (d_.has_breakdown && engine::piece_past(pieces, 4, value_of(vce) - d_.breakdown_knee_V)) ibr = (vce - d_.breakdown_knee_V) / d_.breakdown_resistance_ohm;
    if (!breakdown) ic = ic + ibr;
    i[0] = sg * ic;
    i[1] = sg * ib;
    i[2] = -(i[0] + i[1]);
    if (breakdown) {
      breakdown[0] = sg * ibr;
      breakdown[1] = S(0.0);
      breakdown[2] = -breakdown[0];
    }
  }
  // The junctions' zero-bias depletion capacitances as fixed capacitors.
  template <class S>
  void charges(const S* v, S* q) const {
    fixed_control_charges(d_.sign, p_.base_emitter_capacitance_F, p_.base_collector_capacitance_F, v, q);
  }

 private:
  BjtParameters p_;
  BjtDerived d_;
};

std::shared_ptr<engine::Element> make_bjt(const std::string& name, const std::string& collector,
                                          const std::string& base, const std::string& emitter,
                                          const BjtParameters& p, ModelLevel level);

}  // namespace coilkick::devices
