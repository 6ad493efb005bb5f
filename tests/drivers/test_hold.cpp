// The peak-and-hold drive (drivers/hold.hpp) on the greenhouse valve's coil values (demo data)
// without its armature: shooting against the periods one by one, the energy per period
// (docs/derivations.md, "Coil under a square-wave drive": in the steady state the supply's energy
// per period is the heat of all parts in it), the duty found for a target average current, a
// current-controlled pull-in, and a fast-decay clamp that cannot hold.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>
#include <set>

#include "coilkick/drivers/energy_account.hpp"
#include "coilkick/drivers/hold.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/scenario/scenario.hpp"
#include "driver_fixture.hpp"

using namespace coilkick::drivers;

namespace {
// 24 V, 48 Ω at 20 °C (55.5 Ω at 60 °C), 0.35 H: τ = 6.3 ms = 126 periods of the 20 kHz PWM.
DriverSpec held_valve(ClampKind clamp) {
  DriverSpec s = test_support::valve_case();
  s.coil.temperature_C = 60.0;
  s.coil.release_current_A = std::nan("");
  s.coil.release_voltage_V = 3.6;
  s.clamp.kind = clamp;
  s.hold.pull_in_time_s = 30e-3;
  s.hold.pwm_frequency_Hz = 20e3;
  s.hold.pwm_duty = 0.4;
  // The direct periods (the reference for shooting) take ~45 s in the sanitizer builds: a budget
  // well above that, so that only a real hang would end them.
  s.analysis.maximum_wall_time_s = 900.0;
  return s;
}

// The average coil current at a fixed duty, by the periods one by one (no shooting, no search).
double average_by_periods_one_by_one(DriverSpec s, double duty) {
  s.hold.average_current_A = std::nan("");
  s.hold.pwm_duty = duty;
  return solve_hold(s, build_driver_network(s, test_support::catalogue()), false).average_current_A;
}

// A hold searched for its average current: the average found within `epsilon` of the target, and
// the duty found run period by period (no search, no shooting) within the same.
void check_hold_at_its_target(DriverSpec spec, double epsilon) {
  spec.analysis.maximum_wall_time_s = 900.0;  // a budget only a hang reaches, also in the sanitizer builds
  const double target = spec.hold.average_current_A;
  const auto m = simulate_switch_off(spec, test_support::catalogue()).metrics;
  CHECK(m.get("hold_average_current_A") == rel(target).epsilon(epsilon));
  CHECK(average_by_periods_one_by_one(spec, m.get("hold_duty")) == rel(target).epsilon(epsilon));
}

// Over the measured steady period: the energy in (the supply and, a little, the logic output
// charging the gate or base) and the heat of all parts.
struct PeriodEnergy {
  double in_J, heat_J;
};
PeriodEnergy period_energy(const HoldResult& h) {
  const auto& r = *h.period;
  const auto& c = r.circuit();
  const Eigen::VectorXd x0 = r.states().row(0).transpose(), x1 = r.states().row(r.states().rows() - 1).transpose();
  std::set<std::string> elements;
  for (const auto& e : c.power_channels()) elements.insert(e.element);
  const auto logic = static_cast<Eigen::Index>(c.state_index("energy:logic.delivered"));
  return {h.supply_energy_per_period_J + (x1[logic] - x0[logic]), heat_between(c, x0, x1, {elements.begin(), elements.end()})};
}

// The hold of a random campaign driver (a scenario text) by shooting: found by shooting with no
// note, and periodic — the measured period returns to its start within the search's own
// convergence (10 error scales: 1 nA + 1e-6 of the largest current).
HoldResult shot_and_periodic(const std::string& text, const std::string& name) {
  const auto sc = coilkick::scenario::read_scenario_text(text, name, test_support::catalogue());
  const HoldResult h = solve_hold(sc.driver, build_driver_network(sc.driver, test_support::catalogue()), true);
  CHECK(h.steady.method == coilkick::engine::PeriodicMethod::shooting);
  CHECK(h.steady.note.empty());
  const auto& r = *h.period;
  const int k = r.circuit().state_index("coil.current");
  CHECK(std::abs(r.states()(r.states().rows() - 1, k) - r.states()(0, k)) <= 10.0 * (1e-9 + 1e-6 * h.pull_in_end_current_A));
  return h;
}

// The duty search of a scenario file's hold.average_current: the average found, and the average
// of the duty found run period by period (no search, no shooting). Tolerances: the search stops
// within 1e-5 of the target (hold.cpp), 2e-5 leaving room for the rounding of the steady state's
// own tolerance; 1e-4, the shooting's own agreement with the periods one by one (first test
// case below).
void check_duty_search(const std::string& scenario_text, double target_A) {
  const auto sc = coilkick::scenario::read_scenario_text(scenario_text, "duty search", test_support::catalogue());
  const auto searched = simulate_switch_off(sc.driver, test_support::catalogue()).metrics;
  CHECK(searched.get("hold_average_current_A") == rel(target_A).epsilon(2e-5));
  CHECK(average_by_periods_one_by_one(sc.driver, searched.get("hold_duty")) == rel(target_A).epsilon(1e-4));
}
}  // namespace

TEST_CASE("hold: shooting and the periods one by one reach the same steady state (1e-4)") {
  const DriverSpec s = held_valve(ClampKind::diode);
  const auto b = build_driver_network(s, test_support::catalogue());
  const HoldResult shot = solve_hold(s, b, true);
  const HoldResult direct = solve_hold(s, b, false);
  CHECK(shot.steady.method == coilkick::engine::PeriodicMethod::shooting);
  CHECK(direct.steady.method == coilkick::engine::PeriodicMethod::direct);
  // The pull-in ends at 4.8 τ: the hold still has to settle over a few hundred periods.
  CHECK(direct.steady.period_runs > 200);
  CHECK(shot.steady.period_runs < direct.steady.period_runs / 5);
  CHECK(shot.average_current_A == rel(direct.average_current_A).epsilon(1e-4));
  CHECK(shot.minimum_current_A == rel(direct.minimum_current_A).epsilon(1e-4));
  CHECK(shot.maximum_current_A == rel(direct.maximum_current_A).epsilon(1e-4));
  CHECK(shot.clamp_energy_per_period_J == rel(direct.clamp_energy_per_period_J).epsilon(1e-4));
  // Sanity against the resistive estimate D·V/R: the switch's and diode's drops and the diode's
  // recovery take a few per cent off (docs/derivations.md gives D·V/R for ideal parts).
  const double r_hot = 48.0 * (1 + 0.00393 * 40.0);
  CHECK(shot.average_current_A < 0.4 * 24.0 / r_hot);
  CHECK(shot.average_current_A > 0.9 * 0.4 * 24.0 / r_hot);
}

