#pragma once
// A relay or solenoid coil whose inductance depends on the armature position, coupled to the
// armature's motion. States: coil current i (A), armature gap g (m), armature velocity u (m/s,
// positive opening). Equations:
//
//   d/dt [L(g)·i] = v_L                       (flux linkage; v_L from the winding, winding.hpp)
//   dg/dt = u
//   m·du/dt = F_spring(g) + ½·i²·dL/dg − b·u + F_stops(g, u)
//
// The motional EMF i·(dL/dg)·u is part of d/dt[L·i], so the current waveform shows the armature
// moving. Springs (force in the opening direction):
//   return spring  F_r = preload + rate·(open_gap − g)                     (all positions)
//   contact spring F_c = contact_rate·(make_gap − g)   for g < make_gap     (over-travel stage)
// Stops: the closed stop at residual_gap and the open (back) stop at open_gap are stiff
// Hertz-type contacts F = k_s·p^1.5·ψ(1 + α·ṗ) after Hunt & Crossley (ASME J. Appl. Mech. 42(2),
// 1975 — from memory), p the penetration, ψ a smooth positive version of its argument (ψ(1) = 1)
// so that a stop never pulls on an armature leaving it. Force and stiffness are continuous at
// p = 0, so the integrator meets no jump at impact; the stiffness is chosen so the penetration is
// small (relay_calibration.hpp), which makes the stops numerical devices, not contact physics.
//
// Energy: stored ½·L·i² + ½·m·u² + spring and stop potentials (zero with the armature at rest
// on the open stop position with p = 0); heat channels "winding", ["core"], "damping" (b·u²),
// "stops" (what the stop forces do beyond their elastic part). The magnetic co-energy force F·u is the work passed between the
// circuit and the armature (Fitzgerald, Kingsley & Umans, 6th ed., ch. 3).
//
// With hold_closed the armature is held at a fixed gap, the residual gap unless hold_gap_m says
// another (g stays there, u = 0): the element is then exactly a fixed coil of inductance L(gap).
#include <limits>

#include "coilkick/engine/element.hpp"
#include "coilkick/relay/magnetic_circuit.hpp"

namespace coilkick::relay {

struct ArmatureMechanics {
  double mass_kg = 1e-3;                  // moving mass (armature, contact blade share)
  double residual_gap_m = 50e-6;          // closed stop (non-magnetic shim)
  double open_gap_m = 0.5e-3;             // open (back) stop
  double make_gap_m = 0.15e-3;            // gap at which the make contact touches / separates
  double spring_preload_N = 0.1;          // return spring force at the open stop
  double spring_rate_N_per_m = 200.0;
  double contact_spring_rate_N_per_m = 0.0;
  double damping_N_s_per_m = 0.05;        // viscous (air, pivot friction as viscous)
  double stop_stiffness_N_per_m1_5 = 1e9; // k_s of the stops
  double stop_damping_s_per_m = 2.0;      // α of the stops
  void check(const std::string& owner) const;
  // Spring force (N, opening direction) and its potential energy (J, zero at open_gap).
  double spring_force_N(double gap_m) const;
  double spring_energy_J(double gap_m) const;
};

struct ArmatureCoilParameters {
  MagneticCircuit magnetic;
  ArmatureMechanics mechanics;
  double resistance_ohm = 100.0;  // winding resistance at the simulated temperature
  double core_loss_resistance_ohm = std::numeric_limits<double>::infinity();
  bool hold_closed = false;
  double hold_gap_m = std::numeric_limits<double>::quiet_NaN();  // with hold_closed: the gap held (NaN: the residual gap)
  double held_gap_m() const { return hold_gap_m == hold_gap_m ? hold_gap_m : mechanics.residual_gap_m; }
};

class ArmatureCoil final : public engine::Element {
 public:
  ArmatureCoil(std::string name, std::string a, std::string b, ArmatureCoilParameters parameters);
  std::string kind() const override { return "armature coil"; }
  std::vector<engine::InternalStateSpec> internal_states() const override;
  std::vector<engine::PowerChannelSpec> power_channels() const override;
  void load(const engine::ElementContext& ctx, engine::Stamper& out) const override;
  void load_mass_slope(const engine::ElementContext& ctx, engine::Stamper& out) const override;
  bool has_mass_slope() const override { return !p_.hold_closed; }
  double stored_energy_J(const engine::ElementContext& ctx) const override;
  const ArmatureCoilParameters& parameters() const { return p_; }

 private:
  ArmatureCoilParameters p_;
  bool has_core_loss() const;
};

}  // namespace coilkick::relay
