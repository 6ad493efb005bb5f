#include "coilkick/devices/junction.hpp"

#include <algorithm>
#include <cmath>

namespace coilkick::devices {

BreakdownKnee make_breakdown_knee(double breakdown_voltage_V, double test_current_A, double dynamic_resistance_ohm,
                                  double knee_emission_coefficient, double thermal_voltage_V, double critical_current_A,
                                  double pwl_reference_current_A) {
  BreakdownKnee k;
  const double nvt = knee_emission_coefficient * thermal_voltage_V;
  k.branch.scale_current_A = test_current_A;
  k.branch.emission_voltage_V = nvt;
  k.branch.series_resistance_ohm = std::max(0.0, dynamic_resistance_ohm - nvt / test_current_A);
  k.branch.offset_V = breakdown_voltage_V - k.branch.series_resistance_ohm * test_current_A;
  k.branch.minus_one = 0.0;
  k.branch.x_crit = std::log(critical_current_A / test_current_A);
  // Tangent of the physical curve at the reference current (the test current if not given),
  // kept below the critical current where the exponential is continued by its tangent anyway.
  const double i_ref = std::min(std::isnan(pwl_reference_current_A) ? test_current_A : pwl_reference_current_A,
                                0.5 * critical_current_A);
  const double u_ref = k.branch.offset_V + nvt * std::log(i_ref / test_current_A) + k.branch.series_resistance_ohm * i_ref;
  k.pwl_resistance_ohm = k.branch.series_resistance_ohm + nvt / i_ref;
  k.pwl_knee_V = u_ref - k.pwl_resistance_ohm * i_ref;
  return k;
}

BranchJunction branch_junction(double u, const ExpBranch& b) {
  const double uj = b.series_resistance_ohm == 0.0 ? u : branch_junction_voltage_V(u, b);
  const double x = (uj - b.offset_V) / b.emission_voltage_V;
  BranchJunction j;
  j.exponential = x > kExponentialFrom && x <= b.x_crit;
  j.log_slope_V = b.emission_voltage_V + (j.exponential ? b.series_resistance_ohm * b.scale_current_A * std::exp(x) : 0.0);
  return j;
}

double branch_junction_voltage_V(double u, const ExpBranch& b) {
  // g(u_j) = u_j + R·I(u_j) − u is increasing; bracket the root and run Newton with bisection
  // as a safeguard.
  const double r = b.series_resistance_ohm;
  auto g = [&](double uj) { return uj + r * branch_junction_current(uj, b) - u; };
  // Fast path: plain Newton from the better of two starts (the terminal voltage itself, or where
  // the exponential would carry u/R); g is increasing and convex above the knee, so Newton from
  // the right converges monotonically. Falls back to the bracketed solve below if it does not.
  {
    const double above = b.offset_V + b.emission_voltage_V *
                                          std::log(std::max(u - b.offset_V, 0.0) / (r * b.scale_current_A) + 1.0);
    double x = std::min(u, above);
    for (int it = 0; it < 40; ++it) {
      double slope = 0.0;  // one exponential for g and its slope
      const double lim = exp_limited((x - b.offset_V) / b.emission_voltage_V, b.x_crit, &slope);
      const double gx = x + r * (b.scale_current_A * (lim - b.minus_one)) - u;
      const double step = gx / (1.0 + r * (b.scale_current_A / b.emission_voltage_V * slope));
      if (!std::isfinite(step)) break;
      x -= step;
      if (std::abs(step) <= 1e-15 * std::max(1.0, std::abs(x))) return x;
    }
  }
  auto dg = [&](double uj) {
    const double x = (uj - b.offset_V) / b.emission_voltage_V;
    const double di = b.scale_current_A / b.emission_voltage_V * std::exp(std::min(x, b.x_crit));
    return 1.0 + r * di;
  };
  double lo = std::min(u, b.offset_V - 50.0 * b.emission_voltage_V);
  double hi = std::max(u, b.offset_V);
  // g(lo) <= 0 since u_j = lo <= u and I(lo) <= 0 for c = 1 (or tiny for c = 0); make sure.
  while (g(lo) > 0.0) lo -= std::max(1.0, std::abs(lo));
  while (g(hi) < 0.0) hi += std::max(1.0, std::abs(hi));
  // Start near where the exponential carries the current u/R would give.
  double x = std::clamp(b.offset_V + b.emission_voltage_V *
                                         std::log(std::max(u - b.offset_V, 0.0) / (r * b.scale_current_A) + 1.0),
                        lo, hi);
  for (int it = 0; it < 200; ++it) {
    const double gx = g(x);
    if (gx > 0.0) hi = x;
    else lo = x;
    double next = x - gx / dg(x);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (std::abs(next - x) <= 1e-15 * std::max(1.0, std::abs(x)) || hi - lo <= 1e-15 * std::max(1.0, std::abs(x))) {
      return next;
    }
    x = next;
  }
  return x;
}

}  // namespace coilkick::devices
