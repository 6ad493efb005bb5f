#pragma once
// Locates the requested events inside each accepted step from the dense output.
// Crossings: sign change of (probe − threshold) between the step's ends, then bisection.
// Extrema: the probe is sampled at the ends and 3 interior points of every step (the interior
// skipped once both ends lie more than 10 % beyond the best so far); when the best sample lies
// inside the step, that step's dense output is kept and, once the run is over (`finish`), the
// best sample's neighbourhood is refined by golden-section search — only the step that holds
// the extremum in the end, not every step that held it for a while — and the refined value
// replaces the sampled one (the kept interpolant may be more exact than the sampling one). Where
// the kept step can also give the states at one instant integrated from its start (`exact`), the
// refined extremum's value is read there; where that differs from the dense output's by more than
// the run's accuracy (dense_agreement), the search is done again on the step in short sub-steps
// (`finer`); and an accepted point that beats the refined value keeps the extremum: a dense
// output may bulge between its ends by more than the step's error (a fast transient that decayed
// inside the step), and a probe through a steep piece of a pwl curve multiplies that (a clamp
// diode's current, 1.3 % high on a 19 mA peak before this). A crossing that enters and
// leaves within one step is not seen (steps are short against the features of interest). Every
// probe value at a step's end is reused as the next step's start.
#include <functional>
#include <limits>
#include <vector>

#include "coilkick/engine/probe.hpp"

namespace coilkick::engine {

class EventLocator {
 public:
  // interpolate(t, x, rates): fills x and, when `rates` is not null, ẋ (size of the state)
  // inside the step. The locator asks for rates only for probes that read them.
  using Interpolant = std::function<void(double t_s, double* x, double* rates)>;
  // The same step kept after it (owning its data) for the extremum refinement in finish(): its
  // dense output, which may compute rates more exactly (and more expensively) than the one passed
  // to on_step, and, unless empty, the states (and rates) at an instant integrated from the
  // step's start to it.
  struct KeptStep {
    Interpolant dense;
    Interpolant exact;
    // Where exact is given: the step over [a, b] again in short sub-steps, their dense outputs.
    std::function<Interpolant(double a_s, double b_s)> finer;
  };
  using KeepInterpolant = std::function<KeptStep()>;

  // `dense_agreement`: how far (relative) a refined extremum's exact value may lie from its dense
  // output's before the search is done again in short sub-steps (the run's own accuracy: the
  // transient passes ten times its relative tolerance).
  EventLocator(const std::vector<EventSpec>& specs, int state_size, double time_tolerance_s, double dense_agreement = 1e-5);
  // Seeds the extrema with the initial point (states and their rates).
  void start(double t_s, const double* x, const double* rates);
  // Inspects one accepted step, given the states and rates at both ends. Returns the earliest
  // time at which an event with stops_run fired inside it, or +inf.
  double on_step(double t0, const double* x0, const double* r0, double t1, const double* x1,
                 const double* r1, const Interpolant& f, const KeepInterpolant& keep);
  // Refines the extrema kept for later; call once after the last step, before outcomes().
  void finish();
  const std::vector<EventOutcome>& outcomes() const { return outcomes_; }

 private:
  const std::vector<EventSpec>& specs_;
  std::vector<EventOutcome> outcomes_;
  // The last few instants interpolated in the step at hand (the probes of one step sample the
  // same instants, and interpolating the whole state is most of a voltage probe's cost): each
  // with its states and, when rates_valid, its rates. Emptied for a new step or interpolant.
  struct Sample {
    double t = std::numeric_limits<double>::quiet_NaN();
    bool rates_valid = false;
    std::vector<double> x, rate;
  };
  static constexpr int kSamplesKept = 4;  // the ends and three interior instants of one step
  Sample samples_[kSamplesKept];
  int next_sample_ = 0;
  void forget_samples();
  std::vector<double> end_time_, end_value_;  // each probe at the last step's end
  struct Kept {                                // per extremum: the step to refine in finish()
    double a = 0.0, b = 0.0;
    KeptStep step;
  };
  std::vector<Kept> kept_;
  std::vector<EventOutcome> best_point_;       // per extremum: the best value at an accepted point
  double tol_, dense_agreement_;
  double probe_at_start(std::size_t k, double t0, const double* x0, const double* r0);
  double probe_at_end(std::size_t k, double t1, const double* x1, const double* r1);
  // At the end of the part of a step looked at: the accepted point, or (x1 null: the run
  // stops inside the step) the interpolant there.
  double probe_at_step_end(std::size_t k, double t1, const double* x1, const double* r1, const Interpolant& f);
  // One event over [t0, t1]; a crossing returns its time (+inf: none).
  double on_crossing(std::size_t k, double t0, const double* x0, const double* r0, double t1, const double* x1, const double* r1,
                     const Interpolant& f);
  void on_extremum(std::size_t k, double t0, const double* x0, const double* r0, double t1, const double* x1, const double* r1,
                   const Interpolant& f, const KeepInterpolant& keep);
  double locate_crossing(const EventSpec& e, double a, double ga, double b, const Interpolant& f);
  void refine_extremum(std::size_t k, double a, double b, const KeptStep& step);
  double probe_at(const EventSpec& e, double t, const Interpolant& f);
};

}  // namespace coilkick::engine
