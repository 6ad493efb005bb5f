#pragma once
// A two-conductor line (a cable's pair) by the method of characteristics: each end is the line's
// characteristic impedance Z0 in series with the wave that left the other end one delay τ
// earlier. A lossless line of that Z0 and τ obeys the telegrapher's equations exactly; the
// conductors' resistance is lumped, half at each end (docs/derivations.md, "A cable by its
// travelling waves", states the model, its energy and where it is exact enough).
//
// Terminals: a_plus, a_minus (end a), b_plus, b_minus (end b). The port current of an end flows
// into its plus terminal and out of its minus terminal. History channels: w_a, w_b, the wave each
// end launches (twice its voltage, v' + Z0·i at the lossless line's end). Channel "heat": the
// conductors' loss. Stores the energy of the waves in transit (or ½·L·I² + ½·C·V² at DC).
// At its DC operating point the line is its loop resistance between the ends.
#include "coilkick/engine/element.hpp"

namespace coilkick::engine {

struct TransmissionLineParameters {
  double characteristic_impedance_ohm = 0.0;  // √(L′/C′)
  double delay_s = 0.0;                       // length·√(L′·C′)
  double loop_resistance_ohm = 0.0;           // both conductors, end to end (> 0: DC point)
  // The arriving wave passes a first-order low-pass of this time constant: the cable's loss of
  // high frequencies (skin effect, dielectric). Without it a lossless line keeps every harmonic
  // and rings from the integrator's own errors.
  double high_frequency_loss_time_s = 0.0;
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
  double shortest_delay_s() const override { return p_.delay_s; }
  void history_values(const ElementContext& ctx, double* values, double* rates) const override;
  const TransmissionLineParameters& parameters() const { return p_; }

 private:
  TransmissionLineParameters p_;
  double end_resistance_ohm() const { return 0.5 * p_.loop_resistance_ohm; }
  // Port current at end k (0: a, 1: b) and its explicit time rate, from the past's incoming wave.
  void port_current(const ElementContext& ctx, int end, double* current_A, double* time_rate_A_per_s) const;
};

}  // namespace coilkick::engine
