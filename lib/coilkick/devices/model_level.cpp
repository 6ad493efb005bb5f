#include "coilkick/devices/model_level.hpp"

#include <stdexcept>

namespace coilkick::devices {

ModelLevel parse_model_level(const std::string& word) {
  if (word == "pwl") return ModelLevel::pwl;
  if (word == "physical") return ModelLevel::physical;
  throw std::invalid_argument("model level must be \"pwl\" or \"physical\", got \"" + word + "\"");
}

std::string to_string(ModelLevel level) { return level == ModelLevel::pwl ? "pwl" : "physical"; }

}  // namespace coilkick::devices
