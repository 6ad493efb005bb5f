// Fault signatures of a simple low-side NPN driver against hand calculation (nodal analysis:
// Kirchhoff's current law at each node with the pwl segments as straight lines — Nilsson &
// Riedel, "Electric Circuits", 10th ed., ch. 4, node-voltage method, chapter from memory).
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>

#include "coilkick/drivers/faults.hpp"
#include "coilkick/scenario/scenario.hpp"
#include "campaign_boards.hpp"
#include "driver_fixture.hpp"

using namespace coilkick;
using namespace coilkick::drivers;

namespace {
// pwl parts with explicit segments so that every reading can be worked by hand.
DriverSpec hand_case() {
  DriverSpec s = test_support::relay_case(true);
  s.clamp.kind = ClampKind::diode;
  s.clamp.diode_overrides = {{"knee_voltage", 0.7}, {"on_resistance", 0.1}};
  s.switch_.overrides = {{"base_emitter_knee_voltage", 0.65}, {"base_emitter_on_resistance", 10.0},
                         {"saturation_knee_voltage", 0.05}, {"saturation_resistance", 2.0}, {"forward_beta", 200.0}};
  return s;
}
const FaultCase& find(const FaultReport& r, const std::string& part, const std::string& fault) {
  for (const auto& f : r.faults) {
    if (f.part == part && f.fault == fault) return f;
  }
  FAIL("no fault " << part << " " << fault);
  return r.faults.front();
}
double on(const FaultCase& f, const std::string& node) {
  for (const auto& r : f.readings) {
    if (r.node == node) return r.on_V;
  }
  return std::nan("");
}
double off(const FaultCase& f, const std::string& node) {
  for (const auto& r : f.readings) {
    if (r.node == node) return r.off_V;
  }
  return std::nan("");
}
bool has(const FaultCase& f, const std::string& symptom) {
  for (const auto& s : f.symptoms) {
    if (s == symptom) return true;
  }
  return false;
}
// Hand values (V_logic 5 V, R_out 50 ohm, R_b 1 kohm, knee 0.65 V + 10 ohm, β 200; coil 400 ohm,
// 12 V; saturation line 0.05 V + 2 ohm).
const double kIb = (5.0 - 0.65) / (50.0 + 1000.0 + 10.0);
const double kIcoil = (12.0 - 0.05) / (400.0 + 2.0);
}  // namespace