TEST_CASE("hold: in the steady state the supply's energy per period is the heat of all parts") {
  DriverSpec s = held_valve(ClampKind::diode);
  s.analysis.relative_tolerance = 1e-9;
  const auto b = build_driver_network(s, test_support::catalogue());
  const HoldResult h = solve_hold(s, b);
  const auto [in, heat] = period_energy(h);
  // The stored energy returns to its start to the steady state's convergence (10 error scales of
  // rtol 1e-9 on ½·L·I², a few 1e-8 relative); the energy accumulators carry their own
  // tolerance. 1e-6 leaves margin over both.
  CHECK(in == rel(heat).epsilon(1e-6));
  CHECK(h.supply_energy_per_period_J > 0.0);
}

TEST_CASE("hold at the pwl level: shooting's replayed periods hold their pieces, and it reaches the periods' steady state (1e-4)") {
  // The bundled held valve (models/scenarios/greenhouse_valve_hold.toml, invented values, its
  // diode clamp and plunger) at the pwl level. Shooting's sensitivities replay the period's own
  // steps; the replay had decided the pwl pieces at every stage, so a stage could stand on the
  // clamp diode's milliohm line while the step's Jacobian had it off: a stage increment of ~1e8 V
  // on a picofarad node, the replayed period non-finite, and shooting gave way to ~1,400 periods
  // one by one. A replayed step now holds the pieces of its start. Against the periods one by one
  // (no shooting): 1e-4, as the physical level's shooting above.
  auto sc = coilkick::scenario::read_scenario_file(
      coilkick::catalogue::default_models_directory() + "/scenarios/greenhouse_valve_hold.toml", test_support::catalogue());
  DriverSpec s = sc.driver;
  s.analysis.model_level = coilkick::devices::ModelLevel::pwl;
  s.analysis.maximum_wall_time_s = 900.0;  // the periods one by one in the sanitizer builds
  const auto b = build_driver_network(s, test_support::catalogue());
  const HoldResult shot = solve_hold(s, b, true);
  CHECK(shot.steady.method == coilkick::engine::PeriodicMethod::shooting);
  CHECK(shot.steady.note.empty());
  const HoldResult direct = solve_hold(s, b, false);
  CHECK(shot.steady.period_runs < direct.steady.period_runs / 5);
  CHECK(shot.average_current_A == rel(direct.average_current_A).epsilon(1e-4));
  CHECK(shot.minimum_current_A == rel(direct.minimum_current_A).epsilon(1e-4));
  CHECK(shot.maximum_current_A == rel(direct.maximum_current_A).epsilon(1e-4));
}

namespace {
// The bundled held valve (models/scenarios/greenhouse_valve_hold.toml, invented values) with the
// given clamp; the budget leaves room for the periods one by one in the sanitizer builds.
DriverSpec bundled_held_valve(ClampKind clamp) {
  auto sc = coilkick::scenario::read_scenario_file(
      coilkick::catalogue::default_models_directory() + "/scenarios/greenhouse_valve_hold.toml", test_support::catalogue());
  DriverSpec s = sc.driver;
  s.clamp.kind = clamp;
  s.analysis.maximum_wall_time_s = 900.0;
  return s;
}

// Shooting with the plunger held on its stop against the periods one by one with the plunger
// free (the reference): 1e-4, as shooting's own agreement with them (first test case).
void check_held_against_free(const HoldResult& held, const HoldResult& free) {
  CHECK(held.steady.method == coilkick::engine::PeriodicMethod::shooting);
  CHECK(held.steady.note.empty());
  CHECK(held.steady.largest_multiplier < 1.0);
  CHECK(free.steady.method == coilkick::engine::PeriodicMethod::direct);
  CHECK(free.armature_rest.empty());
  CHECK(held.steady.period_runs < free.steady.period_runs / 5);
  CHECK(held.average_current_A == rel(free.average_current_A).epsilon(1e-4));
  CHECK(held.minimum_current_A == rel(free.minimum_current_A).epsilon(1e-4));
  CHECK(held.maximum_current_A == rel(free.maximum_current_A).epsilon(1e-4));
  CHECK(held.supply_energy_per_period_J == rel(free.supply_energy_per_period_J).epsilon(1e-4));
}
}  // namespace

