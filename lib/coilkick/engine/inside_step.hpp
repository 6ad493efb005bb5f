#pragma once
// An accepted step integrated again from its start, for the extremum refinement of the event
// locator (event_locator.hpp). A step's dense output can bulge between its ends by far more than
// the step's error: the L-stable step passes over a fast transient that decays inside it (a
// picosecond pole after a corner) and is exact at its end, but its cubic interpolant is not in
// between — and a probe through a steep pwl piece multiplies the bulge (a clamp diode's current
// read 1.3 % high on a 19 mA peak). Both functions step with the run's own method, tolerances
// and held pieces, from the step's start.
#include <vector>

#include <Eigen/Dense>

#include "coilkick/engine/dense_step.hpp"
#include "coilkick/engine/event_locator.hpp"
#include "coilkick/engine/ode_system.hpp"
#include "coilkick/engine/rosenbrock_step.hpp"

namespace coilkick::engine {

class InsideStep {
 public:
  InsideStep(OdeSystem& sys, RosenbrockStep& stepper, const StageRates& stage_rates, const std::vector<double>& absolute_tolerance,
             double relative_tolerance)
      : sys_(sys), stepper_(stepper), stage_rates_(stage_rates), atol_(absolute_tolerance), rtol_(relative_tolerance) {}

  // The states at t inside the step whose dense output is d (its stages held `pieces`; empty:
  // decided at every stage) and, unless `rates` is null, their rates. The dense output's value
  // where the integration does not settle within kAttempts.
  void state_at(const DenseStep& d, const std::vector<unsigned char>& pieces, double t, double* x, double* rates);
  // The step over [a, b] as sub-steps at most (b − a)/kFinerSubSteps long (from d's start to a
  // as the error allows): their joined dense outputs, rates by evaluating the circuit.
  EventLocator::Interpolant finer(const DenseStep& d, const std::vector<unsigned char>& pieces, double a, double b);

  static constexpr int kAttempts = 200;
  static constexpr int kFinerSubSteps = 8;

 private:
  OdeSystem& sys_;
  RosenbrockStep& stepper_;
  const StageRates& stage_rates_;
  const std::vector<double>& atol_;
  double rtol_;

  // Integrates x from d's start to t_end, no step longer than `cap` after `cap_from` (landing on
  // it); each accepted sub-step to `sub_steps` unless null. False when it did not settle.
  bool integrate(const DenseStep& d, const std::vector<unsigned char>& pieces, double t_end, double cap_from, double cap,
                 Eigen::VectorXd& x, std::vector<DenseStep>* sub_steps);
  void hold(const std::vector<unsigned char>& pieces);
};

}  // namespace coilkick::engine