TEST_CASE("fault readings of a low-side NPN driver against hand calculation") {
  const auto rep = analyse_faults(hand_case(), test_support::catalogue());
  // Tolerances 1e-6 relative (or 1e-6 V): the 1e-12 S minimum conductances and the 1 Tohm "open"
  // shift the hand values by less than 1e-9.
  const auto& h = rep.healthy;
  CHECK(h.coil_current_on_A == rel(kIcoil).epsilon(1e-6));
  CHECK(on(h, "switch") == rel(0.05 + 2.0 * kIcoil).epsilon(1e-6));
  CHECK(on(h, "base") == rel(0.65 + 10.0 * kIb).epsilon(1e-6));
  CHECK(on(h, "logic_out") == rel(5.0 - 50.0 * kIb).epsilon(1e-6));
  CHECK(off(h, "switch") == rel(12.0).epsilon(1e-6));
  CHECK(std::abs(h.coil_current_off_A) < 1e-9);

  // Base resistor open: no base current, the switch stays off, the coil never operates. (The
  // 1 Tohm "open" still feeds 4 pA into the base, which the pwl junction takes at its knee.)
  const auto& rb = find(rep, "base_resistor", "open");
  CHECK(on(rb, "base") == rel(0.65).epsilon(1e-6));
  CHECK(on(rb, "logic_out") == rel(5.0).epsilon(1e-6));
  CHECK(on(rb, "switch") == rel(12.0).epsilon(1e-6));
  CHECK(has(rb, "relay never operates"));

  // Clamp diode shorted (10 mohm across the coil): the transistor leaves saturation and carries
  // β·I_B·(1 + V_sw/V_A) (Early effect, V_A = 80 V of npn_small_signal_40v) from the supply
  // through the short: V_sw = 12 − I_C/G with G = 1/0.01 + 1/400, solved for V_sw.
  const auto& ds = find(rep, "clamp_diode", "shorted");
  const double g_short = 1.0 / 0.01 + 1.0 / 400.0, beta_ib = 200.0 * kIb, va = 80.0;
  const double v_ds = (12.0 - beta_ib / g_short) / (1.0 + beta_ib / (g_short * va));
  const double ic = beta_ib * (1.0 + v_ds / va);
  CHECK(on(ds, "switch") == rel(v_ds).epsilon(1e-6));
  CHECK(ds.coil_current_on_A == rel((12.0 - on(ds, "switch")) / 400.0).epsilon(1e-6));
  CHECK(ds.supply_current_on_A == rel(ic).epsilon(1e-3));  // supply carries I_C
  CHECK(has(ds, "relay never operates"));
  CHECK(has(ds, "driver part overheats"));  // ~10 W in a 0.5 W transistor

  // Collector–emitter shorted: the coil stays energised with the drive off.
  const auto& ce = find(rep, "switch", "collector-emitter shorted");
  CHECK(ce.coil_current_off_A == rel(12.0 / (400.0 + 0.01)).epsilon(1e-6));
  CHECK(off(ce, "switch") == rel(0.01 * 12.0 / 400.01).epsilon(1e-4));
  CHECK(has(ce, "relay never releases"));

  // Base open: the external base node sits at the logic level, nothing flows.
  const auto& bo = find(rep, "switch", "base open");
  CHECK(on(bo, "base") == rel(5.0).epsilon(1e-6));
  CHECK(on(bo, "switch") == rel(12.0).epsilon(1e-6));
  CHECK(has(bo, "relay never operates"));

  // Collector–base junction leaky (100 kohm), drive off: the leak through coil, 100 kohm and
  // R_b + R_out to the low logic output: I = 12/(400 + 100k + 1050); V_b = 1050·I stays below the
  // 0.65 V knee, so the transistor stays off.
  const auto& lk = find(rep, "switch", "collector-base junction leaky");
  const double il = 12.0 / (400.0 + 100e3 + 1050.0);
  CHECK(lk.coil_current_off_A == rel(il).epsilon(1e-6));
  CHECK(off(lk, "base") == rel(1050.0 * il).epsilon(1e-6));
  CHECK(off(lk, "switch") == rel(12.0 - 400.0 * il).epsilon(1e-6));

  // Coil open: no current; the saturated transistor holds the node at its knee.
  const auto& co = find(rep, "coil", "open");
  CHECK(std::abs(co.coil_current_on_A) < 1e-9);
  CHECK(on(co, "switch") == rel(0.05).epsilon(1e-3));
  CHECK(has(co, "relay never operates"));

  // 30 % of the turns shorted: R falls to 280 ohm, more current, a hotter coil.
  const auto& st = find(rep, "coil", "30 % of turns shorted");
  CHECK(st.coil_current_on_A == rel((12.0 - 0.05) / (280.0 + 2.0)).epsilon(1e-6));
  CHECK(has(st, "driver part overheats"));

  // Supply at 75 %: 9 V.
  const auto& lo = find(rep, "supply", "low (75 %)");
  CHECK(lo.coil_current_on_A == rel((9.0 - 0.05) / 402.0).epsilon(1e-6));
  CHECK(on(lo, "supply") == rel(9.0));

  // Clamp diode open: every switch-off drives the transistor into breakdown.
  const auto& dopen = find(rep, "clamp_diode", "open");
  CHECK(has(dopen, "driver part overheats"));
  // The part's 60 V breakdown line with its 20 ohm dynamic resistance at 30 mA: about 60.6 V
  // (2 % allows the knee's curvature).
  CHECK(dopen.switch_off.get("switch_voltage_peak_V") == rel(60.0 + 20.0 * kIcoil).epsilon(2e-2));
}

TEST_CASE("healthy fault readings equal the on-state check of the switch-off run") {
  const DriverSpec s = hand_case();
  const auto rep = analyse_faults(s, test_support::catalogue());
  const auto r = simulate_switch_off(s, test_support::catalogue());
  CHECK(rep.healthy.coil_current_on_A == rel(r.metrics.get("coil_current_at_switch_off_A")).epsilon(1e-9));
  CHECK(on(rep.healthy, "switch") == rel(r.metrics.get("switch_saturation_voltage_V")).epsilon(1e-9));
  CHECK(rep.healthy.switch_off.get("release_time_s") == rel(r.metrics.get("release_time_s")).epsilon(1e-12));
}

