// The cable's high-frequency loss from its conductors' skin effect and its insulation
// (drivers/cable_loss.hpp; docs/derivations.md, "A cable by its travelling waves").
// Skin depth and the round wire's resistance: S. Ramo, J. R. Whinnery, T. Van Duzer, "Fields and
// Waves in Communication Electronics", 3rd ed. (Wiley, 1994), ch. 5, the internal impedance of a
// round wire (Z = (k/(2π·a·σ))·J0(ka)/J1(ka), its low- and high-frequency forms) — chapter from
// memory. Attenuation of a low-loss line, α = R/(2·Z0) + G·Z0/2: D. M. Pozar, "Microwave
// Engineering", 4th ed. (Wiley, 2012), §2.7 — section number from memory.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "coilkick/drivers/cable_loss.hpp"
#include "coilkick/drivers/copper.hpp"

using namespace coilkick::drivers;

TEST_CASE("copper's skin depth: 66 µm at 1 MHz, 8.5 mm at 60 Hz") {
  // The textbook figures for copper (Ramo et al., ch. 5's table, from memory; Pozar's 0.66 µm
  // at 10 GHz scaled by √f) are given to two digits: 1 %.
  CHECK(copper_skin_depth_m(1e6) == rel(66e-6).epsilon(1e-2));
  CHECK(copper_skin_depth_m(60.0) == rel(8.5e-3).epsilon(1e-2));
  // δ ∝ 1/√f, exactly.
  CHECK(copper_skin_depth_m(4e6) == rel(0.5 * copper_skin_depth_m(1e6)).epsilon(1e-12));
}

TEST_CASE("a round wire's resistance ratio against scipy's Bessel functions, and its thin and thick limits") {
  // x = radius / skin depth; ratio = Re{(z/2)·J0(z)/J1(z)}, z = (1 − j)·x. Reference values from
  // an independent evaluation with scipy (Debian's python3-scipy 1.10):
  //   from scipy.special import jv; z = (1 - 1j) * x; (0.5 * z * jv(0, z) / jv(1, z)).real
  // Our series keeps ~13 digits for x ≤ 20; 1e-8 checks it.
  const double table[][2] = {{0.3, 1.0001687272221478}, {1.0, 1.0204923888556223}, {2.0, 1.2646429062732132},
                             {5.0, 2.7681076007342904}, {8.0, 4.261570258258899},   {13.0, 6.757179541208841}};
  for (const auto& row : table) {
    CAPTURE(row[0]);
    CHECK(round_wire_resistance_ratio(row[0]) == rel(row[1]).epsilon(1e-8));
  }
  // Thin: 1 + x⁴/48, the DC resistance plus the first correction (its next term is ~3e-5 of it at
  // x = 0.3, so 1e-3 of the excess is a clear check).
  CHECK(round_wire_resistance_ratio(0.3) - 1.0 == rel(std::pow(0.3, 4) / 48.0).epsilon(1e-3));
  // Thick: x/2 + 1/4 + 3/(32·x) (the current in a skin of depth δ, plus the curvature's
  // corrections; the last coefficient read off scipy's values above: (ratio − x/2 − 1/4)·x →
  // 0.0937). The function uses it beyond x = 20; there both forms agree to 1e-6 (measured 8e-8),
  // so a sweep over the cable's length sees no step.
  CHECK(round_wire_resistance_ratio(20.0 - 1e-9) == rel(round_wire_resistance_ratio(20.0 + 1e-9)).epsilon(1e-6));
  CHECK(round_wire_resistance_ratio(40.0) == rel(20.252342746369145).epsilon(1e-6));  // scipy, as above
  CHECK(round_wire_resistance_ratio(0.0) == 1.0);  // DC
}

TEST_CASE("the derived loss: the low-pass takes at the quarter-wave frequency what the lossy line takes in one pass") {
  // The default 2 × 0.75 mm² cable at 60 m: hand evaluation of the rule (docs/derivations.md).
  // Delay 397.99 ns, quarter-wave frequency 628.1 kHz, copper's skin depth there 83.38 µm; the
  // conductor of 26 mΩ/m (IEC 60028's 1/58 Ω·mm²/m) has a radius of 0.4594 mm, x = 5.510, so the
  // resistance ratio is 3.0214 (scipy, as above, at x = 5.51). The excess (3.0214 − 1)·3.12 Ω
  // /(2·82.92 Ω) = 0.03803 Np, the insulation's π·0.05/4 = 0.03927 Np: 0.07730 Np.
  CableSpec c;
  c.length_m = 60.0;
  CHECK(cable_excess_loss_per_pass_Np(c) == rel(0.07730).epsilon(1e-3));  // the hand value's digits
  // The first-order low-pass 1/(1 + jωτ_hf) loses ½·ln(1 + (ωτ_hf)²) nepers at ω = 2π/(4·delay).
  const double tau_hf = high_frequency_loss_fraction(c) * c.delay_s();
  const double w = 2.0 * M_PI / (4.0 * c.delay_s());
  CHECK(0.5 * std::log1p(w * w * tau_hf * tau_hf) == rel(cable_excess_loss_per_pass_Np(c)).epsilon(1e-12));
  // A file's fraction is taken as given.
  c.high_frequency_loss_fraction = 0.1;
  CHECK(high_frequency_loss_fraction(c) == 0.1);
  // A lossless insulation and a conductor far thinner than the skin depth leave almost no loss
  // (the excess falls as x⁴·length ∝ 1/length): at an absurd 100,000 km the fraction is the
  // smallest the line is given (its low-pass needs 0 < τ_hf).
  CableSpec thin;
  thin.insulation_loss_tangent = 0.0;
  thin.length_m = 2000.0;
  CHECK(high_frequency_loss_fraction(thin) > kSmallestLossFraction);
  thin.length_m = 1e8;
  CHECK(cable_excess_loss_per_pass_Np(thin) > 0.0);
  CHECK(high_frequency_loss_fraction(thin) == kSmallestLossFraction);
}
