#include "coilkick/engine/timed_switch.hpp"

#include <cmath>
#include <limits>

#include "coilkick/engine/parameter_check.hpp"

namespace coilkick::engine {

TimedSwitch::TimedSwitch(std::string name, std::string a, std::string b,
                         TimedSwitchParameters parameters)
    : Element(std::move(name), {std::move(a), std::move(b)}), p_(parameters) {
  const std::string owner = "timed switch '" + this->name() + "'";
  require_positive(owner, "initial_resistance_ohm", p_.initial_resistance_ohm);
  require_positive(owner, "final_resistance_ohm", p_.final_resistance_ohm);
  require_finite(owner, "switch_at_s", p_.switch_at_s);
  require_positive(owner, "transition_time_s", p_.transition_time_s);
}

std::vector<PowerChannelSpec> TimedSwitch::power_channels() const {
  return {{"heat", PowerChannelSpec::Kind::dissipated}};
}

void TimedSwitch::conductance(double t_s, double& g_S, double& dg_dt) const {
  const double g0 = 1.0 / p_.initial_resistance_ohm, g1 = 1.0 / p_.final_resistance_ohm;
  if (t_s < p_.switch_at_s) {
    g_S = g0;
    dg_dt = 0.0;
    return;
  }
  if (t_s >= p_.switch_at_s + p_.transition_time_s) {
    g_S = g1;
    dg_dt = 0.0;
    return;
  }
  const double rate = std::log(g1 / g0) / p_.transition_time_s;  // d ln g / dt
  g_S = g0 * std::exp(rate * (t_s - p_.switch_at_s));
  dg_dt = rate * g_S;
}

void TimedSwitch::load(const ElementContext& ctx, Stamper& out) const {
  double g = 0.0, dg = 0.0;
  conductance(ctx.time_s(), g, dg);
  const double v = ctx.value(0) - ctx.value(1);
  out.add_flow(0, -g * v);
  out.add_flow(1, g * v);
  out.add_flow_slope(0, 0, -g);
  out.add_flow_slope(0, 1, g);
  out.add_flow_slope(1, 0, g);
  out.add_flow_slope(1, 1, -g);
  out.add_flow_time_rate(0, -dg * v);
  out.add_flow_time_rate(1, dg * v);
  out.add_power(0, g * v * v);
  out.add_power_slope(0, 0, 2.0 * g * v);
  out.add_power_slope(0, 1, -2.0 * g * v);
  out.add_power_time_rate(0, dg * v * v);
}

double TimedSwitch::next_corner_after_s(double t_s) const {
  if (t_s < p_.switch_at_s) return p_.switch_at_s;
  if (t_s < p_.switch_at_s + p_.transition_time_s) return p_.switch_at_s + p_.transition_time_s;
  return std::numeric_limits<double>::infinity();
}

}  // namespace coilkick::engine
