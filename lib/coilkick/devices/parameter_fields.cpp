#include "coilkick/devices/parameter_fields.hpp"

#include <stdexcept>

#include "coilkick/engine/closest_name.hpp"

namespace coilkick::devices {

#define FIELD(P, key, unit, member) \
  ParameterField<P> { key, unit, [](P& p) -> double& { return p.member; } }

const std::vector<ParameterField<DiodeParameters>>& diode_fields() {
  using P = DiodeParameters;
  static const std::vector<ParameterField<P>> f{
      FIELD(P, "saturation_current", "A", saturation_current_A),
      FIELD(P, "emission_coefficient", "1", emission_coefficient),
      FIELD(P, "series_resistance", "ohm", series_resistance_ohm),
      FIELD(P, "transit_time", "s", transit_time_s),
      FIELD(P, "zero_bias_capacitance", "F", zero_bias_capacitance_F),
      FIELD(P, "built_in_potential", "V", built_in_potential_V),
      FIELD(P, "grading_coefficient", "1", grading_coefficient),
      FIELD(P, "depletion_linearization_fraction", "1", depletion_linearization_fraction),
      FIELD(P, "energy_gap", "eV", energy_gap_eV),
      FIELD(P, "saturation_current_temperature_exponent", "1", saturation_current_temperature_exponent),
      FIELD(P, "nominal_temperature", "degC", nominal_temperature_C),
      FIELD(P, "temperature", "degC", temperature_C),
      FIELD(P, "breakdown_voltage", "V", breakdown_voltage_V),
      FIELD(P, "breakdown_test_current", "A", breakdown_test_current_A),
      FIELD(P, "breakdown_dynamic_resistance", "ohm", breakdown_dynamic_resistance_ohm),
      FIELD(P, "breakdown_knee_emission_coefficient", "1", breakdown_knee_emission_coefficient),
      FIELD(P, "breakdown_temperature_coefficient", "1/K", breakdown_temperature_coefficient_per_K),
      FIELD(P, "knee_voltage", "V", knee_voltage_V),
      FIELD(P, "on_resistance", "ohm", on_resistance_ohm),
      FIELD(P, "pwl_reference_current", "A", pwl_reference_current_A),
      FIELD(P, "pwl_breakdown_reference_current", "A", pwl_breakdown_reference_current_A),
      FIELD(P, "critical_current", "A", critical_current_A),
      FIELD(P, "minimum_conductance", "S", minimum_conductance_S),
  };
  return f;
}

const std::vector<ParameterField<BjtParameters>>& bjt_fields() {
  using P = BjtParameters;
  static const std::vector<ParameterField<P>> f{
      FIELD(P, "saturation_current", "A", saturation_current_A),
      FIELD(P, "forward_beta", "1", forward_beta),
      FIELD(P, "reverse_beta", "1", reverse_beta),
      FIELD(P, "forward_emission_coefficient", "1", forward_emission_coefficient),
      FIELD(P, "reverse_emission_coefficient", "1", reverse_emission_coefficient),
      FIELD(P, "forward_early_voltage", "V", forward_early_voltage_V),
      FIELD(P, "collector_resistance", "ohm", collector_resistance_ohm),
      FIELD(P, "base_emitter_capacitance", "F", base_emitter_capacitance_F),
      FIELD(P, "base_emitter_built_in_potential", "V", base_emitter_built_in_potential_V),
      FIELD(P, "base_emitter_grading_coefficient", "1", base_emitter_grading_coefficient),
      FIELD(P, "base_collector_capacitance", "F", base_collector_capacitance_F),
      FIELD(P, "base_collector_built_in_potential", "V", base_collector_built_in_potential_V),
      FIELD(P, "base_collector_grading_coefficient", "1", base_collector_grading_coefficient),
      FIELD(P, "depletion_linearization_fraction", "1", depletion_linearization_fraction),
      FIELD(P, "forward_transit_time", "s", forward_transit_time_s),
      FIELD(P, "reverse_transit_time", "s", reverse_transit_time_s),
      FIELD(P, "collector_emitter_breakdown_voltage", "V", collector_emitter_breakdown_voltage_V),
      FIELD(P, "breakdown_test_current", "A", breakdown_test_current_A),
      FIELD(P, "breakdown_dynamic_resistance", "ohm", breakdown_dynamic_resistance_ohm),
      FIELD(P, "breakdown_knee_emission_coefficient", "1", breakdown_knee_emission_coefficient),
      FIELD(P, "energy_gap", "eV", energy_gap_eV),
      FIELD(P, "saturation_current_temperature_exponent", "1", saturation_current_temperature_exponent),
      FIELD(P, "beta_temperature_exponent", "1", beta_temperature_exponent),
      FIELD(P, "nominal_temperature", "degC", nominal_temperature_C),
      FIELD(P, "temperature", "degC", temperature_C),
      FIELD(P, "base_emitter_knee_voltage", "V", base_emitter_knee_voltage_V),
      FIELD(P, "base_emitter_on_resistance", "ohm", base_emitter_on_resistance_ohm),
      FIELD(P, "saturation_knee_voltage", "V", saturation_knee_voltage_V),
      FIELD(P, "saturation_resistance", "ohm", saturation_resistance_ohm),
      FIELD(P, "pwl_reference_collector_current", "A", pwl_reference_collector_current_A),
      FIELD(P, "pwl_breakdown_reference_current", "A", pwl_breakdown_reference_current_A),
      FIELD(P, "pwl_forced_beta", "1", pwl_forced_beta),
      FIELD(P, "critical_current", "A", critical_current_A),
      FIELD(P, "minimum_conductance", "S", minimum_conductance_S),
  };
  return f;
}

const std::vector<ParameterField<MosfetParameters>>& mosfet_fields() {
  using P = MosfetParameters;
  static const std::vector<ParameterField<P>> f{
      FIELD(P, "threshold_voltage", "V", threshold_voltage_V),
      FIELD(P, "transconductance_parameter", "A/V^2", transconductance_parameter_A_per_V2),
      FIELD(P, "channel_length_modulation", "1/V", channel_length_modulation_per_V),
      FIELD(P, "gate_source_capacitance", "F", gate_source_capacitance_F),
      FIELD(P, "gate_drain_capacitance", "F", gate_drain_capacitance_F),
      FIELD(P, "threshold_temperature_coefficient", "V/K", threshold_temperature_coefficient_V_per_K),
      FIELD(P, "mobility_temperature_exponent", "1", mobility_temperature_exponent),
      FIELD(P, "nominal_temperature", "degC", nominal_temperature_C),
      FIELD(P, "temperature", "degC", temperature_C),
      FIELD(P, "body_diode_saturation_current", "A", body_diode.saturation_current_A),
      FIELD(P, "body_diode_emission_coefficient", "1", body_diode.emission_coefficient),
      FIELD(P, "body_diode_series_resistance", "ohm", body_diode.series_resistance_ohm),
      FIELD(P, "body_diode_transit_time", "s", body_diode.transit_time_s),
      FIELD(P, "body_diode_zero_bias_capacitance", "F", body_diode.zero_bias_capacitance_F),
      FIELD(P, "body_diode_built_in_potential", "V", body_diode.built_in_potential_V),
      FIELD(P, "body_diode_grading_coefficient", "1", body_diode.grading_coefficient),
      FIELD(P, "drain_source_breakdown_voltage", "V", drain_source_breakdown_voltage_V),
      FIELD(P, "breakdown_test_current", "A", breakdown_test_current_A),
      FIELD(P, "breakdown_dynamic_resistance", "ohm", breakdown_dynamic_resistance_ohm),
      FIELD(P, "breakdown_knee_emission_coefficient", "1", breakdown_knee_emission_coefficient),
      FIELD(P, "on_resistance", "ohm", on_resistance_ohm),
      FIELD(P, "pwl_transconductance", "S", pwl_transconductance_S),
      FIELD(P, "pwl_gate_drive", "V", pwl_gate_drive_V),
      FIELD(P, "pwl_breakdown_reference_current", "A", pwl_breakdown_reference_current_A),
      FIELD(P, "minimum_conductance", "S", minimum_conductance_S),
      FIELD(P, "critical_current", "A", critical_current_A),
  };
  return f;
}

const std::vector<ParameterField<DarlingtonParameters>>& darlington_fields() {
  using P = DarlingtonParameters;
  static const std::vector<ParameterField<P>> f = [] {
    std::vector<ParameterField<P>> out{
        FIELD(P, "input_area_ratio", "1", input_area_ratio),
        FIELD(P, "input_resistor", "ohm", input_resistor_ohm),
        FIELD(P, "output_resistor", "ohm", output_resistor_ohm),
    };
    // The transistor's own fields, reached through the same keys as for a single BJT.
#define TFIELD(key, unit, member) FIELD(P, key, unit, transistor.member)
    for (const auto& x : std::vector<ParameterField<P>>{
             TFIELD("saturation_current", "A", saturation_current_A),
             TFIELD("forward_beta", "1", forward_beta),
             TFIELD("reverse_beta", "1", reverse_beta),
             TFIELD("forward_early_voltage", "V", forward_early_voltage_V),
             TFIELD("collector_resistance", "ohm", collector_resistance_ohm),
             TFIELD("base_emitter_capacitance", "F", base_emitter_capacitance_F),
             TFIELD("base_collector_capacitance", "F", base_collector_capacitance_F),
             TFIELD("forward_transit_time", "s", forward_transit_time_s),
             TFIELD("reverse_transit_time", "s", reverse_transit_time_s),
             TFIELD("collector_emitter_breakdown_voltage", "V", collector_emitter_breakdown_voltage_V),
             TFIELD("breakdown_test_current", "A", breakdown_test_current_A),
             TFIELD("breakdown_dynamic_resistance", "ohm", breakdown_dynamic_resistance_ohm),
             TFIELD("beta_temperature_exponent", "1", beta_temperature_exponent),
             TFIELD("temperature", "degC", temperature_C),
             TFIELD("pwl_reference_collector_current", "A", pwl_reference_collector_current_A),
             TFIELD("pwl_breakdown_reference_current", "A", pwl_breakdown_reference_current_A),
             TFIELD("pwl_forced_beta", "1", pwl_forced_beta),
         }) {
      out.push_back(x);
    }
#undef TFIELD
    return out;
  }();
  return f;
}
#undef FIELD

template <class P>
const ParameterField<P>& find_field(const std::vector<ParameterField<P>>& fields, const std::string& key,
                                    const std::string& owner) {
  std::vector<std::string> keys;
  for (const auto& f : fields) {
    if (key == f.key) return f;
    keys.emplace_back(f.key);
  }
  throw std::invalid_argument(owner + ": unknown parameter '" + key + "'" + engine::did_you_mean(key, keys));
}

template const ParameterField<DiodeParameters>& find_field(const std::vector<ParameterField<DiodeParameters>>&,
                                                           const std::string&, const std::string&);
template const ParameterField<BjtParameters>& find_field(const std::vector<ParameterField<BjtParameters>>&,
                                                         const std::string&, const std::string&);
template const ParameterField<MosfetParameters>& find_field(const std::vector<ParameterField<MosfetParameters>>&,
                                                            const std::string&, const std::string&);
template const ParameterField<DarlingtonParameters>& find_field(
    const std::vector<ParameterField<DarlingtonParameters>>&, const std::string&, const std::string&);

}  // namespace coilkick::devices
