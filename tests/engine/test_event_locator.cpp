// The event locator on closed-form trajectories: x(t) = −cos(t) with ẋ(t) = sin(t), whose
// largest rate is 1 at t = π/2 (elementary calculus). Steps and interpolants are synthetic, so
// what is checked is the locator's own logic.
#include <doctest/doctest.h>

#include <cmath>
#include <limits>
#include <vector>

#include "coilkick/engine/event_locator.hpp"

using namespace coilkick::engine;

namespace {
const double kPi = std::acos(-1.0);
void exact(double t, double* x, double* rate) {
  x[0] = -std::cos(t);
  if (rate) rate[0] = std::sin(t);
}

// Runs the locator over [0, π] in steps of 0.3 with per-step interpolant `sampled` and kept
// interpolant `kept` (both x(t) = −cos t, ẋ = sin t, with the given bias on the rates).
EventLocator locate(const std::vector<EventSpec>& specs, double sampled_bias, int& rate_requests) {
  EventLocator locator(specs, 1, 1e-9);
  double x0[1], r0[1];
  exact(0.0, x0, r0);
  locator.start(0.0, x0, r0);
  const double h = 0.3;
  for (double t = 0.0; t < kPi - 1e-12; t += h) {
    const double t1 = std::min(t + h, kPi);
    double x1[1], r1[1];
    exact(t1, x1, r1);
    auto sampled = [&](double tq, double* x, double* rate) {
      exact(tq, x, rate);
      if (rate) rate[0] += sampled_bias, ++rate_requests;
    };
    auto keep = [&]() {
      return EventLocator::KeptStep{[&](double tq, double* x, double* rate) {
        exact(tq, x, rate);
        if (rate) ++rate_requests;
      }, nullptr};
    };
    locator.on_step(t, x0, r0, t1, x1, r1, sampled, keep);
    x0[0] = x1[0];
    r0[0] = r1[0];
  }
  locator.finish();
  return locator;
}
}  // namespace

TEST_CASE("an extremum of a rate-reading probe is refined with the kept interpolant's rates") {
  // The per-step interpolant reads rates with a bias (as a dense output's derivative may, where a
  // fast edge stops); the kept one is exact. The located maximum must be the exact one, not the
  // biased sample.
  int requests = 0;
  const std::vector<EventSpec> specs = {
      EventSpec::maximum("rate peak", Probe::using_rates("rate", [](double, const double*, const double* r) { return r[0]; }))};
  const EventLocator locator = locate(specs, 0.01, requests);
  const auto& peak = locator.outcomes()[0];
  REQUIRE(peak.time_s);
  CHECK(requests > 0);
  // Golden-section search to 1e-9 s leaves the value within ~(1e-9)²/2 of the peak; the time is
  // flat to first order, so 1e-5 is far more than the value error allows.
  CHECK(peak.value == doctest::Approx(1.0).epsilon(1e-12));
  CHECK(std::abs(*peak.time_s - kPi / 2) < 1e-5);
}

TEST_CASE("a probe that reads no rates is never given any") {
  // −x² has its maximum 0 inside a step, at t = π/2 (x = 0): sampled and refined from x alone.
  int requests = 0;
  const std::vector<EventSpec> specs = {
      EventSpec::maximum("value peak", Probe("value", [](double, const double* x) { return -x[0] * x[0]; }))};
  const EventLocator locator = locate(specs, 0.01, requests);
  const auto& peak = locator.outcomes()[0];
  REQUIRE(peak.time_s);
  CHECK(requests == 0);
  // −cos²(t) near π/2 is −(t − π/2)²: a time error of 1e-9 gives a value of −1e-18.
  CHECK(std::abs(peak.value) < 1e-15);
  CHECK(std::abs(*peak.time_s - kPi / 2) < 1e-6);
}

