#pragma once
// Building blocks of the semiconductor models, as templates on the scalar type (see dual.hpp).
//
// Limited exponential: exp(x) up to x_c, then its tangent line exp(x_c)·(1 + x − x_c), so that
// currents and conductances stay finite at any voltage the integrator may try and remain
// continuous with a continuous first derivative. x_c is chosen per junction from a critical
// current (default 1 kA: far above any operating point here). Linear continuation of the
// exponential beyond a critical current is the published junction-limiting technique of the
// circuit-simulation literature (from memory).
//
// Depletion charge: C_j(v) = C_j0/(1 − v/V_bi)^m below f_c·V_bi (f_c: the linearisation fraction), continued linearly in v above it
// (Getreu, "Modeling the Bipolar Transistor", Tektronix 1976, ch. 3, from memory); the charge
// is its integral, so it is continuous with a continuous capacitance.
//
// Exponential branch with series resistance: terminal voltage u = u_j + R·I(u_j) with
// I(u_j) = I_s·(exp_lim((u_j − u_0)/(n·V_T)) − c). Solved for u_j by safeguarded Newton in
// double precision, then one Newton step in the scalar type per order of derivatives it carries
// (derivative_order), so that first (and second) derivatives of I(u) are exact
// (implicit-function theorem).
#include <cmath>
#include <limits>

#include "coilkick/devices/dual.hpp"
#include "coilkick/engine/element.hpp"

namespace coilkick::devices {

// Boltzmann constant over the elementary charge, exact in the 2019 SI (k = 1.380649e-23 J/K,
// e = 1.602176634e-19 C): V_T = k·T/q.
constexpr double kBoltzmannOverCharge_V_per_K = 1.380649e-23 / 1.602176634e-19;
constexpr double kZeroCelsius_K = 273.15;

inline double thermal_voltage_V(double temperature_C) {
  return kBoltzmannOverCharge_V_per_K * (temperature_C + kZeroCelsius_K);
}

// Saturation current at temperature T from its value at T_nom:
// I_s(T) = I_s(T_nom)·(T/T_nom)^(xti/n)·exp((T/T_nom − 1)·E_g/(n·V_T(T)))
// (Getreu 1976, ch. 2, temperature dependence; from memory).
inline double saturation_current_at_A(double is_nom_A, double emission, double energy_gap_eV,
                                      double temperature_exponent, double nominal_C,
                                      double temperature_C) {
  const double ratio = (temperature_C + kZeroCelsius_K) / (nominal_C + kZeroCelsius_K);
  const double vt = thermal_voltage_V(temperature_C);
  return is_nom_A * std::pow(ratio, temperature_exponent / emission) *
         std::exp((ratio - 1.0) * energy_gap_eV / (emission * vt));
}

// With `slope`, also its derivative d/dx from the same exponential.
template <class S>
S exp_limited(const S& x, double x_crit, S* slope = nullptr) {
  if (value_of(x) <= x_crit) {
    const S e = exp(x);
    if (slope) *slope = e;
    return e;
  }
  const double ec = std::exp(x_crit);
  if (slope) *slope = S(ec);
  return ec * (1.0 + (x - x_crit));
}

// The pwl knee max(x, 0) rounded to C¹ within ±w/2 of the corner: 0 below −w/2, the parabola
// (x + w/2)²/(2·w) between, x above — so outside those 0.1 mV both segments are exactly the
// straight lines. A plain corner makes the conductance jump at the knee; a node resting there
// (a Zener held at its forward knee by a leakage path, say) then chatters between the segments
// and the integrator takes tens of thousands of steps.
inline constexpr double kPwlKneeRounding_V = 1e-4;
// Its two corners (−w/2, +w/2) are the slots `slot` and `slot + 1` of a piece record. Held on
// the parabola, it is the parabola only within its width: its continuation is no segment of the
// curve (the quadratic would grow without bound over a step), and the curve is C¹ there.
template <class S>
[[gnu::always_inline]] inline S knee_ramp(const S& x, engine::PieceChoices* pieces = nullptr, int slot = 0, double width = kPwlKneeRounding_V) {
  const double xv = value_of(x);
  if (!engine::piece_past(pieces, slot, xv + 0.5 * width)) return S(0.0);
  if (engine::piece_past(pieces, slot + 1, xv - 0.5 * width, true)) return x;
  if (pieces && pieces->holds(slot + 1)) {
    if (xv <= -0.5 * width) return S(0.0);
    if (xv >= 0.5 * width) return x;
  }
  return (x + 0.5 * width) * (x + 0.5 * width) / (2.0 * width);
}

struct DepletionParameters {
  double zero_bias_capacitance_F = 0.0;
  double built_in_potential_V = 0.7;
  double grading_coefficient = 0.5;
  double linearization_fraction = 0.5;  // f_c: linear above f_c·V_bi (Getreu 1976, ch. 3, from memory)
};

// The depletion charge's constants, derived once from the parameters: a device keeps its curve,
// and an evaluation no longer computes the powers that do not depend on the voltage.
struct DepletionCurve {
  DepletionCurve() = default;
  DepletionCurve(const DepletionParameters& p)  // NOLINT(google-explicit-constructor): parameters name their curve
      : c0(p.zero_bias_capacitance_F),
        vb(p.built_in_potential_V),
        m(p.grading_coefficient),
        vf(p.linearization_fraction * p.built_in_potential_V),
        scale(c0 * vb / (1.0 - m)),
        qf(scale * (1.0 - std::pow(1.0 - p.linearization_fraction, 1.0 - m))),
        k(c0 / std::pow(1.0 - p.linearization_fraction, 1.0 + m)),
        linear(1.0 - p.linearization_fraction * (1.0 + m)),
        quadratic(m / (2.0 * vb)),
        vf_squared(vf * vf) {}
  double c0 = 0.0, vb = 0.7, m = 0.5, vf = 0.35;
  double scale = 0.0;                   // C_j0·V_bi/(1 − m)
  double qf = 0.0, k = 0.0;             // the charge at vf; C_j0/(1 − fc)^(1 + m)
  double linear = 0.0, quadratic = 0.0, vf_squared = 0.0;  // 1 − fc·(1 + m); m/(2·V_bi); vf²
};

template <class S>
S depletion_charge_C(const S& v, const DepletionCurve& d) {
  if (d.c0 == 0.0) return S(0.0);
  if (value_of(v) < d.vf) return d.scale * (1.0 - pow(1.0 - v / d.vb, 1.0 - d.m));
  // C(v) = k·(1 − fc·(1 + m) + m·v/V_bi) integrated from vf.
  const S dv = v - d.vf;
  return d.qf + d.k * (d.linear * dv + d.quadratic * (v * v - d.vf_squared));
}

struct ExpBranch {
  double scale_current_A = 1e-14;  // I_s
  double offset_V = 0.0;           // u_0
  double emission_voltage_V = 0.0257;  // n·V_T
  double series_resistance_ohm = 0.0;
  double minus_one = 1.0;          // c: 1 for a Shockley junction, 0 for a breakdown knee
  double x_crit = 40.0;            // limit of the exponent, from the critical current