TEST_CASE("hold with the valve's plunger resting on its closed stop: held there, shooting reaches the free plunger's steady state") {
  // Diode + 47 Ω clamp: the hold's lowest current (112 mA) holds the plunger closed. Pressed on
  // its stop the plunger rings there at a few kHz, damped only lightly at the hold's small force
  // (multipliers of one period near the unit circle); shooting on the free plunger had landed on
  // a periodic state ~0.17 mm off the stop (a saddle, refused) and the periods one by one took
  // ~1,000 periods (~5 s). Held at its resting gap the search is the circuit's alone.
  const DriverSpec s = bundled_held_valve(ClampKind::diode_resistor);
  const auto b = build_driver_network(s, test_support::catalogue());
  REQUIRE(b.armature.has_value());
  const HoldResult held = solve_hold(s, b, true);
  const HoldResult free = solve_hold(s, b, false);
  CHECK(held.armature_rest == "closed");
  CHECK(held.armature_held);
  check_held_against_free(held, free);
  // The gap held: where the free plunger settles on its stop, the residual gap less the stop's
  // Hertz compression under the net force (armature_coil.hpp), 19 nm here. Within 1 % of that
  // compression: the free plunger still rings on its stop (its velocity at the period's end,
  // ~7e-7 m/s, at a few kHz: an amplitude of a few 1e-11 m, 0.2 % of the compression).
  const auto& c = held.period->circuit();
  const double residual = b.armature->mechanics.residual_gap_m;
  const double held_gap = held.period_end.values[c.state_index("coil.gap")];
  const double free_gap = free.period_end.values[c.state_index("coil.gap")];
  CHECK(held_gap < residual);
  CHECK(held_gap - residual == rel(free_gap - residual).epsilon(0.01));
  // The ripple by volt-seconds on the closed coil (inductor volt-second balance, R. W. Erickson
  // and D. Maksimović, Fundamentals of Power Electronics, 2nd ed., §2.2): over the on-time D·T
  // the coil sees V − I·R, so ΔI = (V − I·R)·D·T/L(gap). Tolerance 3 %: the switch's drop
  // (~0.1 Ω·0.11 A against 18 V), its turn-on and turn-off delays (~0.1 µs each, shifting the
  // on-time they bound by less than their difference), the current's curvature over the on-time
  // (D·T/τ ≈ 3e-3) and the core-loss path in parallel with the winding.
  const double L = b.armature->magnetic.inductance_H(held_gap);
  const double T = 1.0 / s.hold.pwm_frequency_Hz, on = s.hold.pwm_duty * T;
  const double v_on = s.supply.voltage_V - held.average_current_A * b.coil_resistance_ohm;
  CHECK(held.maximum_current_A - held.minimum_current_A == rel(v_on * on / L).epsilon(0.03));
}

TEST_CASE("hold with the valve's plunger dropped out: held on its open stop, shooting reaches the free plunger's steady state") {
  // No clamp: the coil's current collapses in every off-time and averages 2.7 mA, far below the
  // release current, so the plunger drops out after the pull-in and rests on its open (back)
  // stop, where the spring's preload holds it against the magnet at every instant.
  const DriverSpec s = bundled_held_valve(ClampKind::none);
  const auto b = build_driver_network(s, test_support::catalogue());
  const HoldResult held = solve_hold(s, b, true);
  const HoldResult free = solve_hold(s, b, false);
  CHECK(held.armature_pulled_in);
  CHECK(held.armature_rest == "open");
  CHECK_FALSE(held.armature_held);
  check_held_against_free(held, free);
  const auto& c = held.period->circuit();
  CHECK(held.period_end.values[c.state_index("coil.gap")] > b.armature->mechanics.open_gap_m);
  CHECK(free.period_end.values[c.state_index("coil.gap")] > b.armature->mechanics.open_gap_m);
}

TEST_CASE("hold with the valve's plunger dropped out behind a diode + Zener: shooting from a state whose fast parts were carried forward") {
  // The Zener clamps the coil's off-time to ~19 V: the current averages 3.9 mA and the plunger
  // drops out onto its open stop. Shooting carries its fast states (gate, nodes) forward from
  // each period's end (Newton–Picard); the next sensitivities replayed the steps of the state
  // before that, and through the switch's turn-off at the period's start such a replay went
  // non-finite (1e153 J in the switch's heat), so shooting gave way to ~500 periods one by one.
  // The carried state's own run is recorded first now.
  const DriverSpec s = bundled_held_valve(ClampKind::diode_zener);
  const auto b = build_driver_network(s, test_support::catalogue());
  const HoldResult held = solve_hold(s, b, true);
  const HoldResult free = solve_hold(s, b, false);
  CHECK(held.armature_rest == "open");
  check_held_against_free(held, free);
}

TEST_CASE("hold: a multiplier that the sensitivities read above 1 is measured on its mode before the steady state is refused") {
  // A random driver of scripts/tolerance_campaign.py (--extras seed 1850): a 1.9 H coil on a
  // high-side P-MOSFET with a 47 V TVS across it, held by 4.5 kHz PWM from 5 V. The TVS takes
  // the coil's current to zero in every off-time, so a period forgets where the coil started,
  // but the sensitivity matrix, its columns replayed through the TVS's turn-on, read a
  // multiplier of 1.016: shooting's converged state was refused as repelling, and the periods
  // one by one ran out of the 60 s budget. Pushed a thousand error scales along that mode and
  // run one period, the mode comes back at 0.15 of the push: it attracts.
  const HoldResult h = shot_and_periodic(R"(
name = "campaign driver 1850"
[supply]
voltage = "5 V"
[drive]
high_level = "3.3 V"
switch_off_at = "1 ms"
fall_time = "9.66417e-07 s"
rise_time = "1.23007e-09 s"
[coil]
resistance = "30.9667 ohm"
inductance = "1.89624 H"
release_current = "0.0399139 A"
[switch]
topology = "high_side_pmos"
part = "pmos_logic_level_60v"
gate_resistor = "477.507 ohm"
pullup_resistor = "4159.47 ohm"
level_shifter_part = "npn_small_signal_40v"
level_shifter_base_resistor = "10620.9 ohm"
[clamp]
kind = "tvs_across_switch"
tvs_part = "tvs_400w_47v"
[analysis]
device_models = "physical"
[hold]
pwm_frequency = "4540.34 Hz"
pull_in_time = "0.212258 s"
pwm_duty = "0.342647"
)", "seed 1850");
  CHECK(h.steady.largest_multiplier < 0.5);
}

