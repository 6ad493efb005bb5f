// A coil at the far end of a cable (DriverSpec::cable): the line's impedance and delay from its
// per-metre values, the DC current and the decay through the loop resistance against closed
// forms, the energy account, the rule that replaces a section count (the run converges in its
// tolerances), and the design metrics' sensitivity to the cable's high-frequency loss.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <algorithm>
#include <cmath>

#include "coilkick/drivers/cable_loss.hpp"
#include "coilkick/drivers/faults.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/engine/transmission_line.hpp"
#include "driver_fixture.hpp"

using namespace coilkick::drivers;

TEST_CASE("a cable's line: impedance √(L′/C′) and delay length·√(L′·C′) from its per-metre values") {
  // The lossless line's travelling-wave solution of the telegrapher's equations (Pozar,
  // "Microwave Engineering", 4th ed., §2.1 — section number from memory): Z0 = √(L′/C′) and
  // phase velocity 1/√(L′·C′). Worked by hand for the defaults: √(0.55e-6/80e-12) = 82.92 Ω,
  // 60·√(0.55e-6·80e-12) = 397.99 ns.
  DriverSpec s = test_support::valve_case();
  s.cable.length_m = 60.0;
  CHECK(s.cable.characteristic_impedance_ohm() == rel(82.9156).epsilon(1e-5));
  CHECK(s.cable.delay_s() == rel(397.995e-9).epsilon(1e-5));
  const BuiltDriver b = build_driver_network(s, test_support::catalogue());
  const coilkick::engine::TransmissionLine* line = nullptr;
  for (const auto& e : b.network.elements()) {
    if (e->name() == "cable") line = dynamic_cast<const coilkick::engine::TransmissionLine*>(e.get());
  }
  REQUIRE(line != nullptr);
  CHECK(line->parameters().characteristic_impedance_ohm == s.cable.characteristic_impedance_ohm());
  CHECK(line->parameters().delay_s == s.cable.delay_s());
  CHECK(line->parameters().loop_resistance_ohm == rel(60.0 * 0.052));
  CHECK(b.coil_in_node == "coil_in");
  CHECK(b.coil_out_node == "coil_out");
}

TEST_CASE("through a cable the coil's on-current and its decay in the diode clamp take the loop resistance") {
  // On-state: Ohm's law around the loop, I = (V_s − V_switch)/(R_coil + R_loop). Decay with an
  // ideal diode of knee V_d: di/dt = −(R·i + V_d)/L, R = R_coil + R_loop, so the current reaches
  // i_rel after t = (L/R)·ln((I0 + V_d/R)/(i_rel + V_d/R)) (Nilsson & Riedel, "Electric
  // Circuits", 10th ed., ch. 7, the natural response of an RL circuit, with a constant source).
  // 200 m: 10.4 Ω of loop against the 400 Ω coil, a 2.5 % effect. 2 m: a line of 13 ns that rings
  // between the conducting diode and the coil, then is stepped in its quasi-static form over the
  // 3 ms decay (with physical models this driver took 689,457 steps at 2 m, and the demo valve ran
  // out of its step budget, before that form's first step spanned many of the line's own
  // resonance periods; README, "Speed").
  for (const double length_m : {200.0, 2.0}) {
    CAPTURE(length_m);
    DriverSpec s = test_support::relay_case(true);
    s.clamp.kind = ClampKind::diode;
    s.cable.length_m = length_m;
    const auto r = simulate_switch_off(s, test_support::catalogue());
    const double r_total = 400.0 + length_m * 0.052;
    const double i0 = r.metrics.get("coil_current_at_switch_off_A");
    // 1e-6: a DC solution to the operating point's tolerance.
    CHECK(i0 == rel((12.0 - r.metrics.get("switch_saturation_voltage_V")) / r_total).epsilon(1e-6));
    const double vd = 0.7, l = 0.6, i_rel = 3e-3;
    // The coil current first swings the cable's capacitance from V_s to −V_d; the decay starts on
    // average half that swing later (docs/derivations.md, "A cable by its travelling waves": 3.5 µs
    // at 200 m, 1.3e-3 of the release time).
    const double c_cable = length_m * 80e-12, swing = c_cable * (12.0 + vd) / i0;
    const double t_release = l / r_total * std::log((i0 + vd / r_total) / (i_rel + vd / r_total)) + 0.5 * swing;
    // 5e-4: the switch's turn-off (tens of ns), the line's own 110 µH against 0.6 H (2e-4, at
    // 200 m) and the swing's estimate (measured 1.3e-4 off).
    CHECK(r.metrics.get("release_time_s") == rel(t_release).epsilon(5e-4));
    // Without the cable the same closed form with R = R_coil alone: the cable shortens the release.
    DriverSpec board = s;
    board.cable.length_m = 0.0;
    const auto r0 = simulate_switch_off(board, test_support::catalogue());
    CHECK(r0.metrics.get("release_time_s") > r.metrics.get("release_time_s"));
    CHECK(r.metrics.get("cable_energy_J") > 0.0);
    CHECK(r0.metrics.get("cable_energy_J") == 0.0);
  }
}

