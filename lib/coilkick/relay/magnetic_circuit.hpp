#pragma once
// The magnetic circuit of a relay or solenoid: N turns around an iron path (reluctance
// ℛ_core) closed by one working air gap g of pole area A, plus a leakage inductance that does
// not depend on the armature position:
//
//   ℛ(g) = ℛ_core + g/(μ0·A),   L(g) = L_leak + N²/ℛ(g),
//   dL/dg = −N²/(μ0·A·ℛ(g)²),   d²L/dg² = 2·N²/((μ0·A)²·ℛ(g)³).
//
// The magnetic force on the armature, in the direction of increasing gap, follows from the
// co-energy W'(i, g) = ½·L(g)·i²:  F = ∂W'/∂g at constant current = ½·i²·dL/dg (negative:
// the field pulls the gap closed). Sources: Fitzgerald, Kingsley & Umans, Electric Machinery,
// 6th ed. (2003), ch. 3 (force from energy and co-energy); Woodson & Melcher, Electromechanical
// Dynamics, Part I (1968), §3.1 (lumped electromechanical coupling) — from memory.
// Iron saturation, fringing, eddy currents and remanence are not modelled.
#include <string>

namespace coilkick::relay {

// μ0 (N/A²): CODATA 2018, 1.25663706212e-6; equal to 4π·1e-7 within 1e-10.
inline constexpr double kVacuumPermeability_H_per_m = 1.25663706212e-6;

struct MagneticCircuit {
  double turns = 1000.0;
  double pole_area_m2 = 20e-6;
  double core_reluctance_per_H = 1e6;   // ℛ_core (A-turns per weber = 1/H)
  double leakage_inductance_H = 0.0;    // position-independent part of L

  // Throws std::invalid_argument naming the field ("<owner>: turns must be ...").
  void check(const std::string& owner) const;
  double reluctance_per_H(double gap_m) const;
  double inductance_H(double gap_m) const;
  double inductance_slope_H_per_m(double gap_m) const;         // dL/dg (< 0)
  double inductance_curvature_H_per_m2(double gap_m) const;    // d²L/dg² (> 0)
  double force_N(double current_A, double gap_m) const;        // ½·i²·dL/dg, + opens the gap
};

}  // namespace coilkick::relay