TEST_CASE("hold: a sensitivity column that goes astray and stays finite is taken again, and a vanishing Newton step with one period still moving is no steady state") {
  // A random driver of scripts/tolerance_campaign.py (--extras seed 1864, invented values): a
  // 1.53 H, 53.8 Ω coil on a low-side NPN with a diode + 47 V Zener, held at the duty 0.48. A
  // fast-decay clamp cannot hold it: volt-second balance over a period (Erickson & Maksimović,
  // Fundamentals of Power Electronics, 2nd ed., §2.2) asks D·(V − I·R) = (1 − D)·(V_Z + V_D + I·R),
  // and 0.48·36 V < 0.52·47.7 V leaves no positive current I: the hold collapses (the periods one by
  // one settle at ~0.4 mA). Shooting had reported 366 mA: the base node's column, replayed along
  // the period's steps, read 2.8e24 (finite), the Newton solve's step vanished for every other
  // state, and a vanishing step was taken as convergence while one period still moved the coil
  // current by 1.8 mA (5,000 error scales). Now such a column is taken again with smaller steps
  // and convergence needs the period to map the state onto itself (periodic_steady_state.cpp).
  const std::string text = R"(
name = "campaign driver 1864"
[supply]
voltage = "36 V"
[drive]
high_level = "5 V"
switch_off_at = "1 ms"
fall_time = "3.22337e-08 s"
rise_time = "9.78724e-08 s"
[coil]
resistance = "53.8031 ohm"
inductance = "1.52845 H"
release_current = "0.107318 A"
[switch]
topology = "low_side_npn"
part = "npn_medium_power_80v"
base_resistor = "821.242 ohm"
[clamp]
kind = "diode_zener"
diode_part = "small_signal_diode"
zener_part = "zener_500mw_47v"
tvs_part = "tvs_400w_33v"
active_clamp_zener_part = "zener_500mw_33v"
resistor = "18.0845 ohm"
snubber_resistance = "25.3431 ohm"
snubber_capacitance = "1.19908e-07 F"
[analysis]
device_models = "physical"
[hold]
pwm_frequency = "11131.1 Hz"
pull_in_current = "0.367381 A"
pwm_duty = "0.481939"
)";
  const HoldResult h = shot_and_periodic(text, "seed 1864");
  const double full_drive_A = 36.0 / 53.8031;
  CHECK(h.average_current_A < 1e-2 * full_drive_A);
  // The same steady state as the periods one by one at the same duty: the average is the small
  // remainder of a ±0.6 mA ripple, so it is compared against the ripple's size: 1e-3 of it
  // (measured 4.8e-5; the two searches' own tolerances, ten error scales of ~0.4 µA each, are
  // far below).
  const auto sc = coilkick::scenario::read_scenario_text(text, "seed 1864", test_support::catalogue());
  const double direct = average_by_periods_one_by_one(sc.driver, h.duty);
  CHECK(std::abs(h.average_current_A - direct) <= 1e-3 * (h.maximum_current_A - h.minimum_current_A));
}

TEST_CASE("hold: a sensitivity column whose replay through the switch's avalanche goes non-finite is taken again with a smaller step") {
  // A random driver of scripts/tolerance_campaign.py (--extras seed 1517, at the duty its search
  // finds): a 1.16 H coil on a high-side PNP with no clamp, the switch avalanching in every
  // off-time, held by 12.8 kHz PWM. A column of the sensitivities, perturbed by 1e-5 of a state's
  // size and replayed along the unperturbed period's steps, met the avalanche a step off and went
  // non-finite; shooting gave up and the periods one by one (multiplier 0.999) ran out of the
  // 60 s budget. Such a column is taken again with a hundredth of the step.
  const HoldResult h = shot_and_periodic(R"(
name = "campaign driver 1517"
[supply]
voltage = "24 V"
[drive]
high_level = "3.3 V"
switch_off_at = "1 ms"
fall_time = "2.43212e-09 s"
rise_time = "1.60642e-07 s"
[coil]
resistance = "11.4178 ohm"
inductance = "1.16246 H"
release_current = "0.437424 A"
winding_capacitance = "3.25567e-11 F"
[switch]
topology = "high_side_pnp"
part = "pnp_small_signal_40v"
base_resistor = "3366.86 ohm"
pullup_resistor = "1122.43 ohm"
level_shifter_part = "npn_small_signal_40v"
level_shifter_base_resistor = "28709.6 ohm"
[clamp]
kind = "none"
[analysis]
device_models = "physical"
[hold]
pwm_frequency = "12824 Hz"
pull_in_time = "0.300054 s"
pwm_duty = "0.682997"
)", "seed 1517");
  CHECK(h.steady.largest_multiplier < 1.0);
  // In the steady state the supply's energy per period is the heat of all parts (energy balance,
  // docs/derivations.md): 1e-4, the runs' energy tolerance over a period of ~40 µJ.
  const auto [in, heat] = period_energy(h);
  CHECK(in == rel(heat).epsilon(1e-4));
}

TEST_CASE("hold: the duty for a target average current, and a current-controlled pull-in") {
  DriverSpec s = held_valve(ClampKind::diode);
  s.hold.pwm_duty = std::nan("");
  s.hold.average_current_A = 0.12;
  s.hold.pull_in_time_s = std::nan("");
  s.hold.pull_in_current_A = 0.35;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  // The secant search stops within 1e-5 of the target (hold.cpp).
  CHECK(r.metrics.get("hold_average_current_A") == rel(0.12).epsilon(2e-5));
  CHECK(r.metrics.get("hold_duty") > 0.2);
  CHECK(r.metrics.get("hold_duty") < 0.4);
  // The pull-in stops at the current, located as an event.
  CHECK(r.metrics.get("hold_pull_in_current_A") == rel(0.35).epsilon(1e-6));
  // First-order rise of the coil current, i = (V/R)(1 − e^(−t/τ)) (Nilsson & Riedel, Electric
  // Circuits, 10th ed., ch. 7): the time to 0.35 A, within the switch's drop (a few per cent).
  const double r_hot = 48.0 * (1 + 0.00393 * 40.0), tau = 0.35 / r_hot;
  CHECK(r.metrics.get("hold_pull_in_time_s") == rel(-tau * std::log(1 - 0.35 * r_hot / 24.0)).epsilon(0.05));
  // The final switch-off starts from the hold, not from the full current.
  CHECK(r.metrics.get("coil_current_at_switch_off_A") < 0.13);
}

