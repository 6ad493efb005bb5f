#include "coilkick/engine/rewired_element.hpp"

#include <stdexcept>

namespace coilkick::engine {

RewiredElement::RewiredElement(std::shared_ptr<const Element> inner, std::vector<std::string> terminal_nodes)
    : Element(inner ? inner->name() : std::string("?"), std::move(terminal_nodes)), inner_(std::move(inner)) {
  if (!inner_) throw std::invalid_argument("rewired element: null element");
  if (static_cast<int>(terminals().size()) != inner_->terminal_count()) {
    throw std::invalid_argument("rewired element '" + name() + "': terminal count differs from the element's");
  }
}

}  // namespace coilkick::engine
