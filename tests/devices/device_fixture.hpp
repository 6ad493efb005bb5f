#pragma once
// Test helpers: put one device in a circuit where each terminal is a free node (1 nF to
// ground), so the engine's Jacobian check and current evaluation can be run at any terminal
// voltages. The bench capacitance is large against the device's own (diffusion capacitance
// reaches tens of µF at amperes) so that the capacitance matrix stays well conditioned and
// finite differences of M⁻¹·f are not drowned in round-off.
#include <array>
#include <doctest/doctest.h>
#include <memory>
#include <string>
#include <vector>

#include "coilkick/coilkick.hpp"
#include "coilkick/devices/model_level.hpp"
#include "coilkick/engine/jacobian_check.hpp"

namespace test_support {

struct DeviceBench {
  std::unique_ptr<coilkick::engine::Circuit> circuit;
  std::vector<std::string> nodes;
};

inline DeviceBench bench_for(std::shared_ptr<coilkick::engine::Element> device, double bench_capacitance_F = 10e-6) {
  using namespace coilkick::engine;
  Network net;
  std::vector<std::string> nodes = device->terminals();
  for (const auto& n : nodes) net.add_capacitor("c_" + n, n, Network::ground, bench_capacitance_F);
  net.add(device);
  return {std::make_unique<Circuit>(net), nodes};
}

// Worst relative Jacobian error with terminal k at voltages[k].
inline coilkick::engine::JacobianComparison jacobian_at(const DeviceBench& b, const std::vector<double>& voltages,
                                                        double rate_scale = 1e6) {
  Eigen::VectorXd x = Eigen::VectorXd::Zero(b.circuit->state_count());
  for (std::size_t k = 0; k < b.nodes.size(); ++k) x[b.circuit->state_index("node:" + b.nodes[k])] = voltages[k];
  (void)rate_scale;
  return coilkick::engine::compare_jacobian(*b.circuit, 1e-6, x.data());
}

// For a three-terminal device family: N and P polarity (P at mirrored voltages), both levels,
// every listed region: the analytic Jacobian equals central finite differences.
// Tolerance 1e-5 of the row scale: central differences reach ~1e-8 here (truncation and
// round-off); anything wrong in a derivative shows as O(1).
template <class P, class Make>
void check_jacobian_in_regions(P p, Make make, const std::vector<std::array<double, 3>>& points) {
  using coilkick::devices::ModelLevel;
  using coilkick::devices::Polarity;
  for (const auto pol : {Polarity::n, Polarity::p}) {
    p.polarity = pol;
    const double s = pol == Polarity::n ? 1.0 : -1.0;
    for (const auto level : {ModelLevel::physical, ModelLevel::pwl}) {
      const auto b = bench_for(make(p, level));
      for (const auto& v : points) {
        CAPTURE(v[0]);
        CAPTURE(v[1]);
        CAPTURE(v[2]);
        CAPTURE(coilkick::devices::to_string(level));
        const auto cmp = jacobian_at(b, {s * v[0], s * v[1], s * v[2]});
        CAPTURE(cmp.row_name);
        CAPTURE(cmp.column_name);
        CHECK(cmp.worst_error < 1e-5);
      }
    }
  }
}

}  // namespace test_support
