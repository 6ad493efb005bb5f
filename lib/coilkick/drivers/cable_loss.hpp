#pragma once
// The cable's loss of high frequencies, from its conductors' skin effect and its insulation's
// loss tangent, as the time constant of the low-pass each arriving wave passes
// (engine/transmission_line.hpp). docs/derivations.md, "A cable by its travelling waves",
// section "High-frequency loss", states the rule: the low-pass takes from a wave at the pair's
// lowest resonance with the clamp conducting (the quarter-wave frequency 1/(4·delay)) what the
// lossy line's attenuation takes over one pass, beyond the loop resistance already lumped at the
// ends.
#include "coilkick/drivers/driver_spec.hpp"

namespace coilkick::drivers {

// Skin depth in copper at 20 °C (IEC 60028 resistivity), m.
double copper_skin_depth_m(double frequency_Hz);

// A round conductor's resistance at frequency f over its DC resistance: Re{(z/2)·J0(z)/J1(z)},
// z = (1 − j)·radius/δ (the internal impedance of a round wire). 1 + x⁴/48 for x = radius/δ ≪ 1,
// x/2 + 1/4 + 3/(32·x) for x ≫ 1.
double round_wire_resistance_ratio(double radius_over_skin_depth);

// The pair's lowest resonance with the clamp conducting and the coil an open end: 1/(4·delay).
double quarter_wave_frequency_Hz(const CableSpec& cable);

// The loss of one pass along the cable at its quarter-wave frequency beyond its DC resistance,
// in nepers: (R_ac/R_dc − 1)·R_loop/(2·Z0) + π·tanδ/4. The conductors' radius is that of solid
// copper of the cable's loop resistance per metre (two cores).
double cable_excess_loss_per_pass_Np(const CableSpec& cable);

// The low-pass's time constant over the delay: the file's high_frequency_loss_fraction when it
// gives one, else the one whose loss at the quarter-wave frequency is cable_excess_loss_per_pass_Np
// ((2/π)·√(e^(2A) − 1)), within [kSmallestLossFraction, kLargestLossFraction]: the line's
// low-pass needs 0 < τ_hf < delay, and a nearly lossless line would ring for the run's length.
double high_frequency_loss_fraction(const CableSpec& cable);
constexpr double kSmallestLossFraction = 1e-3;
constexpr double kLargestLossFraction = 0.9;

}  // namespace coilkick::drivers
