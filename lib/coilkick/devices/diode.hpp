#pragma once
// Diodes, Zener diodes and TVS diodes: one parameter set, two levels.
//
// Physical level (terminals anode, cathode):
//   forward: Shockley law I = I_s(T)·(exp_lim(v_j/(n·V_T)) − 1) behind the series resistance
//     (W. Shockley, Bell Syst. Tech. J. 28, 435 (1949); emission coefficient n);
//   reverse breakdown (if breakdown_voltage_V is finite): a knee I = I_t·exp_lim((u_j − u_0)/(n_b·V_T))
//     with u = −v, behind R_b = dynamic resistance − n_b·V_T/I_t, placed so that the reverse voltage
//     at the test current I_t equals the breakdown voltage; the breakdown voltage moves with the
//     temperature coefficient;
//   charge at the junction: depletion charge (zero-bias capacitance C_j0, built-in potential V_bi, grading m, linearisation fraction f_c) plus diffusion charge τ_T·I_f;
//   a minimum conductance (1e-12 S) across the terminals keeps an off diode's nodes conditioned.
// Piecewise-linear level: off (minimum conductance) / on (knee voltage + on-resistance) /
//   breakdown (knee + dynamic resistance), continuous current. The knee and on-resistance are
//   the tangent of the physical curve at pwl_reference_current_A unless given explicitly; the
//   breakdown line passes through (breakdown voltage, test current) with the dynamic resistance.
#include <limits>
#include <memory>
#include <string>

#include "coilkick/devices/junction.hpp"
#include "coilkick/devices/model_level.hpp"
#include "coilkick/devices/terminal_device.hpp"

namespace coilkick::devices {

// Defaults are those of an ideal silicon junction (no series resistance, no charge, no breakdown);
// catalogue parts (models/parts) set every value with its source. Sources of the defaults:
//   [ideal]  the Shockley junction without the effect (chosen: the effect off)
//   [Si]     typical of silicon junctions, from memory (band gap 1.11 eV: silicon at 300 K)
//   [class]  typical of the class, from memory
struct DiodeParameters {
  // Forward conduction
  double saturation_current_A = 1e-14;             // [class] small-signal junction
  double emission_coefficient = 1.0;               // [ideal]
  double series_resistance_ohm = 0.0;              // [ideal]
  // Charge storage
  double transit_time_s = 0.0;                     // [ideal]
  double zero_bias_capacitance_F = 0.0;            // [ideal]
  double built_in_potential_V = 0.7;               // [Si]
  double grading_coefficient = 0.5;                // [Si] abrupt junction
  double depletion_linearization_fraction = 0.5;   // [class] (Getreu 1976, ch. 3, from memory)
  // Temperature
  double energy_gap_eV = 1.11;                     // [Si]
  double saturation_current_temperature_exponent = 3.0;  // [Si] (Getreu 1976, ch. 2, from memory)
  double nominal_temperature_C = 25.0;             // data-sheet reference temperature (common practice)
  double temperature_C = 25.0;
  // Reverse breakdown (infinite: none)
  double breakdown_voltage_V = std::numeric_limits<double>::infinity();  // [ideal]
  double breakdown_test_current_A = 1e-3;          // [class] small Zeners are specified at mA
  double breakdown_dynamic_resistance_ohm = 1.0;   // [class]
  double breakdown_knee_emission_coefficient = 1.0;  // [ideal]
  double breakdown_temperature_coefficient_per_K = 0.0;  // relative change of the voltage per K; [ideal]
  // Piecewise-linear level (NaN: derive from the physical curve)
  double knee_voltage_V = std::numeric_limits<double>::quiet_NaN();
  double on_resistance_ohm = std::numeric_limits<double>::quiet_NaN();
  double pwl_reference_current_A = 0.1;
  // pwl breakdown line: tangent of the physical breakdown curve at this current (NaN: at the test
  // current). The driver builder sets it to the coil's current for parts that clamp the coil.
  double pwl_breakdown_reference_current_A = std::numeric_limits<double>::quiet_NaN();
  // Numerical safeguards
  double critical_current_A = 1e3;
  double minimum_conductance_S = 1e-12;
};

// Throws std::invalid_argument "<owner>: <field> ..." for out-of-range values.
void check_diode_parameters(const std::string& owner, const DiodeParameters& p);

// Derived quantities shared by both levels.
struct DiodeCurves {
  ExpBranch forward;
  bool has_breakdown = false;
  ExpBranch breakdown;          // in the reverse voltage u = −v
  double breakdown_voltage_V;   // at the simulated temperature, at the test current
  DepletionCurve depletion;
  // pwl segments
  double knee_voltage_V, on_resistance_ohm, breakdown_knee_V, breakdown_resistance_ohm;
};
DiodeCurves derive_diode_curves(const DiodeParameters& p);

// Forward voltage of the physical model at a forward current (A), by the explicit inverse
// V = n·V_T·ln(1 + I/I_s) + R_s·I.
double physical_forward_voltage_V(const DiodeParameters& p, double current_A);

class PhysicalDiode final : public TerminalDevice<PhysicalDiode, 2> {
 public:
  PhysicalDiode(std::string name, std::string anode, std::string cathode, DiodeParameters p);
  std::string kind() const override { return "diode (physical)"; }
  const DiodeParameters& parameters() const { return p_; }
  bool has_charges() const { return p_.zero_bias_capacitance_F > 0.0 || p_.transit_time_s > 0.0; }

