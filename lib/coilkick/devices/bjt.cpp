#include "coilkick/devices/bjt.hpp"

#include <cmath>

#include "coilkick/engine/parameter_check.hpp"

namespace coilkick::devices {

using engine::require_finite;
using engine::require_non_negative;
using engine::require_open_range;
using engine::require_positive;

void check_bjt_parameters(const std::string& owner, const BjtParameters& p) {
  require_positive(owner, "saturation_current_A", p.saturation_current_A);
  require_positive(owner, "forward_beta", p.forward_beta);
  require_positive(owner, "reverse_beta", p.reverse_beta);
  require_positive(owner, "forward_emission_coefficient", p.forward_emission_coefficient);
  require_positive(owner, "reverse_emission_coefficient", p.reverse_emission_coefficient);
  if (!(p.forward_early_voltage_V > 0.0)) require_positive(owner, "forward_early_voltage_V", p.forward_early_voltage_V);
  require_non_negative(owner, "collector_resistance_ohm", p.collector_resistance_ohm);
  require_non_negative(owner, "base_emitter_capacitance_F", p.base_emitter_capacitance_F);
  require_positive(owner, "base_emitter_built_in_potential_V", p.base_emitter_built_in_potential_V);
  require_open_range(owner, "base_emitter_grading_coefficient", p.base_emitter_grading_coefficient, 0.0, 1.0);
  require_non_negative(owner, "base_collector_capacitance_F", p.base_collector_capacitance_F);
  require_positive(owner, "base_collector_built_in_potential_V", p.base_collector_built_in_potential_V);
  require_open_range(owner, "base_collector_grading_coefficient", p.base_collector_grading_coefficient, 0.0, 1.0);
  require_open_range(owner, "depletion_linearization_fraction", p.depletion_linearization_fraction, 0.0, 1.0);
  require_non_negative(owner, "forward_transit_time_s", p.forward_transit_time_s);
  require_non_negative(owner, "reverse_transit_time_s", p.reverse_transit_time_s);
  if (!std::isinf(p.collector_emitter_breakdown_voltage_V) || p.collector_emitter_breakdown_voltage_V < 0) {
    require_positive(owner, "collector_emitter_breakdown_voltage_V", p.collector_emitter_breakdown_voltage_V);
  }
  require_positive(owner, "breakdown_test_current_A", p.breakdown_test_current_A);
  require_positive(owner, "breakdown_dynamic_resistance_ohm", p.breakdown_dynamic_resistance_ohm);
  require_positive(owner, "breakdown_knee_emission_coefficient", p.breakdown_knee_emission_coefficient);
  require_positive(owner, "energy_gap_eV", p.energy_gap_eV);
  require_finite(owner, "saturation_current_temperature_exponent", p.saturation_current_temperature_exponent);
  require_finite(owner, "beta_temperature_exponent", p.beta_temperature_exponent);
  require_finite(owner, "nominal_temperature_C", p.nominal_temperature_C);
  require_open_range(owner, "temperature_C", p.temperature_C, -273.15, 400.0);
  if (!std::isnan(p.base_emitter_knee_voltage_V)) require_finite(owner, "base_emitter_knee_voltage_V", p.base_emitter_knee_voltage_V);
  if (!std::isnan(p.base_emitter_on_resistance_ohm)) require_positive(owner, "base_emitter_on_resistance_ohm", p.base_emitter_on_resistance_ohm);
  if (!std::isnan(p.saturation_knee_voltage_V)) require_finite(owner, "saturation_knee_voltage_V", p.saturation_knee_voltage_V);
  if (!std::isnan(p.saturation_resistance_ohm)) require_positive(owner, "saturation_resistance_ohm", p.saturation_resistance_ohm);
  require_positive(owner, "pwl_reference_collector_current_A", p.pwl_reference_collector_current_A);
  require_positive(owner, "pwl_forced_beta", p.pwl_forced_beta);
  if (!std::isnan(p.pwl_breakdown_reference_current_A)) {
    require_positive(owner, "pwl_breakdown_reference_current_A", p.pwl_breakdown_reference_current_A);
  }
  if (!(p.pwl_forced_beta < p.forward_beta)) {
    require_open_range(owner, "pwl_forced_beta (below forward_beta)", p.pwl_forced_beta, 0.0, p.forward_beta);
  }
  require_positive(owner, "critical_current_A", p.critical_current_A);
  require_positive(owner, "minimum_conductance_S", p.minimum_conductance_S);
}

namespace {
// I_F and I_R (A) of the transport model for given collector and base currents.
void transport_currents(const BjtParameters& p, const BjtDerived& d, double ic, double ib,
                        double& i_f, double& i_r) {
  double early = 1.0;
  for (int it = 0; it < 4; ++it) {
    i_r = (d.beta_f * ib * early - ic) / (early * (d.beta_f / d.beta_r + 1.0) + 1.0 / d.beta_r);
    i_f = d.beta_f * (ib - i_r / d.beta_r);
    const double vbc = p.reverse_emission_coefficient * d.vt * std::log1p(std::max(i_r, -0.999 * d.is) / d.is);
    early = std::isinf(p.forward_early_voltage_V) ? 1.0 : 1.0 - vbc / p.forward_early_voltage_V;
  }
}

BjtBias bias_from(const BjtParameters& p, const BjtDerived& d, double ic, double ib) {
  double i_f = 0.0, i_r = 0.0;
  transport_currents(p, d, ic, ib, i_f, i_r);
  const double vbe = p.forward_emission_coefficient * d.vt * std::log1p(i_f / d.is);
  const double vbc = p.reverse_emission_coefficient * d.vt * std::log1p(std::max(i_r, -0.999 * d.is) / d.is);
  // The collector resistance adds its drop to the intrinsic saturation voltage.
  return {vbe, vbe - vbc + p.collector_resistance_ohm * ic};
}
}  // namespace

BjtDerived derive_bjt(const BjtParameters& p) {
  BjtDerived d{};
  d.sign = p.polarity == Polarity::n ? 1.0 : -1.0;
  d.vt = thermal_voltage_V(p.temperature_C);
  d.is = saturation_current_at_A(p.saturation_current_A, p.forward_emission_coefficient, p.energy_gap_eV,
                                 p.saturation_current_temperature_exponent, p.nominal_temperature_C,
                                 p.temperature_C);
  const double ratio = (p.temperature_C + kZeroCelsius_K) / (p.nominal_temperature_C + kZeroCelsius_K);
  d.beta_f = p.forward_beta * std::pow(ratio, p.beta_temperature_exponent);
  d.beta_r = p.reverse_beta * std::pow(ratio, p.beta_temperature_exponent);
  d.xcrit = std::log(p.critical_current_A / d.is + 1.0);
  d.be_depletion = DepletionParameters{p.base_emitter_capacitance_F, p.base_emitter_built_in_potential_V,
                    p.base_emitter_grading_coefficient, p.depletion_linearization_fraction};
  d.bc_depletion = DepletionParameters{p.base_collector_capacitance_F, p.base_collector_built_in_potential_V,
                    p.base_collector_grading_coefficient, p.depletion_linearization_fraction};
  d.has_breakdown = std::isfinite(p.collector_emitter_breakdown_voltage_V);
  if (d.has_breakdown) {
    const BreakdownKnee k = make_breakdown_knee(p.collector_emitter_breakdown_voltage_V, p.breakdown_test_current_A,
                                                p.breakdown_dynamic_resistance_ohm, p.breakdown_knee_emission_coefficient,
                                                d.vt, p.critical_current_A, p.pwl_breakdown_reference_current_A);
    d.breakdown = k.branch;
    d.breakdown_resistance_ohm = k.pwl_resistance_ohm;
    d.breakdown_knee_V = k.pwl_knee_V;
  }
  // pwl segments from the saturated operating point (I_C, I_C/forced beta).
  const double ic = p.pwl_reference_collector_current_A, ib = ic / p.pwl_forced_beta;
  const BjtBias b = bias_from(p, d, ic, ib);
  const double r_be = p.forward_emission_coefficient * d.vt * d.beta_f / (d.is + d.beta_f * ib);
  const double dic = 1e-6 * ic;
  const double r_sat = (bias_from(p, d, ic + dic, ib).collector_emitter_V -
                        bias_from(p, d, ic - dic, ib).collector_emitter_V) / (2.0 * dic);
  d.be_resistance_ohm = std::isnan(p.base_emitter_on_resistance_ohm) ? r_be : p.base_emitter_on_resistance_ohm;
  d.be_knee_V = std::isnan(p.base_emitter_knee_voltage_V) ? b.base_emitter_V - d.be_resistance_ohm * ib
                                                          : p.base_emitter_knee_voltage_V;
  d.sat_resistance_ohm = std::isnan(p.saturation_resistance_ohm) ? r_sat : p.saturation_resistance_ohm;
  d.sat_knee_V = std::isnan(p.saturation_knee_voltage_V) ? b.collector_emitter_V - d.sat_resistance_ohm * ic
                                                         : p.saturation_knee_voltage_V;
  return d;
}

BjtBias physical_bias_at(const BjtParameters& p, double collector_current_A, double base_current_A) {
  return bias_from(p, derive_bjt(p), collector_current_A, base_current_A);
}

double PhysicalBjt::intrinsic_vbc_V(double vbe, double vbc_terminal) const {
  // h(y) = y − R_C·I_C(vbe, y) − vbc_terminal is increasing in y; bracket, then Newton with
  // bisection as the safeguard.
  const double rc = p_.collector_resistance_ohm;
  auto h = [&](double y, double& dh) {
    double ic, ib, i_f, i_r;
    transport(vbe, y, ic, ib, i_f, i_r);
    dh = 1.0 - rc * collector_slope(y, i_f, i_r);
    return y - rc * ic - vbc_terminal;
  };
  double dh = 0.0;
  // Fast path: Newton from the terminal value (the collector drop is usually small).
  {
    double y = vbc_terminal;
    for (int it = 0; it < 40; ++it) {
      const double hy = h(y, dh);
      const double step = hy / dh;
      if (!std::isfinite(step)) break;
      y -= step;
      if (std::abs(step) <= 1e-15 * std::max(1.0, std::abs(y))) return y;
    }
  }
  double lo = vbc_terminal, hi = vbc_terminal;
  for (double step = 0.1; h(lo, dh) > 0.0; step *= 2.0) lo -= step;
  for (double step = 0.1; h(hi, dh) < 0.0; step *= 2.0) hi += step;
  double y = std::min(std::max(vbc_terminal, lo), hi);
  for (int it = 0; it < 200; ++it) {
    const double hy = h(y, dh);
    if (hy > 0.0) hi = y;
    else lo = y;
    double next = y - hy / dh;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (std::abs(next - y) <= 1e-15 * std::max(1.0, std::abs(y)) || hi - lo <= 1e-15) return next;
    y = next;
  }
  return y;
}

PhysicalBjt::PhysicalBjt(std::string name, std::string collector, std::string base, std::string emitter,
                         BjtParameters p)
    : TerminalDevice(std::move(name), {std::move(collector), std::move(base), std::move(emitter)}), p_(p) {
  check_bjt_parameters("transistor '" + this->name() + "'", p_);
  d_ = derive_bjt(p_);
}

PwlBjt::PwlBjt(std::string name, std::string collector, std::string base, std::string emitter, BjtParameters p)
    : TerminalDevice(std::move(name), {std::move(collector), std::move(base), std::move(emitter)}), p_(p) {
  const std::string owner = "transistor '" + this->name() + "'";
  check_bjt_parameters(owner, p_);
  d_ = derive_bjt(p_);
  require_positive(owner, "saturation_resistance_ohm (derived)", d_.sat_resistance_ohm);
  require_positive(owner, "base_emitter_on_resistance_ohm (derived)", d_.be_resistance_ohm);
}

std::shared_ptr<engine::Element> make_bjt(const std::string& name, const std::string& collector,
                                          const std::string& base, const std::string& emitter,
                                          const BjtParameters& p, ModelLevel level) {
  if (level == ModelLevel::pwl) return std::make_shared<PwlBjt>(name, collector, base, emitter, p);
  return std::make_shared<PhysicalBjt>(name, collector, base, emitter, p);
}

}  // namespace coilkick::devices