TEST_CASE("hold: a fast-decay clamp cannot hold a coil on PWM (its off-time decay outruns the on-time rise)") {
  // Volt-seconds: the on-time drives (V − i·R)·D·T, a diode + 18 V Zener takes back about
  // (18.7 V + i·R)·(1 − D)·T; at D = 0.4 they balance only at i ≈ 0 (common practice: PWM hold
  // needs a freewheeling diode; a fast-decay clamp is switched in only for the final switch-off).
  const auto r = simulate_switch_off(held_valve(ClampKind::diode_zener), test_support::catalogue());
  CHECK(r.metrics.get("hold_average_current_A") < 0.01);
  bool margin_failed = false;
  for (const auto& c : r.checks) {
    if (c.name == "hold_current_margin") margin_failed = c.status == CheckStatus::fail;
  }
  CHECK(margin_failed);
}

TEST_CASE("repetition: many cycles one by one end in the PWM hold's steady state") {
  // The same drive as a plain repetition (no pull-in, 1500 cycles from the off-state: 11.9 time
  // constants) and as a hold (shooting): the last cycle is the steady period to within what 11.9
  // time constants leave of the distance from zero (e^-11.9 ≈ 7e-6) and the runs' tolerance —
  // 1e-4 (the issue's limit).
  DriverSpec held = held_valve(ClampKind::diode);
  held.clamp.diode_part = "schottky_1a_40v";
  DriverSpec repeated = held;
  repeated.hold = HoldSpec{};
  repeated.repeat.period_s = 50e-6;
  repeated.repeat.on_time_s = 0.4 * 50e-6;
  repeated.repeat.count = 1500;
  const auto a = simulate_switch_off(held, test_support::catalogue());
  const auto b = simulate_switch_off(repeated, test_support::catalogue());
  for (const char* m : {"hold_average_current_A", "hold_minimum_current_A", "hold_clamp_energy_per_period_J",
                        "coil_current_at_switch_off_A", "release_time_s"}) {
    CAPTURE(m);
    CHECK(b.metrics.get(m) == rel(a.metrics.get(m)).epsilon(1e-4));
  }
  // A repetition has no pull-in and no hold margin; it reports whether the relay releases
  // between operations instead.
  CHECK(std::isnan(b.metrics.get("hold_current_margin")));
  bool releases_checked = false;
  for (const auto& c : b.checks) {
    if (c.name == "repeat_releases") releases_checked = c.status == CheckStatus::fail;  // 40 % at 20 kHz never lets go
  }
  CHECK(releases_checked);
}

TEST_CASE("repetition: a slow cycle lets the coil current fall to zero before each switch-on") {
  DriverSpec s = held_valve(ClampKind::diode);
  s.hold = HoldSpec{};
  s.repeat.period_s = 0.2;
  s.repeat.on_time_s = 0.08;  // 12.7 time constants on, 19 off
  s.repeat.count = 3;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  // First-order rise over 12.7 τ (Nilsson & Riedel, Electric Circuits, 10th ed., ch. 7): the
  // last on-time ends at the full current, which the switch-off starts from.
  const double r_hot = 48.0 * (1 + 0.00393 * 40.0);
  CHECK(r.metrics.get("coil_current_at_switch_off_A") == rel(24.0 / r_hot).epsilon(0.02));  // the switch's and diode's drops
  // Between operations the current falls to the off-state's leakage; the lowest value is the
  // rectifier's recovery undershoot as it turns off (a few µA below zero), far below 0.1 % of
  // the on-current.
  CHECK(std::abs(r.metrics.get("hold_minimum_current_A")) < 1e-3 * 24.0 / r_hot);
  for (const auto& c : r.checks) {
    if (c.name == "repeat_releases") CHECK(c.status == CheckStatus::pass);
  }
}

TEST_CASE("hold: the duty for a target average current where the average rises far from linearly with the duty") {
  // A high-side P-MOSFET driven through a slow level shifter and pull-up (invented values, one
  // of the random drivers of scripts/tolerance_campaign.py, --extras, seed 10): the gate turns
  // the switch on late in every 0.66 ms period, so the average current is 3 mA at duty 0.42,
  // 10.6 mA at 0.85 and 43 mA at 1 — a secant circled for twelve duties and reported that "no
  // duty" held 10.7 mA while its last held 10.73 mA. Bracketed false position converges.
  check_duty_search(R"(
name = "slow high-side switch held by PWM"
[supply]
voltage = "5 V"
[drive]
high_level = "3.3 V"
switch_off_at = "1 ms"
fall_time = "30 ns"
rise_time = "7 ns"
[coil]
resistance = "115 ohm"
inductance = "0.1 H"
release_current = "20 mA"
[switch]
topology = "high_side_pmos"
part = "pmos_logic_level_60v"
gate_resistor = "140 ohm"
pullup_resistor = "3.7 kohm"
level_shifter_part = "npn_small_signal_40v"
level_shifter_base_resistor = "13 kohm"
[clamp]
kind = "active_clamp"
diode_part = "small_signal_diode"
active_clamp_zener_part = "zener_500mw_33v"
[analysis]
device_models = "piecewise_linear"
[hold]
pwm_frequency = "1.5 kHz"
pull_in_time = "3.3 ms"
average_current = "10.7 mA"
)",
                    10.7e-3);
}

TEST_CASE("hold: a shooting period gone astray is cut short, and the search goes on") {
  // A Darlington without a clamp avalanching at 28 kHz (invented values; the random drivers'
  // --extras seed 16): at one duty of the search a Newton iterate of the shooting started a period
  // that crawled through tens of thousands of tiny steps, and the whole run ended in its 60 s
  // wall-time budget. A shot period now gets a hundred times the first period's attempts; past
  // that the shooting gives way to the periods one by one.
  check_duty_search(R"(
name = "Darlington without a clamp held by PWM"
[supply]
voltage = "24 V"
[drive]
high_level = "5 V"
switch_off_at = "0.9 ms"
fall_time = "365 ns"
rise_time = "136 ns"
[coil]
resistance = "155 ohm"
inductance = "28 mH"
release_current = "34 mA"
[switch]
topology = "low_side_darlington"
part = "darlington_npn_100v"
base_resistor = "15.9 kohm"
board_stray_capacitance = "1 pF"
[clamp]
kind = "none"
[analysis]
device_models = "physical"
[hold]
pwm_frequency = "28 kHz"
pull_in_current = "102 mA"
average_current = "53.3 mA"
)",
                    53.3e-3);
}

