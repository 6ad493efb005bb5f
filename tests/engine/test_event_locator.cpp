// The event locator on closed-form trajectories: x(t) = −cos(t) with ẋ(t) = sin(t), whose
// largest rate is 1 at t = π/2 (elementary calculus). Steps and interpolants are synthetic, so
// what is checked is the locator's own logic.
#include <doctest/doctest.h>

#include <cmath>
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
      return EventLocator::Interpolant([&](double tq, double* x, double* rate) {
        exact(tq, x, rate);
        if (rate) ++rate_requests;
      });
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
