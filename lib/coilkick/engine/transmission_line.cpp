#include "coilkick/engine/transmission_line.hpp"

#include <cmath>
#include <cstdlib>

#include "coilkick/engine/parameter_check.hpp"

namespace coilkick::engine {

TransmissionLine::TransmissionLine(std::string name, std::string a_plus, std::string a_minus, std::string b_plus,
                                   std::string b_minus, TransmissionLineParameters parameters)
    : Element(std::move(name), {std::move(a_plus), std::move(a_minus), std::move(b_plus), std::move(b_minus)}),
      p_(parameters) {
  const std::string owner = "transmission line '" + this->name() + "'";
  require_positive(owner, "characteristic_impedance_ohm", p_.characteristic_impedance_ohm);
  require_positive(owner, "delay_s", p_.delay_s);
  require_positive(owner, "loop_resistance_ohm", p_.loop_resistance_ohm);
  require_open_range(owner, "high_frequency_loss_time_s", p_.high_frequency_loss_time_s, 0.0, p_.delay_s);
  require_positive_or_infinite(owner, "common_mode_resistance_ohm", p_.common_mode_resistance_ohm);
}

std::vector<PowerChannelSpec> TransmissionLine::power_channels() const {
  return {{"heat", PowerChannelSpec::Kind::dissipated}};
}


std::vector<InternalStateSpec> TransmissionLine::internal_states() const {
  return {{"incoming_a", "V", 1e-6, StateKind::internal, 0.0, true}, {"incoming_b", "V", 1e-6, StateKind::internal, 0.0, true}};
}

double TransmissionLine::port_current_A(const ElementContext& ctx, int end) const {
  const int plus = 2 * end, minus = plus + 1;
  const double v = ctx.value(plus) - ctx.value(minus);
  const double g = 1.0 / (p_.characteristic_impedance_ohm + end_resistance_ohm());
  return g * (v - ctx.value(4 + end));
}

void TransmissionLine::load(const ElementContext& ctx, Stamper& out) const {
  const double z = p_.characteristic_impedance_ohm, rs = end_resistance_ohm(), c = z - rs;
  const bool quasi_static = ctx.past() && ctx.past()->quasi_static;
  // The arriving wave's low-pass: the cable's high-frequency loss, or in the quasi-static form the
  // lag of the delay's Padé form (quasi_static_lag_s).
  const double tf = quasi_static ? quasi_static_lag_s() : p_.high_frequency_loss_time_s;
  load_common_mode(ctx, out);
  out.add_mass(4, 4, tf);
  out.add_mass(5, 5, tf);
  if (!ctx.past()) {
    const double g = 1.0 / p_.loop_resistance_ohm;
    const double va = ctx.value(0) - ctx.value(1), vb = ctx.value(2) - ctx.value(3);
    const double dv = va - vb;
    const double i = g * dv;
    const double sign[4] = {1.0, -1.0, -1.0, 1.0};
    for (int r = 0; r < 4; ++r) {
      out.add_flow(r, -sign[r] * i);
      for (int col = 0; col < 4; ++col) out.add_flow_slope(r, col, -sign[r] * g * sign[col]);
      out.add_power_slope(0, r, 2.0 * g * dv * sign[r]);
    }
    out.add_power(0, g * dv * dv);
    // The incoming waves of the DC point: e_a = v_b − c·I, e_b = v_a + c·I.
    const double ea = vb - c * i, eb = va + c * i;
    out.add_flow(4, ea - ctx.value(4));
    out.add_flow(5, eb - ctx.value(5));
    out.add_flow_slope(4, 4, -1.0);
    out.add_flow_slope(5, 5, -1.0);
    const double dva[4] = {1, -1, 0, 0}, dvb[4] = {0, 0, 1, -1};
    double dea[4], deb[4];
    for (int col = 0; col < 4; ++col) {
      const double di = g * sign[col];
      dea[col] = dvb[col] - c * di;
      deb[col] = dva[col] + c * di;
      out.add_flow_slope(4, col, dea[col]);
      out.add_flow_slope(5, col, deb[col]);
    }
    // The low-passes' loss, (u − e)²/(4·Z0): zero at the DC solution.
    const double ua = ea - ctx.value(4), ub = eb - ctx.value(5), q = 0.25 / z;
    out.add_power(0, q * (ua * ua + ub * ub));
    for (int col = 0; col < 4; ++col) out.add_power_slope(0, col, 2.0 * q * (ua * dea[col] + ub * deb[col]));
    out.add_power_slope(0, 4, -2.0 * q * ua);
    out.add_power_slope(0, 5, -2.0 * q * ub);
    return;
  }
  const DelayedValues* past = ctx.past();
  const double g = 1.0 / (z + rs);
  const double back = ctx.time_s() - pure_delay_s(), q = 0.25 / z;
  for (int end = 0; end < 2; ++end) {
    const int plus = 2 * end, minus = plus + 1, e = 4 + end;
    const double i = port_current_A(ctx, end);
    out.add_flow(plus, -i);
    out.add_flow(minus, i);
    out.add_flow_slope(plus, plus, -g);
    out.add_flow_slope(plus, minus, g);
    out.add_flow_slope(plus, e, g);
    out.add_flow_slope(minus, plus, g);
    out.add_flow_slope(minus, minus, -g);
    out.add_flow_slope(minus, e, -g);
    out.add_power(0, rs * i * i);
    out.add_power_slope(0, plus, 2.0 * rs * i * g);
    out.add_power_slope(0, minus, -2.0 * rs * i * g);
    out.add_power_slope(0, e, -2.0 * rs * i * g);
    // The arriving wave, through the cable's high-frequency loss (first order).
    const int other = 1 - end;
    if (past->quasi_static) {
      // Quiet waves, long steps: the wave leaving the other end now (w = v + (Z0 − Rs)·g·(v − e)).
      const int op = 2 * other, om = op + 1, oe = 4 + other;
      const double vo = ctx.value(op) - ctx.value(om);
      const double k = (z - rs) * g;
      const double u = vo + k * (vo - ctx.value(oe)) - ctx.value(e);
      out.add_flow(e, u);
      out.add_flow_slope(e, op, 1.0 + k);
      out.add_flow_slope(e, om, -(1.0 + k));
      out.add_flow_slope(e, oe, -k);
      out.add_flow_slope(e, e, -1.0);
      // The lead and the lag together are an all-pass (below), which loses nothing: the heat is the
      // cable's high-frequency loss alone, the low-pass of time constant τ_hf on a wave that
      // changes slowly over the delay: (τ_hf·ẇ)²/(4·Z0), with τ·ẇ ≈ u (the lead and the lag add
      // up to the delay). Charging u²/(4·Z0) instead — the lag's share as if it were a lossy
      // low-pass — heated a cable whose coil rang at ~900 Hz 11 % too much (docs/derivations.md).
      const double share = p_.high_frequency_loss_time_s / p_.delay_s, qq = q * share * share;
      out.add_power(0, qq * u * u);
      out.add_power_slope(0, op, 2.0 * qq * u * (1.0 + k));
      out.add_power_slope(0, om, -2.0 * qq * u * (1.0 + k));
      out.add_power_slope(0, oe, -2.0 * qq * u * k);
      out.add_power_slope(0, e, -2.0 * qq * u);
      // The delay as lead and lag (quasi_static_lag_s): the line's own series L and shunt C.
      const double tau = p_.delay_s - quasi_static_lag_s();
      out.add_mass(e, op, tau * (1.0 + k));
      out.add_mass(e, om, -tau * (1.0 + k));
      out.add_mass(e, oe, -tau * k);
    } else {
      const double u = past->value(other, back) - ctx.value(e), u_rate = past->rate(other, back);
      out.add_flow(e, u);
      out.add_flow_slope(e, e, -1.0);
      out.add_flow_time_rate(e, u_rate);
      out.add_power(0, q * u * u);
      out.add_power_slope(0, e, -2.0 * q * u);
      out.add_power_time_rate(0, 2.0 * q * u * u_rate);
    }
  }
}

// The common-mode path (common_mode_resistance_ohm): from the midpoint of end a to that of
// end b, its current split equally over each end's two terminals. It leaves the port voltages
// and currents alone and holds a floating far end where the conductors hold it (at DC: each
// terminal near its board terminal), instead of on its strays alone.
void TransmissionLine::load_common_mode(const ElementContext& ctx, Stamper& out) const {
  if (!std::isfinite(p_.common_mode_resistance_ohm)) return;
  const double g = 1.0 / p_.common_mode_resistance_ohm;
  const double d = 0.5 * (ctx.value(0) + ctx.value(1) - ctx.value(2) - ctx.value(3));  // cm_a − cm_b
  const double i = g * d;                                                            // from end a to end b
  const double share[4] = {0.5, 0.5, -0.5, -0.5};  // the current leaves a's terminals, enters b's
  for (int r = 0; r < 4; ++r) out.add_flow(r, -share[r] * i);
  out.add_power(0, g * d * d);
  if (!out.wants_slopes()) return;  // a Rosenbrock stage: rates only
  for (int r = 0; r < 4; ++r) {
    for (int col = 0; col < 4; ++col) out.add_flow_slope(r, col, -share[r] * g * share[col]);
    out.add_power_slope(0, r, 2.0 * g * d * share[r]);
  }
}

void TransmissionLine::history_values(const ElementContext& ctx, double* values, double* rates) const {
  const double z = p_.characteristic_impedance_ohm, rs = end_resistance_ohm();
  if (!ctx.past()) {
    const double va = ctx.value(0) - ctx.value(1), vb = ctx.value(2) - ctx.value(3);
    const double i = (va - vb) / p_.loop_resistance_ohm;
    values[0] = va + (z - rs) * i;
    values[1] = vb - (z - rs) * i;
    rates[0] = rates[1] = 0.0;
    return;
  }
  const double g = 1.0 / (z + rs);
  for (int end = 0; end < 2; ++end) {
    const int plus = 2 * end, minus = plus + 1;
    const double i = port_current_A(ctx, end);
    const double v = ctx.value(plus) - ctx.value(minus);
    const double v_rate = ctx.rate(plus) - ctx.rate(minus);
    values[end] = v + (z - rs) * i;
    rates[end] = v_rate + (z - rs) * g * (v_rate - ctx.rate(4 + end));
  }
}

double TransmissionLine::stored_energy_J(const ElementContext& ctx) const {
  const double z = p_.characteristic_impedance_ohm, tau = p_.delay_s;
  if (const DelayedValues* past = ctx.past()) {
    // A wave w/2 carries (w/2)²/Z0 watts; what left either end within the last pure delay is in
    // transit, and each low-pass holds τ_hf·e²/(4·Z0) (its loss is then (u − e)²/(4·Z0) ≥ 0). In
    // the quasi-static form the lead and the lag take those places (to the form's first order).
    const double lag = past->quasi_static ? quasi_static_lag_s() : p_.high_frequency_loss_time_s;
    const double t = ctx.time_s(), tp = tau - lag, ea = ctx.value(4), eb = ctx.value(5);
    return (past->integral_of_square(0, t - tp, t) + past->integral_of_square(1, t - tp, t) + lag * (ea * ea + eb * eb)) /
           (4.0 * z);
  }
  const double va = ctx.value(0) - ctx.value(1), vb = ctx.value(2) - ctx.value(3);
  const double i = (va - vb) / p_.loop_resistance_ohm;
  const double v_line = va - end_resistance_ohm() * i;  // the lossless line's voltage, the same all along
  return 0.5 * tau / z * v_line * v_line + 0.5 * z * tau * i * i;  // ½·C·V² + ½·L·I², C = τ/Z0, L = Z0·τ
}

}  // namespace coilkick::engine
