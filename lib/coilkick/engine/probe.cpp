#include "coilkick/engine/probe.hpp"

#include <memory>

namespace coilkick::engine {

Probe Probe::node_voltage(const Circuit& circuit, const std::string& node) {
  const int k = circuit.node_slot(node);
  const Circuit* c = &circuit;
  return Probe("voltage at " + node, [c, k](double t, const double* x) { return c->node_voltage_at(k, t, x); });
}

Probe Probe::voltage_between(const Circuit& circuit, const std::string& a, const std::string& b) {
  const Circuit* c = &circuit;
  const int ka = circuit.node_slot(a), kb = circuit.node_slot(b);
  return Probe("voltage from " + a + " to " + b, [c, ka, kb](double t, const double* x) {
    return c->node_voltage_at(ka, t, x) - c->node_voltage_at(kb, t, x);
  });
}

Probe Probe::state(const Circuit& circuit, const std::string& name) {
  const int k = circuit.state_index(name);
  return Probe(name, [k](double, const double* x) { return x[k]; });
}

Probe Probe::element_current(const Circuit& circuit, const std::string& element, int terminal) {
  const int e = circuit.element_with_terminal(element, terminal, "probe");
  const Circuit* c = &circuit;
  auto w = std::make_shared<Workspace>(circuit.make_workspace());
  return using_rates("current into " + element, [c, e, terminal, w](double t, const double* x, const double* rates) {
    return c->terminal_current_A(e, terminal, t, x, rates, *w);
  });
}

EventSpec EventSpec::crossing(std::string name, Probe probe, double threshold, Direction direction,
                              double after_time_s, bool stops_run) {
  return EventSpec{std::move(name), std::move(probe), Kind::crossing, threshold, direction,
                   after_time_s, stops_run};
}

EventSpec EventSpec::maximum(std::string name, Probe probe, double after_time_s) {
  return EventSpec{std::move(name), std::move(probe), Kind::maximum, 0.0, Direction::either,
                   after_time_s, false};
}

EventSpec EventSpec::minimum(std::string name, Probe probe, double after_time_s) {
  return EventSpec{std::move(name), std::move(probe), Kind::minimum, 0.0, Direction::either,
                   after_time_s, false};
}

}  // namespace coilkick::engine