TEST_CASE("through a cable the coil's terminals sit at their board terminals less each core's drop, in the run as at DC") {
  // Ohm's law along each core, half the loop resistance: coil_in = V_s − I·R/2, coil_out =
  // V_switch + I·R/2 — what a meter between the coil's terminal and the board's ground reads. Both
  // cores carry the far end's common mode (the line's common-mode path); without it the coil's
  // terminals floated on their strays, centred on ground.
  DriverSpec s = test_support::relay_case(true);
  s.clamp.kind = ClampKind::diode_zener;
  s.cable.length_m = 200.0;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  const auto& c = r.transient->circuit();
  const double* x0 = r.transient->states().row(0).data();
  const double i0 = r.metrics.get("coil_current_at_switch_off_A"), core_ohm = 0.5 * 200.0 * 0.052;
  const double v_switch = c.node_voltage_V("switch", 0.0, x0);
  // 1e-9: one DC solution, read in the same state.
  CHECK(c.node_voltage_V("coil_in", 0.0, x0) == rel(12.0 - i0 * core_ohm).epsilon(1e-9));
  CHECK(c.node_voltage_V("coil_out", 0.0, x0) == rel(v_switch + i0 * core_ohm).epsilon(1e-9));
  // Through the run the coil end's midpoint follows the board end's: at every recorded point
  // they differ only by the common-mode current (the far end's 1 pF strays per node charging)
  // times the cores' R/4 = 2.6 Ω — at the switch's edge of up to ~10 V/ns, 0.05 V (measured 0.02).
  double worst = 0.0;
  for (Eigen::Index k = 0; k < r.transient->states().rows(); ++k) {
    const double t = r.transient->times_s()[static_cast<std::size_t>(k)];
    const double* x = r.transient->states().row(k).data();
    const double near = 0.5 * (12.0 + c.node_voltage_V("switch", t, x));
    const double far = 0.5 * (c.node_voltage_V("coil_in", t, x) + c.node_voltage_V("coil_out", t, x));
    worst = std::max(worst, std::abs(far - near));
  }
  CHECK(worst < 0.05);
}

