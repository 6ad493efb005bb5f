// The step-size controller: Gustafsson's predictive controller (Hairer & Wanner, Solving Ordinary
// Differential Equations II, 2nd ed., §IV.8, the step-size strategy after eq. (8.21)) proposes
// the smaller of the basic step h·(1/err)^(1/4) and the predicted one, which reads the ratio of
// the last two accepted steps as the controller's own answer to the error. A step shortened to
// land on a target (a source's corner, a change of a pwl piece) is not such an answer.
#include <doctest/doctest.h>

#include <cmath>

#include "coilkick/engine/step_controller.hpp"

using coilkick::engine::StepController;

TEST_CASE("step controller: a step cut short to a target does not shrink the next one") {
  // Found by the random-driver campaign (pwl high-side PNP relay, diode + Zener): a 1e-10 s step
  // (error 0.1), then a step of 5.1e-15 s cut to land on a change of piece (error 8.3e-5): the
  // prediction (h_old/h)·(err²/err_old)^(1/4) ~ 2e4·0.005 asked for a fivefold smaller step, the
  // next accepted step did the same, and the run ended below the minimum step.
  StepController c;
  (void)c.after_acceptance(1e-10, 0.3);
  (void)c.after_acceptance(1e-10, 0.1);
  const double cut = 5.1e-15;
  const double next = c.after_acceptance(cut, 8.3e-5, 1e-10);
  // The basic controller alone: growth by its limit, 6x (error far below 1).
  CHECK(next == doctest::Approx(6.0 * cut).epsilon(1e-12));
}

TEST_CASE("step controller: after rejections, a step cut short to a target may grow back to the proposal") {
  // Found by the random-driver campaign (four pwl channels on a common clamp pin): after a run of
  // rejections the controller proposed 3.3e-11 s, a change of piece cut it to 1.2e-16 s, and
  // "no growth right after a rejection" (Hairer & Wanner, §IV.8) held the next step at the cut
  // step, below the minimum. The rule protects the rejected size: the cut step may grow back up
  // to the proposal, not beyond it.
  StepController c;
  (void)c.after_acceptance(1e-9, 0.5);
  (void)c.after_rejection(1e-9, {2.0, true, 0});
  const double proposal = 3.3e-11, cut = 1.2e-16;
  const double next = c.after_acceptance(cut, 1e-3, proposal);
  CHECK(next == doctest::Approx(6.0 * cut).epsilon(1e-12));  // basic growth, err 1e-3: its limit
  StepController d;
  (void)d.after_acceptance(1e-9, 0.5);
  (void)d.after_rejection(1e-9, {2.0, true, 0});
  CHECK(d.after_acceptance(0.9 * proposal, 1e-3, proposal) == doctest::Approx(proposal).epsilon(1e-12));  // not beyond it
}

TEST_CASE("step controller: the predictive part still acts on the controller's own steps") {
  // Steps the controller chose: a shrinking step with a rising error is predicted to need a
  // smaller one than the basic formula gives (Hairer & Wanner, §IV.8): the proposal is below the
  // basic controller's h·0.9·err^(-1/4).
  StepController c;
  (void)c.after_acceptance(1e-6, 0.01);
  const double dt = 0.5e-6, err = 0.5;
  const double next = c.after_acceptance(dt, err);
  CHECK(next < dt * 0.9 * std::pow(err, -0.25) * (1.0 - 1e-9));
}
