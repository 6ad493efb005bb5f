#pragma once
// Locates the requested events inside each accepted step from the dense output.
// Crossings: sign change of (probe − threshold) between the step's ends, then bisection.
// Extrema: the probe is sampled at the ends and 3 interior points of every step (the interior
// skipped once both ends lie more than 10 % beyond the best so far); the best sample's
// neighbourhood is refined by golden-section search when it lies inside the step. A crossing
// that enters and leaves within one step is not seen (steps are short against the features of
// interest). Every probe value at a step's end is reused as the next step's start.
#include <functional>
#include <vector>

#include "coilkick/engine/probe.hpp"

namespace coilkick::engine {

class EventLocator {
 public:
  // interpolate(t, x): fills x (size of the state) with the dense output inside the step.
  using Interpolant = std::function<void(double t_s, double* x)>;

  EventLocator(const std::vector<EventSpec>& specs, int state_size, double time_tolerance_s);
  // Seeds the extrema with the initial point.
  void start(double t_s, const double* x);
  // Inspects one accepted step. Returns the earliest time at which an event with stops_run
  // fired inside it, or +inf.
  double on_step(double t0, const double* x0, double t1, const double* x1, const Interpolant& f);
  const std::vector<EventOutcome>& outcomes() const { return outcomes_; }

 private:
  const std::vector<EventSpec>& specs_;
  std::vector<EventOutcome> outcomes_;
  std::vector<double> scratch_;
  std::vector<double> end_time_, end_value_;  // each probe at the last step's end
  double tol_;
  double probe_at_start(std::size_t k, double t0, const double* x0);
  double probe_at_end(std::size_t k, double t1, const double* x1);
  double locate_crossing(const EventSpec& e, double a, double ga, double b, const Interpolant& f);
  void refine_extremum(std::size_t k, double a, double b, const Interpolant& f);
  double probe_at(const EventSpec& e, double t, const Interpolant& f);
};

}  // namespace coilkick::engine
