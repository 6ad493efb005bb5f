#pragma once
// The peak-and-hold drive (driver_spec.hpp, HoldSpec), the stage before the final switch-off:
//  1. pull-in: from the off-state (drive low, relays released) the drive rises and stays high for
//     hold.pull_in_time, or until the coil current reaches hold.pull_in_current;
//  2. hold: the drive's PWM at hold.pwm_frequency; its periodic steady state by shooting
//     (engine/periodic_steady_state.hpp) started from the end of the pull-in; with
//     hold.average_current the duty is found by a secant search on the steady state's average;
//  3. one steady-state period is simulated and measured (average, ripple, minimum current;
//     energy per period of the supply, the clamp, the switch);
//  4. the final switch-off starts from the steady state at the end of an on-time.
// A plain repetition (RepeatSpec) runs as a hold without pull-in whose `count` periods are
// simulated one by one from the off-state; the last one is measured and the final switch-off
// ends it.
// The PWM period starts at the drive's falling edge: the periodic state is the state just before
// the switch turns off, so the final switch-off is an ordinary falling edge from that state.
#include <memory>
#include <string>
#include <vector>

#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/drivers/metrics.hpp"
#include "coilkick/engine/periodic_steady_state.hpp"
#include "coilkick/engine/transient_result.hpp"

namespace coilkick::drivers {

struct HoldResult {
  double period_s = 0.0;
  double duty = 0.0;                      // on-fraction used (given or found)
  double pull_in_time_s = 0.0;            // full drive, from the drive's rising edge
  double pull_in_end_current_A = 0.0;     // coil current when the PWM starts
  bool armature_pulled_in = true;         // armature model: the make contact closed during the pull-in
  bool armature_held = true;              // armature model: the make contact is closed in the steady hold
  // Armature model: "closed" or "open" where the steady state held the armature on that stop,
  // which carries it through the whole period (hold.cpp); empty where it moved freely.
  std::string armature_rest;
  double average_current_A = 0.0, minimum_current_A = 0.0, maximum_current_A = 0.0;  // steady-state period
  double supply_energy_per_period_J = 0.0, clamp_energy_per_period_J = 0.0, switch_energy_per_period_J = 0.0;
  std::vector<double> clamp_part_energy_per_period_J;  // per BuiltDriver::clamp_parts
  engine::PeriodicSteadyState steady;     // how the steady state was found
  int cycles = 0;                         // a repetition's periods simulated one by one (0: steady state)
  engine::CircuitState period_end;        // the state at the end of the measured period
  engine::CircuitState final_start;       // that state, at drive.switch_off_at_s
  std::shared_ptr<const engine::TransientResult> pull_in, period;  // the simulated pull-in and one steady period
};

// Throws std::invalid_argument for a description without a hold, engine::SimulationError when a
// stage cannot be solved (the pull-in current never reached, no steady state, no duty that holds
// the average current).
// allow_shooting = false: the steady state by simulating the periods one by one (the reference
// the tests and the benchmark compare shooting with).
HoldResult solve_hold(const DriverSpec& spec, const BuiltDriver& b, bool allow_shooting = true);

// The hold metrics (metrics.hpp: hold_*), NaN without a hold.
void set_hold_metrics(const DriverSpec& spec, const HoldResult* hold, Metrics& m);

}  // namespace coilkick::drivers
