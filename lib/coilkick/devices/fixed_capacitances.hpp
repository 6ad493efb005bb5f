#pragma once
// Charges of a three-terminal device's two fixed capacitances from its control terminal (1) to
// the other two: the pwl transistors' junction (B–E, B–C) and gate (G–S, G–D) capacitances.
// Terminals 0, 1, 2 (collector/drain, base/gate, emitter/source); `sign` +1 for N, −1 for P.
namespace coilkick::devices {

template <class S>
void fixed_control_charges(double sign, double to_2_F, double to_0_F, const S* v, S* q) {
  const S q_12 = to_2_F * sign * (v[1] - v[2]);
  const S q_10 = to_0_F * sign * (v[1] - v[0]);
  q[0] = -sign * q_10;
  q[1] = sign * (q_12 + q_10);
  q[2] = -sign * q_12;
}

}  // namespace coilkick::devices