TEST_CASE("hold: periods one by one that do not settle are given up within a few thousand periods, by name") {
  // A random driver of scripts/tolerance_campaign.py (--extras seed 1675, invented values): a
  // 1 mH, 18.8 Ω coil (τ = 53 µs, one PWM period) on a pwl Darlington with a TVS across it, its
  // hold searched for 756 mA. At the pwl level its pieces chatter: shooting does not converge,
  // and the periods one by one move the state by ~5e5 error scales per period, the ratio from one
  // period to the next anywhere from 0.1 to 3.8 — no contraction (the physical level settles: its
  // shooting converges in 4 Newton steps). It had run 27,000 periods until the search's 60 s
  // wall-time budget; a window of 1,000 periods whose largest change is no smaller than the
  // window's before is now enough (periodic_steady_state.cpp), and the message says why.
  auto spec = coilkick::scenario::read_scenario_text(R"(
name = "campaign driver 1675"
[supply]
voltage = "24 V"
[drive]
high_level = "3.3 V"
switch_off_at = "1 ms"
fall_time = "2.42389e-07 s"
rise_time = "9.19105e-07 s"
[coil]
resistance = "18.8352 ohm"
inductance = "0.00100546 H"
release_current = "0.531704 A"
[switch]
topology = "low_side_darlington"
part = "darlington_npn_100v"
base_resistor = "10604.4 ohm"
board_stray_capacitance = "1e-10 F"
[clamp]
kind = "tvs_across_switch"
diode_part = "small_signal_diode"
zener_part = "zener_500mw_33v"
tvs_part = "tvs_400w_47v"
active_clamp_zener_part = "zener_500mw_8v2"
resistor = "84.8494 ohm"
snubber_resistance = "219.103 ohm"
snubber_capacitance = "4.10625e-08 F"
[analysis]
device_models = "piecewise_linear"
[hold]
pwm_frequency = "19222.1 Hz"
pull_in_time = "0.000138914 s"
average_current = "0.755891 A"
)", "seed 1675", test_support::catalogue()).driver;
  // The rule, not the wall-time budget, must end the search also in the sanitizer builds (~15×
  // slower: 4,000 periods take ~2 min there): a budget only a hang reaches.
  spec.analysis.maximum_wall_time_s = 900.0;
  const std::string message = test_support::switch_off_error<coilkick::engine::SimulationError>(spec);
  CAPTURE(message);
  CHECK(message.find("the periods do not settle") != std::string::npos);
  CHECK(message.find("physical") != std::string::npos);  // where to turn (the pwl level's hint)
}

TEST_CASE("hold: a duty search closed onto one duty, one side within 0.1 % of the target, holds at that side") {
  // A random driver of scripts/tolerance_campaign.py (--extras seed 2152, invented values): a pwl
  // high-side PNP with an RC across the coil, its hold searched for an average current. At the
  // default tolerances the search's bracket closed onto one duty with averages of 96.9 and
  // 97.4 mA on its two sides — 0.5 % apart, beyond the steady state's noise, so it had been
  // refused as a jump ("no duty gives a steady state in between") while a tight run finds its
  // duty. The side within the project's 0.1 % bar of the target holds it: the average found
  // within 1e-3 of the target, and the duty found run period by period (no search, no shooting)
  // within the same (the two methods agree to 1e-4 in the first test case).
  const auto sc = coilkick::scenario::read_scenario_text(R"(
name = "campaign driver 2152"
[supply]
voltage = "12 V"
[drive]
high_level = "5 V"
switch_off_at = "1 ms"
fall_time = "2.47671e-08 s"
rise_time = "5.24693e-07 s"
[coil]
resistance = "58.1515 ohm"
inductance = "0.170038 H"
release_current = "0.121613 A"
core_loss_resistance = "1.03599e+06 ohm"
[switch]
topology = "high_side_pnp"
part = "pnp_small_signal_40v"
base_resistor = "6735.23 ohm"
pullup_resistor = "24475.7 ohm"
level_shifter_part = "npn_small_signal_40v"
level_shifter_base_resistor = "1226.99 ohm"
board_stray_capacitance = "1e-09 F"
[clamp]
kind = "rc_across_coil"
diode_part = "rectifier_1a"
zener_part = "zener_500mw_24v"
tvs_part = "tvs_400w_47v"
active_clamp_zener_part = "zener_500mw_33v"
resistor = "163.505 ohm"
snubber_resistance = "252.041 ohm"
snubber_capacitance = "5.22203e-09 F"
[analysis]
device_models = "piecewise_linear"
[hold]
pwm_frequency = "32458.1 Hz"
pull_in_current = "0.132455 A"
average_current = "0.0973602 A"
)", "seed 2152", test_support::catalogue());
  check_hold_at_its_target(sc.driver, 1e-3);
}

TEST_CASE("hold: an average current beyond what the full drive gives is refused by name, not reported as a solver failure") {
  // The average coil current is at most D·(V − switch drop)/R (inductor volt-second balance,
  // Erickson & Maksimović, Fundamentals of Power Electronics, 2nd ed., §2.2); the longest duty the
  // 20 ns edges allow at 20 kHz is 1 − 8e-4 and the MOSFET drops tens of millivolts at 0.43 A, so
  // 0.999·V/R is out of reach of every duty (above V/R the description is refused before any
  // run). A description error (invalid_argument), so no solver hint is added.
  DriverSpec s = held_valve(ClampKind::diode);
  s.hold.pwm_duty = std::nan("");
  s.hold.average_current_A = 0.999 * 24.0 / (48.0 * (1 + 0.00393 * 40.0));
  s.hold.pull_in_time_s = 30e-3;
  const std::string message = test_support::switch_off_error<std::invalid_argument>(s);
  CAPTURE(message);
  CHECK(message.find("even the longest duty stays below hold.average_current") != std::string::npos);
}