TEST_CASE("every fault of every catalogue topology runs without solver failure") {
  struct Topo {
    Topology t;
    const char* part;
  };
  for (const auto level : {devices::ModelLevel::pwl, devices::ModelLevel::physical}) {
    for (const Topo& tp : {Topo{Topology::low_side_npn, "npn_small_signal_40v"}, Topo{Topology::low_side_nmos, "nmos_logic_level_60v"},
                           Topo{Topology::low_side_darlington, "darlington_npn_100v"}, Topo{Topology::high_side_pnp, "pnp_small_signal_40v"},
                           Topo{Topology::high_side_pmos, "pmos_logic_level_60v"}}) {
      DriverSpec s = test_support::relay_case(false);
      s.analysis.model_level = level;
      s.switch_.topology = tp.t;
      s.switch_.part = tp.part;
      s.clamp.kind = ClampKind::diode_zener;
      CAPTURE(to_string(tp.t));
      CAPTURE(devices::to_string(level));
      const auto rep = analyse_faults(s, test_support::catalogue());
      CHECK(rep.faults.size() >= 10);
      for (const auto& f : rep.faults) {
        CAPTURE(f.label());
        CAPTURE(f.error);
        CHECK(f.error.empty());
        CHECK_FALSE(f.symptoms.empty());
      }
    }
  }
}

TEST_CASE("every fault of both bundled scenarios has a reading with the armature model (a shorted switch or level shifter keeps the relay operated)") {
  for (const char* file : {"fan_relay.toml", "greenhouse_valve.toml"}) {
    CAPTURE(file);
    const auto sc = coilkick::scenario::read_scenario_file(coilkick::catalogue::default_models_directory() + "/scenarios/" + file,
                                                           test_support::catalogue());
    REQUIRE(sc.driver.relay.armature_model);
    const auto rep = analyse_faults(sc.driver, test_support::catalogue());
    for (const auto& f : rep.faults) {
      CAPTURE(f.label());
      CAPTURE(f.error);
      CHECK(f.error.empty());
      if (f.fault == "collector-emitter shorted") {
        // The coil stays energised with the drive off (common practice: a shorted driver holds the relay).
        CHECK(has(f, "relay never releases"));
        CHECK(f.coil_current_off_A == rel(f.coil_current_on_A).epsilon(0.02));
      }
    }
  }
}

TEST_CASE("faults of the supply parts and of extra parts: a shorted bulk capacitor takes the rail down") {
  DriverSpec s = test_support::relay_case(false);
  s.clamp.kind = ClampKind::diode;
  s.supply.source_resistance_ohm = 1.0;
  s.supply.bulk_capacitance_F = 100e-6;
  s.supply.reverse_polarity_diode_part = "rectifier_1a";
  ExtraPart r;
  r.name = "base_pulldown";
  r.element = ExtraElement::resistor;
  r.nodes = {"base", "ground"};
  r.value = 10e3;
  s.extra_parts = {r};
  const auto rep = analyse_faults(s, test_support::catalogue());
  bool bulk_short = false, bulk_open = false, diode_open = false, pulldown_open = false;
  for (const auto& f : rep.faults) {
    CAPTURE(f.label());
    CHECK(f.error.empty());
    if (f.part == "bulk_capacitor" && f.fault == "shorted") {
      bulk_short = true;
      // Nodal analysis: 0.01 ohm across the rail behind 1 ohm leaves it at ~0.1 V (12 V·0.01/1.01
      // less a diode that barely conducts): no coil current.
      CHECK(on(f, "supply") < 0.2);
      CHECK(has(f, "relay never operates"));
    }
    bulk_open = bulk_open || (f.part == "bulk_capacitor" && f.fault == "open");
    diode_open = diode_open || (f.part == "reverse_polarity_diode" && f.fault == "open");
    pulldown_open = pulldown_open || (f.part == "base_pulldown" && f.fault == "open");
  }
  CHECK(bulk_short);
  CHECK(bulk_open);
  CHECK(diode_open);
  CHECK(pulldown_open);
}

