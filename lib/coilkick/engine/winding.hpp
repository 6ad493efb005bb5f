#pragma once
// The electrical side of a winding, shared by the fixed coil (passive_elements) and the relay
// armature coil (relay/armature_coil): winding resistance r in series with (inductance ∥ core-loss
// resistance). With v = v_a − v_b and the inductor current i (local index 2):
//   v_L = (v − r·i)/(1 + r·g_core),  terminal current i_t = i + g_core·v_L.
// Stamps the two KCL rows, f of the inductor row (v_L; the caller adds its mass, L or ∂λ/∂x),
// and the heat channels "winding" (0, r·i_t²) and, with g_core > 0, "core" (1, g_core·v_L²).
#include "coilkick/engine/element.hpp"

namespace coilkick::engine {

inline void stamp_winding(const ElementContext& ctx, Stamper& out, double r_ohm, double core_conductance_S) {
  constexpr int a = 0, b = 1, k = 2;
  const double gc = core_conductance_S;
  const double v = ctx.value(a) - ctx.value(b);
  const double i = ctx.value(k);
  const double s = 1.0 / (1.0 + r_ohm * gc);
  const double vl = (v - r_ohm * i) * s;
  const double dvl_dv = s, dvl_di = -r_ohm * s;
  const double it = i + gc * vl;  // terminal current, a -> b
  const double dit_dv = gc * dvl_dv, dit_di = 1.0 + gc * dvl_di;

  out.add_flow(a, -it);
  out.add_flow(b, it);
  out.add_flow(k, vl);
  out.add_power(0, r_ohm * it * it);
  if (gc > 0.0) out.add_power(1, gc * vl * vl);
  if (!out.wants_slopes()) return;  // a Rosenbrock stage: rates only
  out.add_flow_slope(a, a, -dit_dv);
  out.add_flow_slope(a, b, dit_dv);
  out.add_flow_slope(a, k, -dit_di);
  out.add_flow_slope(b, a, dit_dv);
  out.add_flow_slope(b, b, -dit_dv);
  out.add_flow_slope(b, k, dit_di);
  out.add_flow_slope(k, a, dvl_dv);
  out.add_flow_slope(k, b, -dvl_dv);
  out.add_flow_slope(k, k, dvl_di);
  out.add_power_slope(0, a, 2.0 * r_ohm * it * dit_dv);
  out.add_power_slope(0, b, -2.0 * r_ohm * it * dit_dv);
  out.add_power_slope(0, k, 2.0 * r_ohm * it * dit_di);
  if (gc > 0.0) {
    out.add_power_slope(1, a, 2.0 * gc * vl * dvl_dv);
    out.add_power_slope(1, b, -2.0 * gc * vl * dvl_dv);
    out.add_power_slope(1, k, 2.0 * gc * vl * dvl_di);
  }
}

}  // namespace coilkick::engine
