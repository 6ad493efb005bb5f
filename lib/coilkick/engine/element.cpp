#include "coilkick/engine/element.hpp"

#include <limits>
#include <stdexcept>

namespace coilkick::engine {

Element::Element(std::string name, std::vector<std::string> terminal_nodes)
    : name_(std::move(name)), terminals_(std::move(terminal_nodes)) {
  if (name_.empty()) throw std::invalid_argument("element: name must not be empty");
  for (const auto& t : terminals_) {
    if (t.empty()) {
      throw std::invalid_argument("element '" + name_ + "': terminal node names must not be empty");
    }
  }
}

double Element::next_corner_after_s(double /*t_s*/) const {
  return std::numeric_limits<double>::infinity();
}

}  // namespace coilkick::engine