TEST_CASE("faults: a board whose supply wiring is cut reads a dead rail, not a failed simulation") {
  // A 5 V rail through 0.3 Ω and a bulk capacitor, a TVS across the NPN switch (invented values;
  // the random drivers of scripts/tolerance_campaign.py, --wiring seed 2). With the source
  // resistance open the board's nodes hang on picoamperes of junction leakage; the DC Newton had
  // crawled through its 200 iterations there (a node's 1e-17 A that no step removes, weighed
  // against a row scale of a picoampere per volt) and the fault was listed as "could not be
  // simulated". A dead board's rail reads about 0 V (common practice: an unpowered board), and
  // the coil carries no more than the open wiring's leakage.
  const auto sc = coilkick::scenario::read_scenario_text(R"(
name = "dead rail"
[supply]
voltage = "5 V"
source_resistance = "0.3 ohm"
bulk_capacitance = "270 uF"
bulk_capacitor_esr = "0.16 ohm"
[drive]
high_level = "5 V"
switch_off_at = "0.25 s"
[coil]
resistance = "16.2 ohm"
inductance = "0.8 H"
release_current = "0.136 A"
[switch]
topology = "low_side_npn"
part = "npn_medium_power_80v"
base_resistor = "688 ohm"
[clamp]
kind = "tvs_across_switch"
tvs_part = "tvs_400w_33v"
)", "dead rail", test_support::catalogue());
  const auto rep = analyse_faults(sc.driver, test_support::catalogue());
  const FaultCase& f = find(rep, "supply_resistance", "open");
  CAPTURE(f.error);
  REQUIRE(f.error.empty());
  CHECK(std::abs(on(f, "supply")) < 0.05);
  CHECK(std::abs(off(f, "supply")) < 0.05);
  CHECK(std::abs(f.coil_current_on_A) < 1e-9);
  CHECK(has(f, "relay never operates"));
}

TEST_CASE("faults: an open gate of a high-side P-MOSFET relay drifts to its source, and the relay never operates") {
  // A 24 V high-side P-MOSFET relay with its armature model and an RC snubber across the switch,
  // pwl devices (invented values; the random drivers' fault campaign, scripts/fault_campaign.py,
  // seed 81 and four more). With the gate open its node floated between picosiemens of the device
  // and of the solver, anywhere within the current tolerance (24 V in one solve, 12 V — the switch
  // half on — in the next), and with the armature the DC point was not found: "could not be
  // simulated". A floating gate discharges to its source through its own leakage and the switch
  // stays off (common practice; the leakage modelled as 1 GΩ, typical of the class, from memory):
  // the gate reads the supply, the switch node and the coil carry nothing but leakage (nodal
  // analysis: 24 V over the snubber's and coil's picoamperes), and the relay never operates.
  const auto sc = coilkick::scenario::read_scenario_text(R"(
name = "open gate"
[supply]
voltage = "24 V"
[drive]
high_level = "5 V"
switch_off_at = "1 ms"
fall_time = "3 ns"
rise_time = "22 ns"
[coil]
resistance = "68.8 ohm"
inductance = "70.5 mH"
release_voltage = "4.17 V"
operate_voltage = "14.3 V"
[switch]
topology = "high_side_pmos"
part = "pmos_logic_level_60v"
gate_resistor = "4.22 kohm"
pullup_resistor = "13.1 kohm"
level_shifter_part = "npn_small_signal_40v"
level_shifter_base_resistor = "2 kohm"
[clamp]
kind = "rc_across_switch"
snubber_resistance = "20.2 ohm"
snubber_capacitance = "1.68 nF"
[analysis]
device_models = "piecewise_linear"
[relay]
armature_model = true
nominal_voltage = "24 V"
operate_time = "2.96 ms"
release_time = "1.13 ms"
)", "open gate", test_support::catalogue());
  const auto rep = analyse_faults(sc.driver, test_support::catalogue());
  const FaultCase& f = find(rep, "switch", "gate open");
  CAPTURE(f.error);
  REQUIRE(f.error.empty());
  CHECK(on(f, "switch.control_open") == doctest::Approx(24.0).epsilon(1e-6));
  CHECK(std::abs(on(f, "switch")) < 1e-3);
  CHECK(std::abs(f.coil_current_on_A) < 1e-9);
  CHECK(has(f, "relay never operates"));
}