TEST_CASE("hold: a pull-in current the driver cannot reach is refused by name") {
  // The coil's current rises towards (V − switch drop)/R (first-order rise, Nilsson & Riedel,
  // Electric Circuits, 10th ed., ch. 7); 0.999·V/R lies above that for a MOSFET dropping tens of
  // millivolts, so no time of full drive reaches it. A description error (invalid_argument).
  DriverSpec s = held_valve(ClampKind::diode);
  s.hold.pull_in_time_s = std::nan("");
  s.hold.pull_in_current_A = 0.999 * 24.0 / (48.0 * (1 + 0.00393 * 40.0));
  const std::string message = test_support::switch_off_error<std::invalid_argument>(s);
  CAPTURE(message);
  CHECK(message.find("hold: the coil current does not reach hold.pull_in_current") == 0);
}

TEST_CASE("hold: a pull-in current just above the on-state current is told apart from it") {
  // The on-state current read at the end of a pull-in of 20 time constants (within e^-20 of it),
  // then asked for 2e-4 above it: the message must tell the two apart (at three digits it had
  // read "does not reach 431 mA ... (it reaches 431 mA)").
  DriverSpec s = held_valve(ClampKind::diode);
  s.hold.pull_in_time_s = 20.0 * s.coil.inductance_H / (s.coil.resistance_at_20C_ohm * (1 + 0.00393 * 40.0));
  const double on_A = simulate_switch_off(s, test_support::catalogue()).metrics.get("hold_pull_in_current_A");
  s.hold.pull_in_time_s = std::nan("");
  s.hold.pull_in_current_A = on_A * (1.0 + 2e-4);
  const std::string message = test_support::switch_off_error<std::invalid_argument>(s);
  CAPTURE(message);
  const auto between = [&](const std::string& from, const std::string& to) {
    const std::size_t a = message.find(from);
    REQUIRE(a != std::string::npos);
    return message.substr(a + from.size(), message.find(to, a + from.size()) - a - from.size());
  };
  const std::string wanted = between("hold.pull_in_current (", ")"), reached = between("settles at ", ",");
  CAPTURE(wanted);
  CAPTURE(reached);
  CHECK(wanted != reached);
}

TEST_CASE("hold: a duty search that closes onto one duty within the steady state's own noise holds there") {
  // A high-side P-MOSFET with a slow 80 kΩ pull-up held by PWM at 10 kHz, pwl devices (invented
  // values; scripts/tolerance_campaign.py --extras, seed 1492). The average rises steeply with
  // the duty near 1.2 %, and at the default tolerances the periodic steady state reads it to
  // ~5e-5: at one and the same duty it read +1.5e-5 and −3.7e-5 of the target. The search's
  // bracket closed onto that duty, and the driver was refused as one whose average "jumps from
  // 65.3 mA to 65.3 mA". Both sides within 0.1 % of the target (the project's bar) are the
  // steady state's noise, not a jump: the hold is taken there. Checked: the average within 1e-4
  // of the target (the noise, ~5e-5, measured); the periods one by one at the duty found within
  // 1e-3 (the bar the search now accepts).
  const auto sc = coilkick::scenario::read_scenario_text(R"(
name = "steep average"
[supply]
voltage = "12 V"
[drive]
high_level = "3.3 V"
switch_off_at = "1 ms"
fall_time = "1.45423e-08 s"
rise_time = "5.20475e-08 s"
[coil]
resistance = "94.5417 ohm"
inductance = "0.0845367 H"
release_current = "0.0752979 A"
[switch]
topology = "high_side_pmos"
part = "pmos_logic_level_60v"
gate_resistor = "366.937 ohm"
pullup_resistor = "79697.8 ohm"
level_shifter_part = "npn_small_signal_40v"
level_shifter_base_resistor = "40898.7 ohm"
[clamp]
kind = "rc_across_switch"
snubber_resistance = "124.963 ohm"
snubber_capacitance = "3.65072e-08 F"
[analysis]
device_models = "piecewise_linear"
[hold]
pwm_frequency = "10364.7 Hz"
pull_in_time = "0.00420133 s"
average_current = "0.0652862 A"
)", "steep average", test_support::catalogue());
  const auto m = simulate_switch_off(sc.driver, test_support::catalogue()).metrics;
  CHECK(m.get("hold_average_current_A") == rel(0.0652862).epsilon(1e-4));
  CHECK(average_by_periods_one_by_one(sc.driver, m.get("hold_duty")) == rel(0.0652862).epsilon(1e-3));
}

namespace {
// A high-side P-MOSFET on a PWM hold (demo values: a greenhouse mist valve's coil, 30 Ω, 5 mH,
// at 20 kHz), its gate pulled down through an NPN level shifter and pulled up — turned off —
// through `pullup`. The pull-up sets how fast the switch turns off in every period.
DriverSpec mist_valve_on_pwm(const std::string& pullup, const std::string& hold_keys) {
  return coilkick::scenario::read_scenario_text(R"(
name = "mist valve on a PWM hold"
[supply]
voltage = "24 V"
[drive]
high_level = "3.3 V"
switch_off_at = "2 ms"
[coil]
resistance = "30 ohm"
inductance = "5 mH"
release_current = "10 mA"
[switch]
topology = "high_side_pmos"
part = "pmos_logic_level_60v"
gate_resistor = "100 ohm"
pullup_resistor = ")" + pullup + R"("
level_shifter_part = "npn_small_signal_40v"
level_shifter_base_resistor = "10 kohm"
[clamp]
kind = "diode"
diode_part = "rectifier_1a"
[hold]
pwm_frequency = "20 kHz"
pull_in_time = "1 ms"
)" + hold_keys, "mist valve", test_support::catalogue()).driver;
}

const RatingCheck& check_named(const SwitchOffResult& r, const std::string& name) {
  for (const auto& c : r.checks) {
    if (c.name == name) return c;
  }
  FAIL("no check named " << name);
  throw std::logic_error("unreachable");
}
}  // namespace

