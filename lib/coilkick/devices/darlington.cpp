#include "coilkick/devices/darlington.hpp"

#include "coilkick/engine/parameter_check.hpp"

namespace coilkick::devices {

void check_darlington_parameters(const std::string& owner, const DarlingtonParameters& p) {
  check_bjt_parameters(owner, p.transistor);
  engine::require_positive(owner, "input_area_ratio", p.input_area_ratio);
  engine::require_positive(owner, "input_resistor_ohm", p.input_resistor_ohm);
  engine::require_positive(owner, "output_resistor_ohm", p.output_resistor_ohm);
}

void add_darlington(engine::Network& net, const std::string& name, const std::string& collector,
                    const std::string& base, const std::string& emitter, const DarlingtonParameters& p,
                    ModelLevel level) {
  check_darlington_parameters("darlington '" + name + "'", p);
  const std::string mid = name + ".mid";
  BjtParameters input = p.transistor;
  input.saturation_current_A *= p.input_area_ratio;
  input.pwl_reference_collector_current_A *= 1.0 / p.transistor.forward_beta;
  net.add(make_bjt(name + ".input", collector, base, mid, input, level));
  net.add(make_bjt(name + ".output", collector, mid, emitter, p.transistor, level));
  net.add_resistor(name + ".input_resistor", base, mid, p.input_resistor_ohm);
  net.add_resistor(name + ".output_resistor", mid, emitter, p.output_resistor_ohm);
}

}  // namespace coilkick::devices
