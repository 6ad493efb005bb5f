#pragma once
// Linear passive elements: resistor, capacitor, and the coil (inductance with winding
// resistance and an optional core-loss resistance across the inductance).
#include <cmath>
#include <limits>

#include "coilkick/engine/element.hpp"

namespace coilkick::engine {

// Terminals: a, b. Dissipates v²/R into channel "heat".
class Resistor final : public Element {
 public:
  Resistor(std::string name, std::string a, std::string b, double resistance_ohm);
  std::string kind() const override { return "resistor"; }
  std::vector<PowerChannelSpec> power_channels() const override;
  void load(const ElementContext& ctx, Stamper& out) const override;
  double resistance_ohm() const { return resistance_ohm_; }

 private:
  double resistance_ohm_;
};

// Terminals: a, b. Charge on terminal a: C·(v_a − v_b). Stores ½·C·v².
class Capacitor final : public Element {
 public:
  Capacitor(std::string name, std::string a, std::string b, double capacitance_F);
  std::string kind() const override { return "capacitor"; }
  void load(const ElementContext& ctx, Stamper& out) const override;
  double stored_energy_J(const ElementContext& ctx) const override;
  double capacitance_F() const { return capacitance_F_; }

 private:
  double capacitance_F_;
};

struct CoilParameters {
  double inductance_H = 0.0;
  double resistance_ohm = 0.0;  // winding (series) resistance at the simulated temperature
  // Core (eddy-current) losses as a resistance across the ideal inductance; +inf: none.
  double core_loss_resistance_ohm = std::numeric_limits<double>::infinity();
};

// Terminals: a, b; internal state "current" (A), flowing from a through the coil to b.
// Model: winding resistance R in series with (L ∥ R_core). With v = v_a − v_b and inductor
// current i: v_L = (v − R·i)/(1 + R/R_core), terminal current i_t = i + v_L/R_core, L·di/dt = v_L.
// Channels: "winding" (R·i_t²) and, if present, "core" (v_L²/R_core). Stores ½·L·i².
class Coil final : public Element {
 public:
  Coil(std::string name, std::string a, std::string b, CoilParameters parameters);
  std::string kind() const override { return "coil"; }
  std::vector<InternalStateSpec> internal_states() const override;
  std::vector<PowerChannelSpec> power_channels() const override;
  void load(const ElementContext& ctx, Stamper& out) const override;
  double stored_energy_J(const ElementContext& ctx) const override;
  const CoilParameters& parameters() const { return p_; }

 private:
  CoilParameters p_;
  bool has_core_loss() const { return std::isfinite(p_.core_loss_resistance_ohm); }
};

}  // namespace coilkick::engine
