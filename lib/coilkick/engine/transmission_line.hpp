#pragma once
// A two-conductor line (a cable's pair) by the method of characteristics: each end is the line's
// characteristic impedance Z0 in series with the wave that left the other end one delay
// earlier. A lossless line of that Z0 and delay obeys the telegrapher's equations exactly; the
// conductors' resistance is lumped, half at each end, and the cable's loss of high frequencies
// is a first-order low-pass of time constant τ_hf on each arriving wave, which takes τ_hf of the
// delay (the pure delay is τ − τ_hf, so a slow wave still arrives τ late).
// docs/derivations.md, "A cable by its travelling waves", states the model, its energy and where
// it is exact enough.
//
// Terminals: a_plus, a_minus (end a), b_plus, b_minus (end b). The port current of an end flows
// into its plus terminal and out of its minus terminal. Internal states: incoming_a, incoming_b,
// the arriving waves after the low-pass. History channels: w_a, w_b, the wave each end launches
// (v' + Z0·i at the lossless line's end). Channel "heat": the conductors' loss and the low-pass's
// loss, (w_arriving − e)²/(4·Z0) per end. Stores the energy of the waves in transit and in the
// low-passes, τ_hf·e²/(4·Z0) per end (½·L·I² + ½·C·V² at DC).
// At its DC operating point the line is its loop resistance between the ends.
#include <algorithm>
#include <limits>

#include "coilkick/engine/element.hpp"

namespace coilkick::engine {

struct TransmissionLineParameters {
  double characteristic_impedance_ohm = 0.0;  // √(L′/C′)
  double delay_s = 0.0;                       // length·√(L′·C′)
  double loop_resistance_ohm = 0.0;           // both conductors, end to end (> 0: DC point)
  // The arriving wave passes a first-order low-pass of this time constant (0 < τ_hf < delay):
  // the cable's loss of high frequencies (skin effect, dielectric). Without it a lossless line
  // keeps every harmonic and rings from the integrator's own errors.
  double high_frequency_loss_time_s = 0.0;
  // A pair whose far end floats (a coil at the end of a two-core cable): both conductors
  // together carry the ends' common mode, this resistance (both halves of the loop in parallel,
  // loop/4) from the midpoint of end a to that of end b. Infinite (the default): no such path,
  // as for a line whose two ends share their minus terminal — there a finite value would be a
  // second path for the line's own current.
  double common_mode_resistance_ohm = std::numeric_limits<double>::infinity();
};

class TransmissionLine final : public Element {
 public:
  TransmissionLine(std::string name, std::string a_plus, std::string a_minus, std::string b_plus,
                   std::string b_minus, TransmissionLineParameters parameters);
  std::string kind() const override { return "transmission line"; }
  std::vector<PowerChannelSpec> power_channels() const override;
  std::vector<InternalStateSpec> internal_states() const override;
  void load(const ElementContext& ctx, Stamper& out) const override;
  double stored_energy_J(const ElementContext& ctx) const override;
  int history_channel_count() const override { return 2; }
  double shortest_delay_s() const override { return pure_delay_s(); }
  void history_values(const ElementContext& ctx, double* values, double* rates) const override;
  const TransmissionLineParameters& parameters() const { return p_; }

 private:
  TransmissionLineParameters p_;
  double end_resistance_ohm() const { return 0.5 * p_.loop_resistance_ohm; }
  double pure_delay_s() const { return p_.delay_s - p_.high_frequency_loss_time_s; }
  // The quasi-static form reads the delay τ as a lead τ − τ_q on the other end's wave and a lag τ_q
  // on the arriving one: (1 − s·(τ − τ_q))/(1 + s·τ_q). With τ_q = τ/2 that is the delay's (1,1)
  // Padé form, which passes every frequency at unit gain; a lead longer than the lag (τ_q = τ_hf
  // below τ/2) would put a growing oscillation into a line between a clamp and a coil
  // (docs/derivations.md, "A cable by its travelling waves", section "Steps").
  double quasi_static_lag_s() const { return std::max(p_.high_frequency_loss_time_s, 0.5 * p_.delay_s); }
  // Port current at end k (0: a, 1: b), into its plus terminal, behind the arriving wave (state).
  double port_current_A(const ElementContext& ctx, int end) const;
  void load_common_mode(const ElementContext& ctx, Stamper& out) const;
};

}  // namespace coilkick::engine