TEST_CASE("a cable of centimetres: the run ends, and the release time is the board's") {
  // A plain diode holds the valve's current for ~10 ms while the short line (a delay of
  // picoseconds) and the coil's winding capacitance ring at tens of MHz; the line then takes its
  // quasi-static form. That form once read the delay as a lead longer than its lag, which grows an
  // oscillation between the clamp and the coil (docs/derivations.md, "A cable by its travelling
  // waves", "Steps"): the run used up its time budget at 0.1 m. 10 cm of cable add 5.2 mΩ to a
  // 48 Ω loop (1.1e-4: the decay's L/R, and so the release, shorter by about that) and 8 pF to
  // the board (a swing of ~1e-7 of the release time): the release time is the board's, shorter,
  // within 3e-4 (measured 1.5e-4 at 0.1 m, 0.7e-4 at 5 cm).
  DriverSpec s = test_support::valve_case();
  s.coil.winding_capacitance_F = 80e-12;
  s.coil.core_loss_resistance_ohm = 8000.0;
  s.supply.source_resistance_ohm = 0.2;
  s.supply.bulk_capacitance_F = 220e-6;
  s.supply.bulk_capacitor_esr_ohm = 0.15;
  s.analysis.maximum_wall_time_s = 10.0;
  const auto board = simulate_switch_off(s, test_support::catalogue());
  for (const double length_m : {0.05, 0.1}) {
    CAPTURE(length_m);
    s.cable.length_m = length_m;
    const auto r = simulate_switch_off(s, test_support::catalogue());
    CHECK(r.metrics.get("release_time_s") < board.metrics.get("release_time_s"));
    CHECK(r.metrics.get("release_time_s") == rel(board.metrics.get("release_time_s")).epsilon(3e-4));
    CHECK(std::abs(r.metrics.get("energy_balance_error")) < 1e-4);  // as in the test below
  }
}

TEST_CASE("with a cable the energy account still closes, for every clamp kind") {
  // Tellegen's theorem (Desoer & Kuh, "Basic Circuit Theory", ch. 9): what the supply delivered
  // and the fields held at switch-off equals every part's heat plus what is still stored — here
  // with the line's waves in transit and its loss. 1e-4 against runs that reach ~1e-8.
  for (const auto kind : {ClampKind::diode, ClampKind::diode_zener, ClampKind::tvs_across_switch, ClampKind::none}) {
    DriverSpec s = test_support::valve_case();
    s.clamp.kind = kind;
    s.cable.length_m = 60.0;
    s.supply.source_resistance_ohm = 0.2;
    s.supply.bulk_capacitance_F = 220e-6;
    CAPTURE(to_string(kind));
    const auto r = simulate_switch_off(s, test_support::catalogue());
    CHECK(std::abs(r.metrics.get("energy_balance_error")) < 1e-4);
  }
}

TEST_CASE("without a cable the coil's own peak is the switch's peak less the rail") {
  // Kirchhoff's voltage law on the board: the coil sits between the rail and the switch node.
  DriverSpec s = test_support::relay_case(true);
  s.clamp.kind = ClampKind::diode_zener;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  // 1e-9: the two maxima are located on the same dense output, the rail is ideal.
  CHECK(r.metrics.get("coil_end_peak_V") == rel(r.metrics.get("switch_voltage_peak_V") - 12.0).epsilon(1e-9));
}

TEST_CASE("a cable's front doubles at the coil: the coil end overshoots the clamp") {
  // A switch edge far shorter than the cable's round trip meets the coil as an open end (its
  // inductance passes no current in nanoseconds), where the arriving wave doubles (Pozar, §2.3,
  // Γ = 1 at an open end). The clamp holds the board's terminals, not the coil's: the coil end
  // rises above the board's coil voltage (the switch peak less the rail).
  DriverSpec s = test_support::valve_case();
  s.clamp.kind = ClampKind::diode_zener;
  s.cable.length_m = 60.0;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  const double board_coil_peak = r.metrics.get("switch_voltage_peak_V") - 24.0;
  CHECK(r.metrics.get("coil_end_peak_V") > 1.5 * board_coil_peak);
  // Bounded by the doubled step: on-state coil voltage plus the clamp's, twice over.
  CHECK(r.metrics.get("coil_end_peak_V") < 2.0 * (board_coil_peak + 24.0));
}