  // Sets x_crit so that the limited exponential starts at `critical_current_A`.
  void set_critical_current(double critical_current_A) {
    x_crit = std::log(critical_current_A / scale_current_A + minus_one);
  }
};

// Breakdown knee (Zener/TVS reverse, BJT collector–emitter, MOSFET drain avalanche): the branch
// I = I_t·exp_lim((u_j − u_0)/(n_b·V_T)) behind R_b = r_dyn − n_b·V_T/I_t (at least 0), with u_0
// placed so that the voltage at the test current I_t is the breakdown voltage and the slope there
// is the dynamic resistance r_dyn; plus, for the pwl level, the tangent of that curve at a
// reference current I_ref (where the two levels agree exactly; I_ref = I_t when not given).
// Tangent at I_ref: u(I_ref) = u_0 + n_b·V_T·ln(I_ref/I_t) + R_b·I_ref, slope R_b + n_b·V_T/I_ref.
// A line taken at the small test current would carry the knee's small-current slope n_b·V_T/I_t
// (about 100 Ω at 250 µA) up to a coil's ampere, tens of volts above the physical clamp.
// At a current x·I_ref the pwl line lies n_b·V_T·(x − 1 − ln x) above the physical curve: ≤ 0.31·n_b·V_T
// for x in [1/2, 2] (derivation: docs/derivations.md, "pwl breakdown line").
struct BreakdownKnee {
  ExpBranch branch;
  double pwl_knee_V = 0.0;          // where the pwl line crosses zero current
  double pwl_resistance_ohm = 0.0;  // its slope: the dynamic resistance at the test current
};
BreakdownKnee make_breakdown_knee(double breakdown_voltage_V, double test_current_A, double dynamic_resistance_ohm,
                                  double knee_emission_coefficient, double thermal_voltage_V, double critical_current_A,
                                  double pwl_reference_current_A);

// Junction current I(u_j) of the branch.
template <class S>
S branch_junction_current(const S& uj, const ExpBranch& b) {
  return b.scale_current_A * (exp_limited((uj - b.offset_V) / b.emission_voltage_V, b.x_crit) - b.minus_one);
}

// Junction voltage u_j for terminal voltage u (double precision, safeguarded Newton).
double branch_junction_voltage_V(double u, const ExpBranch& b);

// The branch at terminal voltage u as a junction for the operating-point Newton
// (engine::JunctionState, terminals filled in by the caller): on its exponential part when the
// exponent lies between kExponentialFrom (the current e^10 times the scale current) and the
// limit x_crit; dv/d(ln I) = n·V_T + R·I_s·e^x there.
constexpr double kExponentialFrom = 10.0;
struct BranchJunction {
  double log_slope_V = 0.0;
  bool exponential = false;
};
BranchJunction branch_junction(double u, const ExpBranch& b);

// Branch current I(u) through the series resistance, with exact derivatives in S.
template <class S>
S branch_current(const S& u, const ExpBranch& b, S* junction_voltage = nullptr) {
  const double r = b.series_resistance_ohm;
  if (r == 0.0) {
    if (junction_voltage) *junction_voltage = u;
    return branch_junction_current(u, b);
  }
  S uj = S(branch_junction_voltage_V(value_of(u), b));
  for (int k = 0; k < derivative_order<S>::value; ++k) {  // exact derivatives of each order
    S slope;  // one exponential for the current and its slope
    const S i = b.scale_current_A * (exp_limited((uj - b.offset_V) / b.emission_voltage_V, b.x_crit, &slope) - b.minus_one);
    const S di = b.scale_current_A / b.emission_voltage_V * slope;
    uj = uj - (uj + r * i - u) / (1.0 + r * di);
  }
  if (junction_voltage) *junction_voltage = uj;
  // I(u_j) rather than (u − u_j)/R: no cancellation at small currents.
  return branch_junction_current(uj, b);
}

}  // namespace coilkick::devices
