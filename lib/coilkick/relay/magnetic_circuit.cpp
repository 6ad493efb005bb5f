#include "coilkick/relay/magnetic_circuit.hpp"

#include <algorithm>

#include "coilkick/engine/parameter_check.hpp"

namespace coilkick::relay {
namespace {
// Gaps below zero (the armature pressed into its stop by the stop model) read as zero gap, so
// ℛ stays >= ℛ_core > 0 for any state the integrator may try.
double effective_gap(double g) { return std::max(g, 0.0); }
}  // namespace

void MagneticCircuit::check(const std::string& owner) const {
  engine::require_positive(owner, "turns", turns);
  engine::require_positive(owner, "pole_area_m2", pole_area_m2);
  engine::require_positive(owner, "core_reluctance_per_H", core_reluctance_per_H);
  engine::require_non_negative(owner, "leakage_inductance_H", leakage_inductance_H);
}

double MagneticCircuit::reluctance_per_H(double gap_m) const {
  return core_reluctance_per_H + effective_gap(gap_m) / (kVacuumPermeability_H_per_m * pole_area_m2);
}

double MagneticCircuit::inductance_H(double gap_m) const {
  return leakage_inductance_H + turns * turns / reluctance_per_H(gap_m);
}

double MagneticCircuit::inductance_slope_H_per_m(double gap_m) const {
  if (gap_m < 0.0) return 0.0;
  const double r = reluctance_per_H(gap_m);
  return -turns * turns / (kVacuumPermeability_H_per_m * pole_area_m2 * r * r);
}

double MagneticCircuit::inductance_curvature_H_per_m2(double gap_m) const {
  if (gap_m < 0.0) return 0.0;
  const double r = reluctance_per_H(gap_m);
  const double mu_a = kVacuumPermeability_H_per_m * pole_area_m2;
  return 2.0 * turns * turns / (mu_a * mu_a * r * r * r);
}

double MagneticCircuit::force_N(double current_A, double gap_m) const {
  return 0.5 * current_A * current_A * inductance_slope_H_per_m(gap_m);
}

}  // namespace coilkick::relay
