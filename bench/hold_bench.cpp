// The periodic steady state of a PWM hold: shooting (engine/periodic_steady_state.hpp) against
// simulating the periods one by one, both measured in this run on the same circuit — a 0.5 H,
// 50 Ω coil (τ = 10 ms = 200 periods) held by 20 kHz PWM at 40 % duty on a low-side logic-level
// N-MOSFET with a Schottky freewheeling diode, physical device models, from the end of a 30 ms
// pull-in. Prints both times, the periods each simulated, the results' agreement and the ratio.
// Target (a benchmark, not a test): shooting at least 50× faster than the direct periods.
#include <chrono>
#include <cmath>
#include <cstdio>

#include "best_of.hpp"
#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/hold.hpp"

using namespace coilkick::drivers;

namespace {
DriverSpec held_coil() {
  DriverSpec s;
  s.supply.voltage_V = 24.0;
  s.drive.high_level_V = 5.0;
  s.drive.fall_time_s = 20e-9;
  s.switch_.topology = Topology::low_side_nmos;
  s.switch_.part = "nmos_logic_level_60v";
  s.switch_.base_resistor_ohm = 100.0;
  s.coil.resistance_at_20C_ohm = 50.0;
  s.coil.copper_temperature_coefficient_per_K = 0.0;
  s.coil.inductance_H = 0.5;
  s.coil.release_current_A = 0.05;
  s.clamp.kind = ClampKind::diode;
  s.clamp.diode_part = "schottky_1a_40v";
  s.hold.pull_in_time_s = 30e-3;
  s.hold.pwm_frequency_Hz = 20e3;
  s.hold.pwm_duty = 0.4;
  return s;
}

}  // namespace

int main() {
  const auto parts = coilkick::catalogue::load_default_catalogue();
  const DriverSpec s = held_coil();
  const BuiltDriver b = build_driver_network(s, parts);
  HoldResult shot, direct;
  const double t_shoot = best_of(3, [&] { shot = solve_hold(s, b, true); });
  const double t_direct = best_of(1, [&] { direct = solve_hold(s, b, false); });
  const double agreement = std::abs(shot.average_current_A / direct.average_current_A - 1.0);
  std::printf("hold steady state (0.5 H, 50 ohm, 20 kHz, 40 %%): shooting %.3f s (%d Newton steps, %ld periods), "
              "direct %.3f s (%ld periods); average current %.6g A vs %.6g A (relative difference %.2g)\n",
              t_shoot, shot.steady.newton_iterations, shot.steady.period_runs, t_direct, direct.steady.period_runs,
              shot.average_current_A, direct.average_current_A, agreement);
  std::printf("hold_steady_state speedup_vs_direct=%.1f target=50\n", t_direct / t_shoot);
  return 0;
}