namespace {
// Steps of 0.3 over [0, t_end] of a trajectory `exact` whose dense output between a step's ends is
// the exact value plus bump·s·(1 − s) (s the fraction of the step): a bulge of bump/4 at the
// step's middle, zero at its ends — as a long step's cubic interpolant bulges over a transient
// that decayed inside it. The kept step gives the exact states too (`with_exact`).
template <class Exact>
EventLocator run_bulging(const std::vector<EventSpec>& specs, Exact exact_x, double t_end, double bump, bool with_exact) {
  EventLocator locator(specs, 1, 1e-9);
  double x0[1] = {exact_x(0.0)}, r0[1] = {0.0};
  locator.start(0.0, x0, r0);
  const double h = 0.3;
  for (double t = 0.0; t < t_end - 1e-12; t += h) {
    const double t1 = std::min(t + h, t_end);
    double x1[1] = {exact_x(t1)}, r1[1] = {0.0};
    auto dense = [=](double tq, double* x, double* rate) {
      const double s = (tq - t) / (t1 - t);
      x[0] = exact_x(tq) + bump * s * (1.0 - s);
      if (rate) rate[0] = 0.0;
    };
    auto keep = [=]() {
      EventLocator::KeptStep k{dense, nullptr, nullptr};
      if (with_exact) {
        k.exact = [=](double tq, double* x, double* rate) {
          x[0] = exact_x(tq);
          if (rate) rate[0] = 0.0;
        };
        k.finer = [=](double, double) { return k.exact; };
      }
      return k;
    };
    if (std::isfinite(locator.on_step(t, x0, r0, t1, x1, r1, dense, keep))) break;
    x0[0] = x1[0];
  }
  locator.finish();
  return locator;
}
}  // namespace

TEST_CASE("a refined extremum's value is read from the exact states, not a bulging dense output") {
  // sin t on [0, π]: its maximum 1 at π/2 (inside the step [0.3·5, 0.3·6]); the dense output
  // bulges by up to 0.0025 inside every step.
  const std::vector<EventSpec> specs = {EventSpec::maximum("peak", Probe("x", [](double, const double* x) { return x[0]; }))};
  auto sine = [](double t) { return std::sin(t); };
  const EventLocator bulged = run_bulging(specs, sine, kPi, 0.01, false);
  CHECK(bulged.outcomes()[0].value > 1.001);  // without the exact states: the bulge is read
  const EventLocator fixed = run_bulging(specs, sine, kPi, 0.01, true);
  REQUIRE(fixed.outcomes()[0].time_s);
  // The dense output and the exact value disagree at the dense maximum, so the search is done
  // again on `finer` (here exact): golden section to 1e-9 leaves the value within ~1e-18 of 1 and
  // the time within ~1e-6 of π/2 (the value is flat to first order there).
  CHECK(fixed.outcomes()[0].value == doctest::Approx(1.0).epsilon(1e-12));
  CHECK(std::abs(*fixed.outcomes()[0].time_s - kPi / 2) < 1e-6);
}

TEST_CASE("an accepted point beats a refined value that only the bulge put inside a step") {
  // −t falls from its maximum 0 at t = 0; a bulge of 0.5 (0.125 at a step's middle) puts the dense
  // maximum inside the first step, where the exact value is below the step's start.
  const std::vector<EventSpec> specs = {EventSpec::maximum("peak", Probe("x", [](double, const double* x) { return x[0]; }))};
  const EventLocator locator = run_bulging(specs, [](double t) { return -t; }, 1.0, 0.5, true);
  REQUIRE(locator.outcomes()[0].time_s);
  CHECK(*locator.outcomes()[0].time_s == 0.0);
  CHECK(locator.outcomes()[0].value == 0.0);
}

TEST_CASE("events end where a stopping crossing ends the run, not at the end of its step") {
  // x = t rises through 0.5 inside the step [0.3, 0.6]; the run stops there, so x's maximum is
  // 0.5 (to the locator's 1e-9 in time), not the step end's 0.6.
  const std::vector<EventSpec> specs = {
      EventSpec::maximum("peak", Probe("x", [](double, const double* x) { return x[0]; })),
      EventSpec::crossing("stop", Probe("x", [](double, const double* x) { return x[0]; }), 0.5, Direction::rising,
                          -std::numeric_limits<double>::infinity(), true)};
  const EventLocator locator = run_bulging(specs, [](double t) { return t; }, 1.0, 0.0, true);
  REQUIRE(locator.outcomes()[1].time_s);
  CHECK(std::abs(*locator.outcomes()[1].time_s - 0.5) < 2e-9);
  REQUIRE(locator.outcomes()[0].time_s);
  CHECK(std::abs(locator.outcomes()[0].value - 0.5) < 2e-9);
}
