#include "coilkick/drivers/cable_loss.hpp"

#include <algorithm>
#include <cmath>
#include <complex>

#include "coilkick/drivers/copper.hpp"
#include "coilkick/relay/magnetic_circuit.hpp"

namespace coilkick::drivers {

namespace {
constexpr double kPi = 3.14159265358979323846;

// J0(z) and J1(z) by their power series; used for z = (1 − j)·x, x ≤ 20, where J0 and J1 grow
// like e^x and the largest term stays within ~1e3 of the sum: ~13 digits in doubles.
void bessel_j0_j1(std::complex<double> z, std::complex<double>& j0, std::complex<double>& j1) {
  const std::complex<double> q = -0.25 * z * z;  // (−z²/4)^k / (k!)² and (z/2)·(−z²/4)^k / (k!·(k+1)!)
  std::complex<double> t0 = 1.0, t1 = 0.5 * z;
  j0 = t0;
  j1 = t1;
  for (int k = 1; k < 200; ++k) {
    t0 *= q / double(k * k);
    t1 *= q / double(k * (k + 1));
    j0 += t0;
    j1 += t1;
    if (std::abs(t0) < 1e-17 * std::abs(j0) && std::abs(t1) < 1e-17 * std::abs(j1)) break;
  }
}
}  // namespace

double copper_skin_depth_m(double frequency_Hz) {
  return std::sqrt(kCopperResistivity_ohm_m / (kPi * frequency_Hz * relay::kVacuumPermeability_H_per_m));
}

double round_wire_resistance_ratio(double x) {
  if (x <= 0.0) return 1.0;
  if (x > 20.0) return 0.5 * x + 0.25 + 3.0 / (32.0 * x);  // the thick wire's form, within 1e-6 of the series here
  const std::complex<double> z = std::complex<double>(1.0, -1.0) * x;
  std::complex<double> j0, j1;
  bessel_j0_j1(z, j0, j1);
  return std::real(0.5 * z * j0 / j1);
}

double quarter_wave_frequency_Hz(const CableSpec& c) { return 0.25 / c.delay_s(); }

double cable_excess_loss_per_pass_Np(const CableSpec& c) {
  const double core_ohm_per_m = 0.5 * c.loop_resistance_per_metre_ohm_per_m;
  const double radius_m = std::sqrt(kCopperResistivity_ohm_m / (kPi * core_ohm_per_m));
  const double ratio = round_wire_resistance_ratio(radius_m / copper_skin_depth_m(quarter_wave_frequency_Hz(c)));
  return (ratio - 1.0) * c.loop_resistance_ohm() / (2.0 * c.characteristic_impedance_ohm()) +
         0.25 * kPi * c.insulation_loss_tangent;
}

double high_frequency_loss_fraction(const CableSpec& c) {
  if (!std::isnan(c.high_frequency_loss_fraction)) return c.high_frequency_loss_fraction;
  const double a = cable_excess_loss_per_pass_Np(c);
  return std::clamp((2.0 / kPi) * std::sqrt(std::expm1(2.0 * a)), kSmallestLossFraction, kLargestLossFraction);
}

}  // namespace coilkick::drivers