TEST_CASE("a cable run converges: ten times tighter tolerances move the switch peak, release time and coil-end peak < 0.1 %") {
  // The rule that replaces a section count (docs/derivations.md, "A cable by its travelling
  // waves"): the line is exact for its model, so what is left to converge is the integration.
  // 1e-3: the bound for a section count's doubling; measured 2e-7 and below.
  DriverSpec s = test_support::valve_case();
  s.clamp.kind = ClampKind::diode_zener;
  s.cable.length_m = 60.0;
  const auto a = simulate_switch_off(s, test_support::catalogue());
  s.analysis.relative_tolerance *= 0.1;
  s.analysis.voltage_tolerance_V *= 0.1;
  s.analysis.current_tolerance_A *= 0.1;
  const auto b = simulate_switch_off(s, test_support::catalogue());
  for (const std::string m : {"switch_voltage_peak_V", "release_time_s", "coil_end_peak_V"}) {
    CAPTURE(m);
    CHECK(b.metrics.get(m) == rel(a.metrics.get(m)).epsilon(1e-3));
  }
}

TEST_CASE("the cable's high-frequency loss: halving it moves the release time < 0.1 %, the switch peak and the coil end's < 1 %") {
  // The loss is physics (skin effect and insulation, drivers/cable_loss.hpp), not a numerical
  // stand-in, and these are the design metrics' sensitivities to it, measured at 60 m: the release
  // time is set by the coil's energy and the clamp (< 1e-6); the switch's peak includes the
  // coil end's overshoot coming back, which the loss shapes (0.14 %); the coil end's peak is the
  // front's overshoot at a nearly open end (Γ ≈ 1), set by the front's shape (0.24 %). Bounds:
  // a few times those.
  DriverSpec s = test_support::valve_case();
  s.clamp.kind = ClampKind::diode_zener;
  s.cable.length_m = 60.0;
  const auto a = simulate_switch_off(s, test_support::catalogue());
  s.cable.high_frequency_loss_fraction = 0.5 * high_frequency_loss_fraction(s.cable);  // half the derived default
  const auto b = simulate_switch_off(s, test_support::catalogue());
  CHECK(b.metrics.get("release_time_s") == rel(a.metrics.get("release_time_s")).epsilon(1e-3));
  CHECK(b.metrics.get("switch_voltage_peak_V") == rel(a.metrics.get("switch_voltage_peak_V")).epsilon(1e-2));
  CHECK(b.metrics.get("coil_end_peak_V") == rel(a.metrics.get("coil_end_peak_V")).epsilon(1e-2));
}

TEST_CASE("faults with a cable: the coil end reads the board's potentials less the cores' drops, and a broken or shorted cable is found") {
  // Ohm's law along each core (half the loop resistance) for a meter at the coil; a core broken at
  // the coil, or the cores shorted there, leave the coil without current (IEC 61810-1's "operate"
  // never happens: the relay never operates).
  DriverSpec s = test_support::relay_case(true);
  s.clamp.kind = ClampKind::diode;
  s.cable.length_m = 200.0;
  const FaultReport rep = analyse_faults(s, test_support::catalogue());
  const double core_ohm = 0.5 * 200.0 * 0.052, i = rep.healthy.coil_current_on_A;
  auto reading = [](const FaultCase& f, const std::string& node) {
    for (const auto& r : f.readings) {
      if (r.node == node) return r;
    }
    FAIL("no reading of node " << node);
    return NodeReading{};
  };
  const double v_switch = reading(rep.healthy, "switch").on_V;
  // 1e-6: DC solutions to the operating point's tolerance.
  CHECK(reading(rep.healthy, "coil_in").on_V == rel(12.0 - i * core_ohm).epsilon(1e-6));
  CHECK(reading(rep.healthy, "coil_out").on_V == rel(v_switch + i * core_ohm).epsilon(1e-6));
  int found = 0;
  for (const auto& f : rep.faults) {
    if (f.part != "cable") continue;
    ++found;
    CAPTURE(f.label());
    CHECK(std::abs(f.coil_current_on_A) < 1e-3 * i);
    CHECK(std::find(f.symptoms.begin(), f.symptoms.end(), "relay never operates") != f.symptoms.end());
  }
  CHECK(found == 2);
}
