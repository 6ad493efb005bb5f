#include "coilkick/engine/current_source.hpp"

#include <limits>

namespace coilkick::engine {

CurrentSource::CurrentSource(std::string name, std::string from, std::string to,
                             Waveform current_A)
    : Element(std::move(name), {std::move(from), std::move(to)}), current_A_(std::move(current_A)) {}

std::vector<PowerChannelSpec> CurrentSource::power_channels() const {
  return {{"delivered", PowerChannelSpec::Kind::supplied}};
}

void CurrentSource::load(const ElementContext& ctx, Stamper& out) const {
  const double t = ctx.time_s();
  const double i = current_A_.value(t);
  const double di = current_A_.slope(t);
  out.add_flow(0, -i);
  out.add_flow(1, i);
  out.add_flow_time_rate(0, -di);
  out.add_flow_time_rate(1, di);
  const double v = ctx.value(1) - ctx.value(0);
  out.add_power(0, i * v);
  out.add_power_slope(0, 1, i);
  out.add_power_slope(0, 0, -i);
  out.add_power_time_rate(0, di * v);
}

double CurrentSource::next_corner_after_s(double t_s) const {
  auto c = current_A_.next_corner_after(t_s);
  return c ? *c : std::numeric_limits<double>::infinity();
}

}  // namespace coilkick::engine
