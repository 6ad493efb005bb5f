#pragma once
// Darlington pair (NPN): an input transistor whose emitter drives the output transistor's
// base, with the usual internal base–emitter resistors. Built from two BJT elements and two
// resistors around an internal node "<name>.mid".
#include <string>

#include "coilkick/devices/bjt.hpp"
#include "coilkick/engine/network.hpp"

namespace coilkick::devices {

struct DarlingtonParameters {
  BjtParameters transistor;        // the output transistor; its breakdown applies to the pair
  double input_area_ratio = 0.1;   // input saturation current = ratio × output's; typical of the class, from memory
  double input_resistor_ohm = 8e3;   // input base–emitter resistor; typical of the class, from memory
  double output_resistor_ohm = 120.0;  // output base–emitter resistor; typical of the class, from memory
};

void check_darlington_parameters(const std::string& owner, const DarlingtonParameters& p);

// Adds the pair to the network between collector, base and emitter nodes. Element names:
// "<name>.input", "<name>.output", "<name>.input_resistor", "<name>.output_resistor".
void add_darlington(engine::Network& net, const std::string& name, const std::string& collector,
                    const std::string& base, const std::string& emitter, const DarlingtonParameters& p,
                    ModelLevel level);

}  // namespace coilkick::devices