  // The forward junction, anode → cathode. (The breakdown knee is not listed: its scale
  // current is the test current, so "far above it" would be hundreds of amperes.)
  bool has_junctions() const override { return true; }
  void junction_states(const engine::ElementContext& ctx, std::vector<engine::JunctionState>& out) const override {
    const BranchJunction f = branch_junction(ctx.value(0) - ctx.value(1), c_.forward);
    out.push_back({0, 1, f.log_slope_V, f.exponential});
  }

  template <class S>
  void currents(const S* v, S* i) const { currents_and_charges(v, i, static_cast<S*>(nullptr)); }
  template <class S>
  void charges(const S* v, S* q) const {
    const S u = v[0] - v[1];
    S uj;
    const S i_forward = branch_current(u, c_.forward, &uj);
    junction_charges(uj, i_forward, q);
  }
  // Both at once (TerminalDevice::load): the forward branch's series-resistance solve is shared.
  // q may be null.
  template <class S>
  void currents_and_charges(const S* v, S* i, S* q) const {
    const S u = v[0] - v[1];
    S uj;
    const S i_forward = branch_current(u, c_.forward, &uj);
    if (q) junction_charges(uj, i_forward, q);
    S ia = i_forward + p_.minimum_conductance_S * u;
    if (c_.has_breakdown) ia = ia - branch_current(-u, c_.breakdown);
    i[0] = ia;
    i[1] = -ia;
  }

 private:
  DiodeParameters p_;
  DiodeCurves c_;

  // Depletion charge at the junction voltage and diffusion charge of the forward current.
  template <class S>
  void junction_charges(const S& uj, const S& i_forward, S* q) const {
    const S qa = depletion_charge_C(uj, c_.depletion) + p_.transit_time_s * i_forward;
    q[0] = qa;
    q[1] = -qa;
  }
};

class PwlDiode final : public TerminalDevice<PwlDiode, 2> {
 public:
  PwlDiode(std::string name, std::string anode, std::string cathode, DiodeParameters p);
  std::string kind() const override { return "diode (pwl)"; }
  // The junction's depletion capacitance as a fixed capacitor, taken at the breakdown voltage
  // (reverse-biased there: where a clamp's Zener or TVS works, and a blocking junction's value
  // over most of its range; at zero bias where the part has no breakdown). Without it a pwl
  // diode's node has only the board's picofarads against the on-line's milliohms, a pole at tens
  // of femtoseconds that a run switching pieces through it resolves below its minimum step (a
  // random driver's Schottky + Zener clamp node). The zero-bias value, as the pwl transistors
  // keep, was tried too: it is the largest the junction has, and against the physical level on
  // the bundled scenarios' compare it let more tails ring that do not (README, "Edges, by
  // random drivers").
  bool has_charges() const { return fixed_capacitance_F_ > 0.0; }
  double fixed_capacitance_F() const { return fixed_capacitance_F_; }
  static constexpr bool kLinearCharges = true;  // fixed capacitance (TerminalDevice)
  const DiodeCurves& segments() const { return c_; }
  // The forward knee's two corners (slots 0, 1) and the breakdown knee's (2, 3).
  static constexpr int kPieceSlots = 4;

  template <class S>
  void currents(const S* v, S* i, engine::PieceChoices* pieces = nullptr) const {
    const S u = v[0] - v[1];
    S ia = p_.minimum_conductance_S * u;
    ia = ia + knee_ramp(u - c_.knee_voltage_V, pieces, 0) / c_.on_resistance_ohm;
    if (c_.has_breakdown) ia = ia - knee_ramp(-u - c_.breakdown_knee_V, pieces, 2) / c_.breakdown_resistance_ohm;
    i[0] = ia;
    i[1] = -ia;
  }
  template <class S>
  void charges(const S* v, S* q) const {
    q[0] = fixed_capacitance_F_ * (v[0] - v[1]);
    q[1] = -q[0];
  }

 private:
  DiodeParameters p_;
  DiodeCurves c_;
  double fixed_capacitance_F_ = 0.0;
};

std::shared_ptr<engine::Element> make_diode(const std::string& name, const std::string& anode,
                                            const std::string& cathode, const DiodeParameters& p,
                                            ModelLevel level);

}  // namespace coilkick::devices
