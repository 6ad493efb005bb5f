#include "coilkick/devices/model_level.hpp"

#include <stdexcept>

namespace coilkick::devices {

ModelLevel parse_model_level(const std::string& word) {
  if (word == "piecewise_linear" || word == "pwl") return ModelLevel::pwl;
  if (word == "physical") return ModelLevel::physical;
  throw std::invalid_argument("device models must be \"physical\" or \"piecewise_linear\" (\"pwl\" also reads), got \"" +
                              word + "\"");
}

std::string to_string(ModelLevel level) { return level == ModelLevel::pwl ? "pwl" : "physical"; }

}  // namespace coilkick::devices
