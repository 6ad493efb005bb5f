#include "coilkick/devices/mosfet.hpp"

#include <cmath>

#include "coilkick/engine/parameter_check.hpp"

namespace coilkick::devices {

using engine::require_finite;
using engine::require_non_negative;
using engine::require_open_range;
using engine::require_positive;

void check_mosfet_parameters(const std::string& owner, const MosfetParameters& p) {
  require_positive(owner, "threshold_voltage_V", p.threshold_voltage_V);
  require_positive(owner, "transconductance_parameter_A_per_V2", p.transconductance_parameter_A_per_V2);
  require_non_negative(owner, "channel_length_modulation_per_V", p.channel_length_modulation_per_V);
  require_non_negative(owner, "gate_source_capacitance_F", p.gate_source_capacitance_F);
  require_non_negative(owner, "gate_drain_capacitance_F", p.gate_drain_capacitance_F);
  require_finite(owner, "threshold_temperature_coefficient_V_per_K", p.threshold_temperature_coefficient_V_per_K);
  require_finite(owner, "mobility_temperature_exponent", p.mobility_temperature_exponent);
  require_finite(owner, "nominal_temperature_C", p.nominal_temperature_C);
  require_open_range(owner, "temperature_C", p.temperature_C, -273.15, 400.0);
  check_diode_parameters(owner + " body diode", p.body_diode);
  if (!std::isinf(p.drain_source_breakdown_voltage_V) || p.drain_source_breakdown_voltage_V < 0) {
    require_positive(owner, "drain_source_breakdown_voltage_V", p.drain_source_breakdown_voltage_V);
  }
  require_positive(owner, "breakdown_test_current_A", p.breakdown_test_current_A);
  require_positive(owner, "breakdown_dynamic_resistance_ohm", p.breakdown_dynamic_resistance_ohm);
  require_positive(owner, "breakdown_knee_emission_coefficient", p.breakdown_knee_emission_coefficient);
  if (!std::isnan(p.on_resistance_ohm)) require_positive(owner, "on_resistance_ohm", p.on_resistance_ohm);
  if (!std::isnan(p.pwl_transconductance_S)) require_positive(owner, "pwl_transconductance_S", p.pwl_transconductance_S);
  require_positive(owner, "pwl_gate_drive_V", p.pwl_gate_drive_V);
  if (!std::isnan(p.pwl_breakdown_reference_current_A)) {
    require_positive(owner, "pwl_breakdown_reference_current_A", p.pwl_breakdown_reference_current_A);
  }
  if (!(p.pwl_gate_drive_V > p.threshold_voltage_V)) {
    require_open_range(owner, "pwl_gate_drive_V (above threshold_voltage_V)", p.pwl_gate_drive_V,
                       p.threshold_voltage_V, std::numeric_limits<double>::infinity());
  }
  require_positive(owner, "minimum_conductance_S", p.minimum_conductance_S);
  require_positive(owner, "critical_current_A", p.critical_current_A);
}

MosfetDerived derive_mosfet(const MosfetParameters& p) {
  MosfetDerived d{};
  d.sign = p.polarity == Polarity::n ? 1.0 : -1.0;
  const double dt = p.temperature_C - p.nominal_temperature_C;
  d.vth = p.threshold_voltage_V + p.threshold_temperature_coefficient_V_per_K * dt;
  const double ratio = (p.temperature_C + kZeroCelsius_K) / (p.nominal_temperature_C + kZeroCelsius_K);
  d.k = p.transconductance_parameter_A_per_V2 * std::pow(ratio, p.mobility_temperature_exponent);
  d.body = p.body_diode;
  d.body.temperature_C = p.temperature_C;
  d.body.nominal_temperature_C = p.nominal_temperature_C;
  d.body.breakdown_voltage_V = std::numeric_limits<double>::infinity();
  d.body_curves = derive_diode_curves(d.body);
  d.has_breakdown = std::isfinite(p.drain_source_breakdown_voltage_V);
  if (d.has_breakdown) {
    const BreakdownKnee k = make_breakdown_knee(p.drain_source_breakdown_voltage_V, p.breakdown_test_current_A,
                                                p.breakdown_dynamic_resistance_ohm, p.breakdown_knee_emission_coefficient,
                                                thermal_voltage_V(p.temperature_C), p.critical_current_A,
                                                p.pwl_breakdown_reference_current_A);
    d.breakdown = k.branch;
    d.breakdown_resistance_ohm = k.pwl_resistance_ohm;
    d.breakdown_knee_V = k.pwl_knee_V;
  }
  const double vov = p.pwl_gate_drive_V - d.vth;
  d.on_resistance_ohm = std::isnan(p.on_resistance_ohm) ? 1.0 / (d.k * vov) : p.on_resistance_ohm;
  d.pwl_transconductance_S = std::isnan(p.pwl_transconductance_S) ? 0.5 * d.k * vov : p.pwl_transconductance_S;
  return d;
}

PhysicalMosfet::PhysicalMosfet(std::string name, std::string drain, std::string gate, std::string source,
                               MosfetParameters p)
    : TerminalDevice(std::move(name), {std::move(drain), std::move(gate), std::move(source)}), p_(p) {
  check_mosfet_parameters("transistor '" + this->name() + "'", p_);
  d_ = derive_mosfet(p_);
}

PwlMosfet::PwlMosfet(std::string name, std::string drain, std::string gate, std::string source, MosfetParameters p)
    : TerminalDevice(std::move(name), {std::move(drain), std::move(gate), std::move(source)}), p_(p) {
  check_mosfet_parameters("transistor '" + this->name() + "'", p_);
  d_ = derive_mosfet(p_);
}

std::shared_ptr<engine::Element> make_mosfet(const std::string& name, const std::string& drain,
                                             const std::string& gate, const std::string& source,
                                             const MosfetParameters& p, ModelLevel level) {
  if (level == ModelLevel::pwl) return std::make_shared<PwlMosfet>(name, drain, gate, source, p);
  return std::make_shared<PhysicalMosfet>(name, drain, gate, source, p);
}

}  // namespace coilkick::devices
