// Internal states declared by an element (the mechanism a relay armature uses): a mass on a
// spring inside one element, m·ẍ = −k·x − b·ẋ, with position (m) and velocity (m/s) as states.
// Closed form: damped harmonic oscillator, period 2π/√(k/m − (b/2m)²) — Halliday, Resnick &
// Walker, "Fundamentals of Physics" (Wiley), ch. "Oscillations" (edition and chapter from memory).
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "coilkick/coilkick.hpp"

using namespace coilkick::engine;

namespace {
class SpringMass final : public Element {
 public:
  SpringMass(double m, double k, double b) : Element("oscillator", {"n", Network::ground}), m_(m), k_(k), b_(b) {}
  std::string kind() const override { return "test oscillator"; }
  std::vector<InternalStateSpec> internal_states() const override {
    return {{"position", "m", 1e-12, StateKind::internal}, {"velocity", "m/s", 1e-10, StateKind::internal}};
  }
  std::vector<PowerChannelSpec> power_channels() const override { return {{"damping", PowerChannelSpec::Kind::dissipated}}; }
  void load(const ElementContext& ctx, Stamper& out) const override {
    constexpr int x = 2, v = 3;
    out.add_mass(x, x, 1.0);
    out.add_flow(x, ctx.value(v));
    out.add_flow_slope(x, v, 1.0);
    out.add_mass(v, v, m_);
    out.add_flow(v, -k_ * ctx.value(x) - b_ * ctx.value(v));
    out.add_flow_slope(v, x, -k_);
    out.add_flow_slope(v, v, -b_);
    out.add_power(0, b_ * ctx.value(v) * ctx.value(v));
    out.add_power_slope(0, v, 2.0 * b_ * ctx.value(v));
  }
  double stored_energy_J(const ElementContext& ctx) const override {
    return 0.5 * m_ * ctx.value(3) * ctx.value(3) + 0.5 * k_ * ctx.value(2) * ctx.value(2);
  }

 private:
  double m_, k_, b_;
};
}  // namespace

TEST_CASE("an element's internal states: damped oscillator period and energy") {
  const double m = 1e-3, k = 200.0, b = 0.01;  // 1 g armature-like mass on a 200 N/m spring
  Network net;
  net.add(std::make_shared<SpringMass>(m, k, b));
  net.add_resistor("r", "n", Network::ground, 1e3);  // gives the element's node a DC path
  Circuit c(net);
  CircuitState s0 = zero_state(c, 0.0);
  set_state(c, s0, "oscillator.position", 1e-4);
  TransientOptions o;
  o.stop_time_s = 0.05;
  o.relative_tolerance = 1e-9;
  const auto res = simulate(c, s0, o,
                            {EventSpec::crossing("down1", Probe::state(c, "oscillator.position"), 0.0, Direction::falling),
                             EventSpec::crossing("up1", Probe::state(c, "oscillator.position"), 0.0, Direction::rising)});
  const double wd = std::sqrt(k / m - std::pow(b / (2 * m), 2));
  const double half_period = *res.event("up1").time_s - *res.event("down1").time_s;
  CHECK(half_period == rel(M_PI / wd).epsilon(1e-6));  // run at 1e-9 per step
  // Mechanical energy lost equals damping heat (0.1 % requirement; reached ~1e-8).
  CHECK(std::abs(res.energy().balance_error) < 1e-3);
  const auto stored = res.stored_energy_J("oscillator");
  CHECK(stored[0] == rel(0.5 * k * 1e-8));
  CHECK(res.energy().channel_J("oscillator.damping") > 0.0);
}
