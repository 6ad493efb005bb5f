#include "coilkick/engine/passive_elements.hpp"

#include <cmath>

#include "coilkick/engine/parameter_check.hpp"
#include "coilkick/engine/winding.hpp"

namespace coilkick::engine {

// ---------------------------------------------------------------- resistor
Resistor::Resistor(std::string name, std::string a, std::string b, double resistance_ohm)
    : Element(std::move(name), {std::move(a), std::move(b)}), resistance_ohm_(resistance_ohm) {
  require_positive("resistor '" + this->name() + "'", "resistance_ohm", resistance_ohm);
}

std::vector<PowerChannelSpec> Resistor::power_channels() const {
  return {{"heat", PowerChannelSpec::Kind::dissipated}};
}

void Resistor::load(const ElementContext& ctx, Stamper& out) const {
  const double g = 1.0 / resistance_ohm_;
  const double v = ctx.value(0) - ctx.value(1);
  const double i = g * v;  // from a to b through the resistor
  out.add_flow(0, -i);
  out.add_flow(1, i);
  out.add_power(0, v * i);
  if (!out.wants_slopes()) return;  // a Rosenbrock stage: rates only
  out.add_flow_slope(0, 0, -g);
  out.add_flow_slope(0, 1, g);
  out.add_flow_slope(1, 0, g);
  out.add_flow_slope(1, 1, -g);
  out.add_power_slope(0, 0, 2.0 * g * v);
  out.add_power_slope(0, 1, -2.0 * g * v);
}

// ---------------------------------------------------------------- capacitor
Capacitor::Capacitor(std::string name, std::string a, std::string b, double capacitance_F)
    : Element(std::move(name), {std::move(a), std::move(b)}), capacitance_F_(capacitance_F) {
  require_positive("capacitor '" + this->name() + "'", "capacitance_F", capacitance_F);
}

void Capacitor::load(const ElementContext& /*ctx*/, Stamper& out) const {
  const double c = capacitance_F_;
  out.add_mass(0, 0, c);
  out.add_mass(0, 1, -c);
  out.add_mass(1, 0, -c);
  out.add_mass(1, 1, c);
}

double Capacitor::stored_energy_J(const ElementContext& ctx) const {
  const double v = ctx.value(0) - ctx.value(1);
  return 0.5 * capacitance_F_ * v * v;
}

// ---------------------------------------------------------------- coil
Coil::Coil(std::string name, std::string a, std::string b, CoilParameters parameters)
    : Element(std::move(name), {std::move(a), std::move(b)}), p_(parameters) {
  const std::string owner = "coil '" + this->name() + "'";
  require_positive(owner, "inductance_H", p_.inductance_H);
  require_non_negative(owner, "resistance_ohm", p_.resistance_ohm);
  require_positive_or_infinite(owner, "core_loss_resistance_ohm", p_.core_loss_resistance_ohm);
}

std::vector<InternalStateSpec> Coil::internal_states() const {
  return {{"current", "A", 0.0, StateKind::branch_current}};
}

std::vector<PowerChannelSpec> Coil::power_channels() const {
  std::vector<PowerChannelSpec> c{{"winding", PowerChannelSpec::Kind::dissipated}};
  if (has_core_loss()) c.push_back({"core", PowerChannelSpec::Kind::dissipated});
  return c;
}

void Coil::load(const ElementContext& ctx, Stamper& out) const {
  constexpr int k = 2;  // local index of the inductor current
  stamp_winding(ctx, out, p_.resistance_ohm, has_core_loss() ? 1.0 / p_.core_loss_resistance_ohm : 0.0);
  out.add_mass(k, k, p_.inductance_H);  // L·di/dt = v_L
}

double Coil::stored_energy_J(const ElementContext& ctx) const {
  const double i = ctx.value(2);
  return 0.5 * p_.inductance_H * i * i;
}

}  // namespace coilkick::engine
