#include "coilkick/engine/network.hpp"

#include <cmath>
#include <sstream>
#include <stdexcept>

#include "coilkick/engine/parameter_check.hpp"

namespace coilkick::engine {

const std::string Network::ground = "ground";

void Network::require_new_name(const std::string& name) const {
  if (name.empty()) throw std::invalid_argument("network: element and source names must not be empty");
  for (const auto& e : elements_) {
    if (e->name() == name) throw std::invalid_argument("network: the name '" + name + "' is used twice");
  }
  for (const auto& s : sources_) {
    if (s.name == name) throw std::invalid_argument("network: the name '" + name + "' is used twice");
  }
}

void Network::add_voltage_source(const std::string& name, const std::string& node,
                                 Waveform voltage_V) {
  require_new_name(name);
  if (node.empty()) throw std::invalid_argument("voltage source '" + name + "': node name must not be empty");
  if (node == ground) {
    throw std::invalid_argument("voltage source '" + name + "': cannot fix the ground node");
  }
  for (const auto& s : sources_) {
    if (s.node == node) {
      throw std::invalid_argument("voltage source '" + name + "': node '" + node +
                                  "' is already fixed by source '" + s.name + "'");
    }
  }
  sources_.push_back({name, node, std::move(voltage_V)});
}

const Element& Network::add(std::shared_ptr<const Element> element) {
  if (!element) throw std::invalid_argument("network: null element");
  require_new_name(element->name());
  elements_.push_back(std::move(element));
  return *elements_.back();
}

Resistor& Network::add_resistor(const std::string& name, const std::string& a,
                                const std::string& b, double resistance_ohm) {
  auto e = std::make_shared<Resistor>(name, a, b, resistance_ohm);
  add(e);
  return *e;
}

Capacitor& Network::add_capacitor(const std::string& name, const std::string& a,
                                  const std::string& b, double capacitance_F) {
  auto e = std::make_shared<Capacitor>(name, a, b, capacitance_F);
  add(e);
  return *e;
}

Coil& Network::add_coil(const std::string& name, const std::string& a, const std::string& b,
                        const CoilParameters& parameters) {
  auto e = std::make_shared<Coil>(name, a, b, parameters);
  add(e);
  return *e;
}

CurrentSource& Network::add_current_source(const std::string& name, const std::string& from,
                                           const std::string& to, Waveform current_A) {
  auto e = std::make_shared<CurrentSource>(name, from, to, std::move(current_A));
  add(e);
  return *e;
}

TimedSwitch& Network::add_timed_switch(const std::string& name, const std::string& a,
                                       const std::string& b,
                                       const TimedSwitchParameters& parameters) {
  auto e = std::make_shared<TimedSwitch>(name, a, b, parameters);
  add(e);
  return *e;
}

void Network::replace(const std::string& name, std::shared_ptr<const Element> element) {
  if (!element) throw std::invalid_argument("network: null element");
  for (auto& e : elements_) {
    if (e->name() == name) {
      e = std::move(element);
      return;
    }
  }
  throw std::invalid_argument("network: no element named '" + name + "' to replace");
}

void Network::set_source_waveform(const std::string& name, Waveform voltage_V) {
  for (auto& s : sources_) {
    if (s.name == name) {
      s.voltage_V = std::move(voltage_V);
      return;
    }
  }
  throw std::invalid_argument("network: no voltage source named '" + name + "'");
}

void Network::set_stray_capacitance_F(double capacitance_F) {
  require_non_negative("network", "stray_capacitance_F", capacitance_F);
  stray_capacitance_F_ = capacitance_F;
}

const Element& Network::element(const std::string& name) const {
  for (const auto& e : elements_) {
    if (e->name() == name) return *e;
  }
  throw std::invalid_argument("network: no element named '" + name + "'");
}

}  // namespace coilkick::engine
