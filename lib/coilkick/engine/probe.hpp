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
  // A probe that also reads the rates ẋ (a charge or inductor current). During a transient the
  // rates come from the evaluation at each accepted point and, inside a step, from the time
  // derivative of the dense output — so such a probe costs one element, not one circuit —
  // except where an extremum is refined: there the rates come from evaluating the circuit at
  // the interpolated states (the dense derivative is one order less accurate, and biased high
  // where a fast edge stops, e.g. a clamp starting to conduct).
  using RateFunction = std::function<double(double t_s, const double* x, const double* rates)>;
  Probe(std::string description, Function f)
      : description_(std::move(description)),
        f_([g = std::move(f)](double t, const double* x, const double*) { return g(t, x); }) {}
  static Probe using_rates(std::string description, RateFunction f) { return Probe(std::move(description), std::move(f), 0); }
  // The circuit must outlive these probes.
  static Probe node_voltage(const Circuit& circuit, const std::string& node);            // V
  static Probe voltage_between(const Circuit& circuit, const std::string& a, const std::string& b);
  static Probe state(const Circuit& circuit, const std::string& name);                   // unit of the state
  // Current (A) into the element at one of its terminals (static and charge parts).
  static Probe element_current(const Circuit& circuit, const std::string& element, int terminal);
  double operator()(double t_s, const double* x, const double* rates) const { return f_(t_s, x, rates); }
  bool reads_rates() const { return reads_rates_; }
  const std::string& description() const { return description_; }

 private:
  Probe(std::string description, RateFunction f, int /*rates tag*/)
      : description_(std::move(description)), f_(std::move(f)), reads_rates_(true) {}
  std::string description_;
  RateFunction f_;
  bool reads_rates_ = false;
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
