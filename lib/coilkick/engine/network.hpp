#pragma once
// A network: named nodes joined by elements, plus ideal voltage sources that fix a node's
// voltage with respect to ground. This is the description a user builds; Circuit (circuit.hpp)
// compiles it into equations.
//
// Node names are free text; "ground" is the reference node (0 V). An ideal voltage source
// always connects a node to ground, which covers supplies and logic outputs (a driver's output
// resistance is a separate resistor). Every other node gets the network's stray capacitance to
// ground (default 1 pF, physically a board's stray), so the equations stay an ODE.
#include <memory>
#include <string>
#include <vector>

#include "coilkick/engine/current_source.hpp"
#include "coilkick/engine/element.hpp"
#include "coilkick/engine/passive_elements.hpp"
#include "coilkick/engine/timed_switch.hpp"
#include "coilkick/engine/waveform.hpp"

namespace coilkick::engine {

struct VoltageSource {
  std::string name;
  std::string node;  // the node whose voltage (V, with respect to ground) the source fixes
  Waveform voltage_V;
};

class Network {
 public:
  static const std::string ground;  // "ground"

  void add_voltage_source(const std::string& name, const std::string& node, Waveform voltage_V);
  Resistor& add_resistor(const std::string& name, const std::string& a, const std::string& b,
                         double resistance_ohm);
  Capacitor& add_capacitor(const std::string& name, const std::string& a, const std::string& b,
                           double capacitance_F);
  Coil& add_coil(const std::string& name, const std::string& a, const std::string& b,
                 const CoilParameters& parameters);
  CurrentSource& add_current_source(const std::string& name, const std::string& from,
                                    const std::string& to, Waveform current_A);
  TimedSwitch& add_timed_switch(const std::string& name, const std::string& a,
                                const std::string& b, const TimedSwitchParameters& parameters);
  // Any element (devices, armatures ...). Names are unique across elements and sources.
  const Element& add(std::shared_ptr<const Element> element);

  // Capacitance from every non-source node to ground (F, >= 0). With 0, every node needs a
  // capacitance from its elements.
  void set_stray_capacitance_F(double capacitance_F);
  double stray_capacitance_F() const { return stray_capacitance_F_; }

  // Replaces the element of that name by another (same or other kind, any terminals), e.g. to
  // inject a fault; the replacement keeps the name given to it.
  void replace(const std::string& name, std::shared_ptr<const Element> element);
  // Gives a voltage source another waveform.
  void set_source_waveform(const std::string& name, Waveform voltage_V);

  const std::vector<std::shared_ptr<const Element>>& elements() const { return elements_; }
  const std::vector<VoltageSource>& voltage_sources() const { return sources_; }
  const Element& element(const std::string& name) const;

 private:
  std::vector<std::shared_ptr<const Element>> elements_;
  std::vector<VoltageSource> sources_;
  double stray_capacitance_F_ = 1e-12;
  void require_new_name(const std::string& name) const;
};

}  // namespace coilkick::engine
