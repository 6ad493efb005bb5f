#include "coilkick/devices/diode.hpp"

#include <cmath>

#include "coilkick/engine/parameter_check.hpp"

namespace coilkick::devices {

using engine::require_finite;
using engine::require_non_negative;
using engine::require_positive;

void check_diode_parameters(const std::string& owner, const DiodeParameters& p) {
  require_positive(owner, "saturation_current_A", p.saturation_current_A);
  require_positive(owner, "emission_coefficient", p.emission_coefficient);
  require_non_negative(owner, "series_resistance_ohm", p.series_resistance_ohm);
  require_non_negative(owner, "transit_time_s", p.transit_time_s);
  require_non_negative(owner, "zero_bias_capacitance_F", p.zero_bias_capacitance_F);
  require_positive(owner, "built_in_potential_V", p.built_in_potential_V);
  engine::require_open_range(owner, "grading_coefficient", p.grading_coefficient, 0.0, 1.0);
  engine::require_open_range(owner, "depletion_linearization_fraction", p.depletion_linearization_fraction, 0.0, 1.0);
  require_positive(owner, "energy_gap_eV", p.energy_gap_eV);
  require_finite(owner, "saturation_current_temperature_exponent", p.saturation_current_temperature_exponent);
  require_finite(owner, "nominal_temperature_C", p.nominal_temperature_C);
  engine::require_open_range(owner, "temperature_C", p.temperature_C, -273.15, 400.0);
  if (!std::isinf(p.breakdown_voltage_V)) {
    require_positive(owner, "breakdown_voltage_V", p.breakdown_voltage_V);
    require_positive(owner, "breakdown_test_current_A", p.breakdown_test_current_A);
    require_positive(owner, "breakdown_dynamic_resistance_ohm", p.breakdown_dynamic_resistance_ohm);
    require_positive(owner, "breakdown_knee_emission_coefficient", p.breakdown_knee_emission_coefficient);
    require_finite(owner, "breakdown_temperature_coefficient_per_K", p.breakdown_temperature_coefficient_per_K);
  } else if (p.breakdown_voltage_V < 0.0) {
    require_positive(owner, "breakdown_voltage_V", p.breakdown_voltage_V);
  }
  if (!std::isnan(p.knee_voltage_V)) require_finite(owner, "knee_voltage_V", p.knee_voltage_V);
  if (!std::isnan(p.on_resistance_ohm)) require_positive(owner, "on_resistance_ohm", p.on_resistance_ohm);
  require_positive(owner, "pwl_reference_current_A", p.pwl_reference_current_A);
  if (!std::isnan(p.pwl_breakdown_reference_current_A)) {
    require_positive(owner, "pwl_breakdown_reference_current_A", p.pwl_breakdown_reference_current_A);
  }
  require_positive(owner, "critical_current_A", p.critical_current_A);
  require_positive(owner, "minimum_conductance_S", p.minimum_conductance_S);
}

DiodeCurves derive_diode_curves(const DiodeParameters& p) {
  DiodeCurves c;
  const double vt = thermal_voltage_V(p.temperature_C);
  const double is = saturation_current_at_A(p.saturation_current_A, p.emission_coefficient, p.energy_gap_eV,
                                            p.saturation_current_temperature_exponent,
                                            p.nominal_temperature_C, p.temperature_C);
  c.forward.scale_current_A = is;
  c.forward.offset_V = 0.0;
  c.forward.emission_voltage_V = p.emission_coefficient * vt;
  c.forward.series_resistance_ohm = p.series_resistance_ohm;
  c.forward.minus_one = 1.0;
  c.forward.set_critical_current(p.critical_current_A);
  c.depletion = DepletionParameters{p.zero_bias_capacitance_F, p.built_in_potential_V, p.grading_coefficient,
                 p.depletion_linearization_fraction};
  // pwl forward segment: tangent at the reference current.
  const double iref = p.pwl_reference_current_A;
  const double r_on = c.forward.emission_voltage_V / (iref + is) + p.series_resistance_ohm;
  const double v_ref = c.forward.emission_voltage_V * std::log1p(iref / is) + p.series_resistance_ohm * iref;
  c.on_resistance_ohm = std::isnan(p.on_resistance_ohm) ? r_on : p.on_resistance_ohm;
  c.knee_voltage_V = std::isnan(p.knee_voltage_V) ? v_ref - c.on_resistance_ohm * iref : p.knee_voltage_V;
  c.has_breakdown = std::isfinite(p.breakdown_voltage_V);
  c.breakdown_voltage_V = p.breakdown_voltage_V;
  if (c.has_breakdown) {
    const double bv = p.breakdown_voltage_V *
                      (1.0 + p.breakdown_temperature_coefficient_per_K * (p.temperature_C - p.nominal_temperature_C));
    c.breakdown_voltage_V = bv;
    const BreakdownKnee k = make_breakdown_knee(bv, p.breakdown_test_current_A, p.breakdown_dynamic_resistance_ohm,
                                                p.breakdown_knee_emission_coefficient, vt, p.critical_current_A,
                                                p.pwl_breakdown_reference_current_A);
    c.breakdown = k.branch;
    c.breakdown_resistance_ohm = k.pwl_resistance_ohm;
    c.breakdown_knee_V = k.pwl_knee_V;
  }
  return c;
}

double physical_forward_voltage_V(const DiodeParameters& p, double current_A) {
  const DiodeCurves c = derive_diode_curves(p);
  return c.forward.emission_voltage_V * std::log1p(current_A / c.forward.scale_current_A) +
         p.series_resistance_ohm * current_A;
}

PhysicalDiode::PhysicalDiode(std::string name, std::string anode, std::string cathode, DiodeParameters p)
    : TerminalDevice(std::move(name), {std::move(anode), std::move(cathode)}), p_(p) {
  check_diode_parameters("diode '" + this->name() + "'", p_);
  c_ = derive_diode_curves(p_);
}

PwlDiode::PwlDiode(std::string name, std::string anode, std::string cathode, DiodeParameters p)
    : TerminalDevice(std::move(name), {std::move(anode), std::move(cathode)}), p_(p) {
  check_diode_parameters("diode '" + this->name() + "'", p_);
  c_ = derive_diode_curves(p_);
  if (c_.has_breakdown && !(c_.breakdown_knee_V > 0.0)) {
    engine::require_positive("diode '" + this->name() + "'",
                             "breakdown knee (breakdown_voltage_V − dynamic resistance × test current)",
                             c_.breakdown_knee_V);
  }
  // C(v) = C_j0/(1 − v/V_bi)^m reverse-biased (v < f_c·V_bi), at v = −V_breakdown.
  const double reverse_V = c_.has_breakdown ? c_.breakdown_voltage_V : 0.0;
  fixed_capacitance_F_ = p_.zero_bias_capacitance_F / std::pow(1.0 + reverse_V / p_.built_in_potential_V, p_.grading_coefficient);
}

std::shared_ptr<engine::Element> make_diode(const std::string& name, const std::string& anode,
                                            const std::string& cathode, const DiodeParameters& p,
                                            ModelLevel level) {
  if (level == ModelLevel::pwl) return std::make_shared<PwlDiode>(name, anode, cathode, p);
  return std::make_shared<PhysicalDiode>(name, anode, cathode, p);
}

}  // namespace coilkick::devices
