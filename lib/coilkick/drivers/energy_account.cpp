#include "coilkick/drivers/energy_account.hpp"

namespace coilkick::drivers {

double heat_between(const engine::Circuit& c, const Eigen::VectorXd& x0, const Eigen::VectorXd& x1,
                    const std::vector<std::string>& elements, const std::string& only_channel) {
  double e = 0.0;
  for (std::size_t k = 0; k < c.power_channels().size(); ++k) {
    const auto& ch = c.power_channels()[k];
    if (ch.kind != engine::PowerChannelSpec::Kind::dissipated) continue;
    if (!only_channel.empty() && ch.name != ch.element + "." + only_channel) continue;
    for (const auto& el : elements) {
      if (ch.element == el) {
        const auto i = static_cast<Eigen::Index>(c.circuit_state_count()) + static_cast<Eigen::Index>(k);
        e += x1[i] - x0[i];
      }
    }
  }
  return e;
}

double supply_energy_between(const engine::Circuit& c, const Eigen::VectorXd& x0, const Eigen::VectorXd& x1) {
  const auto k = static_cast<Eigen::Index>(c.state_index("energy:supply.delivered"));
  return x1[k] - x0[k];
}

}  // namespace coilkick::drivers