TEST_CASE("faults: a pwl Darlington board with a cable and two channels reads every fault (the DC Newton across a pwl corner)") {
  // Two pwl Darlington channels at the end of 64.5 m of cable, a TVS across each switch, a 12 V
  // rail through a reverse-polarity diode with its bulk capacitor (invented values; the random
  // drivers' fault campaign, scripts/fault_campaign.py, seed 192). With the bulk capacitor open
  // or 30 % of either coil's turns shorted the DC Newton stopped on a corner of the pwl
  // Darlington's curves: the slopes of the corner's one side gave a step along which the
  // residual did not fall, the line search halved it to nothing for 200 iterations, and the
  // three faults were listed as "could not be simulated".
  const auto sc = coilkick::scenario::read_scenario_text(R"(
name = "two channels at the end of a cable"
[supply]
voltage = "12 V"
source_resistance = "0.0230931 ohm"
bulk_capacitance = "4.72449e-05 F"
bulk_capacitor_esr = "0.00512244 ohm"
source_inductance = "4.85669e-06 H"
reverse_polarity_diode_part = "small_signal_diode"
[drive]
high_level = "5 V"
switch_off_at = "1 ms"
fall_time = "1.8996e-08 s"
rise_time = "1.10929e-07 s"
[coil]
resistance = "16.4336 ohm"
inductance = "0.0116828 H"
release_current = "0.208641 A"
[switch]
topology = "low_side_darlington"
part = "darlington_npn_100v"
base_resistor = "3490.29 ohm"
[clamp]
kind = "tvs_across_switch"
tvs_part = "tvs_400w_24v"
[analysis]
device_models = "piecewise_linear"
[cable]
length = "64.5024 m"
[[channel]]
name = "ch2"
drive.switch_off_at = "0.001 s"
)", "two channels", test_support::catalogue());
  const auto rep = analyse_faults(sc.driver, test_support::catalogue());
  for (const auto& f : rep.faults) {
    CAPTURE(f.label());
    CAPTURE(f.error);
    CHECK(f.error.empty());
  }
  // An open capacitor changes no DC point (a capacitor carries no direct current: Nilsson &
  // Riedel, "Electric Circuits", 10th ed., ch. 6, from memory): every reading as on the healthy
  // board. Within 1 µV: the off-state's nodes hang on picoamperes of leakage, where the two
  // solves end 1e-8 V apart (measured) on the Newton's 1 nV tolerance and minimum conductances.
  const FaultCase& bulk = find(rep, "bulk_capacitor", "open");
  REQUIRE(bulk.error.empty());
  for (const auto& r : rep.healthy.readings) {
    CAPTURE(r.node);
    CHECK(std::abs(on(bulk, r.node) - r.on_V) < 1e-6);
    CHECK(std::abs(off(bulk, r.node) - r.off_V) < 1e-6);
  }
  // Shorted turns: the coil's 70 % resistance carries the coil current, Ohm's law across its
  // two ends (the cable's cores outside it), to the Newton's tolerance.
  for (const char* coil : {"coil", "ch2.coil"}) {
    CAPTURE(coil);
    const FaultCase& f = find(rep, coil, "30 % of turns shorted");
    REQUIRE(f.error.empty());
    const std::string prefix = std::string(coil) == "coil" ? "" : "ch2.";
    const double across = on(f, prefix + "coil_in") - on(f, prefix + "coil_out");
    CHECK(f.coil_current_on_A == rel(across / (0.7 * 16.4336)).epsilon(1e-6));
    CHECK(f.coil_current_on_A > 1.2 * rep.healthy_for(f.channel).coil_current_on_A);
  }
}

TEST_CASE("faults of a board switched off late in the run: every fault reads, the healthy board's metrics those of its switch-off") {
  // The four-channel pwl board switched off 0.587 s into the run (campaign_boards.hpp): its
  // healthy switch-off had failed there (steps at 64 ulps of t), and with it the whole fault
  // analysis ("healthy driver: simulation failed"). Faults now run on the run's own time axis
  // (drivers/run_time_origin.hpp), as the switch-off does: every fault reads, and the healthy
  // board's switch-off metrics are those of simulate_switch_off (the same runs: to 1e-12).
  const auto spec = test_support::sliding_corners_board();
  const auto rep = analyse_faults(spec, test_support::catalogue());
  for (const auto& f : rep.faults) {
    CAPTURE(f.label());
    CAPTURE(f.error);
    CHECK(f.error.empty());
  }
  const auto r = simulate_switch_off(spec, test_support::catalogue());
  for (const char* m : {"switch_voltage_peak_V", "release_time_s", "clamp_energy_J"}) {
    CAPTURE(m);
    CHECK(rep.healthy.switch_off.get(m) == rel(r.metrics.get(m)).epsilon(1e-12));
  }
}
