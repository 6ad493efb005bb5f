#pragma once
// Probes (a quantity computed from the states) and the events located on them during a
// transient: threshold crossings and extrema, each optionally only after a given time.
// Events are located on the integrator's dense output, not on the accepted points, to
// `event_time_tolerance_s` (TransientOptions).
#include <functional>
#include <limits>
#include <optional>
#include <string>

#include "coilkick/engine/circuit.hpp"

namespace coilkick::engine {

class Probe {
 public:
  using Function = std::function<double(double t_s, const double* x)>;
  Probe(std::string description, Function f) : description_(std::move(description)), f_(std::move(f)) {}
  // The circuit must outlive these probes.
  static Probe node_voltage(const Circuit& circuit, const std::string& node);            // V
  static Probe voltage_between(const Circuit& circuit, const std::string& a, const std::string& b);
  static Probe state(const Circuit& circuit, const std::string& name);                   // unit of the state
  double operator()(double t_s, const double* x) const { return f_(t_s, x); }
  const std::string& description() const { return description_; }

 private:
  std::string description_;
  Function f_;
};

enum class Direction { falling, rising, either };

struct EventSpec {
  enum class Kind { crossing, maximum, minimum };
  std::string name;
  Probe probe;
  Kind kind = Kind::crossing;
  double threshold = 0.0;           // crossing only, in the probe's unit
  Direction direction = Direction::either;
  double after_time_s = -std::numeric_limits<double>::infinity();
  bool stops_run = false;           // crossing only: end the transient at the event

  static EventSpec crossing(std::string name, Probe probe, double threshold, Direction direction,
                            double after_time_s = -std::numeric_limits<double>::infinity(),
                            bool stops_run = false);
  static EventSpec maximum(std::string name, Probe probe,
                           double after_time_s = -std::numeric_limits<double>::infinity());
  static EventSpec minimum(std::string name, Probe probe,
                           double after_time_s = -std::numeric_limits<double>::infinity());
};

struct EventOutcome {
  std::string name;
  std::optional<double> time_s;  // empty: the event did not happen in the simulated interval
  double value = std::numeric_limits<double>::quiet_NaN();  // probe value at time_s
};

}  // namespace coilkick::engine