TEST_CASE("hold: a switch slower to turn off than the off-time fails hold_switch_follows, and its turn-off goes with the pull-up") {
  // The final switch-off starts where a steady on-time ends, so its switch_off_delay_s is the
  // switch's turn-off in every period; at the duty 0.5 of 20 kHz the off-time is 25 µs (the
  // check's limits: half of it to pass, all of it before failing). Charge control of a MOSFET's
  // gate: the gate's charge moved by the pull-up's current ΔV/R turns it off in t ≈ Q·R/ΔV, in
  // proportion to R (common practice; from memory): 47 kΩ → 470 kΩ multiplies the turn-off by
  // 10 within 10 % (what does not scale with R — the level shifter's own release, the plateau
  // moving with the current — is a few per cent of it; measured 10.3).
  const std::string duty = "pwm_duty = \"0.5\"\n";
  const auto fast = simulate_switch_off(mist_valve_on_pwm("4.7 kohm", duty), test_support::catalogue());
  const auto slow = simulate_switch_off(mist_valve_on_pwm("47 kohm", duty), test_support::catalogue());
  const auto slower = simulate_switch_off(mist_valve_on_pwm("470 kohm", duty), test_support::catalogue());
  const double off_time_s = 0.5 / 20e3;
  for (const auto* r : {&fast, &slow, &slower}) {
    const RatingCheck& c = check_named(*r, "hold_switch_follows");
    CHECK(c.value == r->metrics.get("switch_off_delay_s"));
    CHECK(c.limit == rel(0.5 * off_time_s).epsilon(1e-12));
    CHECK(c.fail_limit == rel(off_time_s).epsilon(1e-12));
  }
  CHECK(check_named(fast, "hold_switch_follows").status == CheckStatus::pass);
  CHECK(check_named(slow, "hold_switch_follows").status == CheckStatus::fail);
  CHECK(check_named(slower, "hold_switch_follows").status == CheckStatus::fail);
  CHECK(slower.metrics.get("switch_off_delay_s") / slow.metrics.get("switch_off_delay_s") == rel(10.0).epsilon(0.1));
  // Switched on again before it has turned off, the slow switch never blocks: the coil carries
  // nearly its full current, 24 V over 30 Ω (less the switch's drop), at a duty of 0.5.
  CHECK(slow.metrics.get("hold_average_current_A") > 0.95 * 24.0 / 30.0);
}

TEST_CASE("hold: a search that fails on a switch slower than the period says that the switch cannot follow it") {
  // The 470 kΩ pull-up turns the switch off in ~0.6 ms, twelve periods of 20 kHz: the average
  // jumps across one duty (the switch stays on from one period into the next above it) and the
  // search is refused — with the reason, read from a switch-off from the DC on-state.
  const DriverSpec s = mist_valve_on_pwm("470 kohm", "average_current = \"20 mA\"\n");
  try {
    (void)simulate_switch_off(s, test_support::catalogue());
    FAIL("the hold was not refused");
  } catch (const std::invalid_argument& e) {
    const std::string what = e.what();
    CHECK(what.find("the switch cannot follow that drive") != std::string::npos);
    CHECK(what.find("hold.pwm_frequency") != std::string::npos);
    CHECK(what.find("against a period of 50 us") != std::string::npos);
  }
  // A switch that follows gets no such words where its search fails: the same board with the
  // 4.7 kΩ pull-up asked for 0.999 of the full drive's V/R, beyond every duty (the test above).
  DriverSpec follows = mist_valve_on_pwm("4.7 kohm", "average_current = \"20 mA\"\n");
  follows.hold.average_current_A = 0.999 * 24.0 / 30.0;
  const std::string message = test_support::switch_off_error<std::invalid_argument>(follows);
  CAPTURE(message);
  CHECK(message.find("even the longest duty stays below") != std::string::npos);
  CHECK(message.find("cannot follow") == std::string::npos);
}

TEST_CASE("hold: shooting whose sensitivities misread a slow coil's multiplier is not taken as converged") {
  // A random driver of scripts/tolerance_campaign.py (--extras seed 2695, invented values): a pwl
  // high-side P-MOSFET with an RC across the switch holding a slow coil (L/R = 35 ms, 385
  // periods of 11 kHz: the coil's multiplier of one period e^(−T·R/L) = 0.9973). Across the pwl
  // pieces the replayed sensitivities read that multiplier as 1.65, so Newton's step from a warm
  // start one duty away was −r/0.65 instead of r/0.0027: a few error scales, taken as converged
  // 0.5 mA from the steady state; the duty search then held 240.09 mA for a 239.567 mA target
  // (2.2e-3) and the release time, which starts 2 % above the release current, came out 8 % long.
  // Now the largest multiplier is measured on its mode and a misread one put right before the
  // state is taken. The average within 1e-4 of the target (the search's own bar is 1e-5; the
  // periods one by one below are the reference), and that duty run period by period (no search,
  // no shooting) within the same.
  const auto sc = coilkick::scenario::read_scenario_text(R"(
name = "campaign driver 2695"
[supply]
voltage = "24 V"
[drive]
high_level = "5 V"
switch_off_at = "1 ms"
fall_time = "4.73457e-07 s"
rise_time = "1.31832e-08 s"
[coil]
resistance = "52.5934 ohm"
inductance = "1.84085 H"
release_current = "0.234407 A"
winding_capacitance = "4.8544e-10 F"
[switch]
topology = "high_side_pmos"
part = "pmos_logic_level_60v"
gate_resistor = "267.425 ohm"
pullup_resistor = "14524.2 ohm"
level_shifter_part = "npn_small_signal_40v"
level_shifter_base_resistor = "6105.09 ohm"
[clamp]
kind = "rc_across_switch"
snubber_resistance = "54.6045 ohm"
snubber_capacitance = "2.85389e-09 F"
[analysis]
device_models = "piecewise_linear"
[hold]
pwm_frequency = "10996.2 Hz"
pull_in_time = "0.15377 s"
average_current = "0.239567 A"
)", "seed 2695", test_support::catalogue());
  check_hold_at_its_target(sc.driver, 1e-4);
}
