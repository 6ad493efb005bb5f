#pragma once
// Closed forms of a coil decaying into a constant clamp voltage, shared by the reference tests
// (docs/derivations.md, "Coil into a constant-voltage clamp"; the first-order response of Nilsson
// & Riedel, Electric Circuits, 10th ed., ch. 7). SI units throughout.
#include <cmath>

namespace test_support {

// Time for i(t) = (I0 + V_c/R)·e^(−t/τ) − V_c/R to fall to `threshold_A`; clamp_over_r_A = V_c/R.
inline double threshold_time_s(double tau_s, double i0_A, double threshold_A, double clamp_over_r_A) {
  return tau_s * std::log((i0_A + clamp_over_r_A) / (threshold_A + clamp_over_r_A));
}

// Charge through the clamp until the current reaches zero: τ·[I0 − (V_c/R)·ln(1 + R·I0/V_c)].
inline double clamp_charge_C(double tau_s, double i0_A, double clamp_over_r_A) {
  return tau_s * (i0_A - clamp_over_r_A * std::log(1.0 + i0_A / clamp_over_r_A));
}

}  // namespace test_support
