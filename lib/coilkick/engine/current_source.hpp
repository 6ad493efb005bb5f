#pragma once
// Independent current source: a waveform current (A) flows from terminal `from` through the
// source into terminal `to`. Power delivered into the network (channel "delivered", kind
// supplied): I·(v_to − v_from).
#include "coilkick/engine/element.hpp"
#include "coilkick/engine/waveform.hpp"

namespace coilkick::engine {

class CurrentSource final : public Element {
 public:
  CurrentSource(std::string name, std::string from, std::string to, Waveform current_A);
  std::string kind() const override { return "current source"; }
  std::vector<PowerChannelSpec> power_channels() const override;
  void load(const ElementContext& ctx, Stamper& out) const override;
  double next_corner_after_s(double t_s) const override;

 private:
  Waveform current_A_;
};

}  // namespace coilkick::engine
