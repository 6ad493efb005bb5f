#pragma once
// A switch whose resistance changes at a set time: from `initial_resistance_ohm` to
// `final_resistance_ohm` over `transition_time_s` starting at `switch_at_s`, interpolated
// geometrically (the conductance changes by the same factor in each equal interval). It stands
// for an ideal controlled switch in engine tests and examples; transistor switches are devices.
// Terminals a, b; channel "heat".
#include "coilkick/engine/element.hpp"

namespace coilkick::engine {

struct TimedSwitchParameters {
  double initial_resistance_ohm = 0.1;
  double final_resistance_ohm = 1e9;
  double switch_at_s = 0.0;
  double transition_time_s = 1e-8;
};

class TimedSwitch final : public Element {
 public:
  TimedSwitch(std::string name, std::string a, std::string b, TimedSwitchParameters parameters);
  std::string kind() const override { return "timed switch"; }
  std::vector<PowerChannelSpec> power_channels() const override;
  void load(const ElementContext& ctx, Stamper& out) const override;
  double next_corner_after_s(double t_s) const override;
  // Conductance (S) and its time derivative (S/s) at t, right-continuous at the corners.
  void conductance(double t_s, double& g_S, double& dg_dt) const;

 private:
  TimedSwitchParameters p_;
};

}  // namespace coilkick::engine
