// A board of several channels (DriverSpec::channels) in one circuit: channels on an ideal rail
// with clamps of their own do not see one another; coils sharing the common clamp pin follow the
// closed forms of a coil into a constant-voltage clamp (Nilsson & Riedel, "Electric Circuits",
// 10th ed., ch. 7, from memory; docs/derivations.md, "Coil into a constant-voltage clamp" and
// "Coils sharing one clamp pin"), and the pin's Zener takes V_Z times every coil's charge.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <Eigen/Dense>
#include <cmath>

#include "../reference/closed_forms.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "driver_fixture.hpp"

using namespace coilkick::drivers;
using test_support::clamp_charge_C;
using test_support::threshold_time_s;

namespace {

ChannelSpec channel_like(const DriverSpec& first, const std::string& name) {
  ChannelSpec c;
  c.name = name;
  c.drive = first.drive;
  c.switch_ = first.switch_;
  c.coil = first.coil;
  c.clamp = first.clamp;
  return c;
}

// The ideal-part relay case (12 V, 400 Ω, 0.6 H, release at 3 mA) with two more channels: "b" a
// smaller coil (200 Ω, 0.3 H: twice the current), "c" the same coil as the first, switched off
// 0.3 ms later.
DriverSpec three_channels(ClampKind kind) {
  DriverSpec s = test_support::relay_case(true);
  s.clamp.kind = kind;
  ChannelSpec b = channel_like(s, "b");
  b.coil.resistance_at_20C_ohm = 200.0;
  b.coil.inductance_H = 0.3;
  ChannelSpec c = channel_like(s, "c");
  c.drive.switch_off_at_s = s.drive.switch_off_at_s + 3e-4;
  s.channels = {b, c};
  return s;
}

const ChannelResult& channel(const SwitchOffResult& r, const std::string& name) {
  for (const auto& ch : r.channels) {
    if (ch.name == name) return ch;
  }
  FAIL("no channel " << name);
  return r.channels.front();
}

}  // namespace

TEST_CASE("channels on an ideal rail with clamps of their own: each reads as its driver alone") {
  // Nothing but the ideal rail joins them, so each channel's switch-off is that of its own
  // driver (channel_driver_spec) run alone. Events (peak, release) to 1e-5: both runs at relative
  // tolerance 1e-8 but on different step sequences. Energies to 3e-4: the board's run lasts until
  // the last channel has decayed, the lone run stops when 1e-4 of its own ½·L·I0² is left.
  const DriverSpec board = three_channels(ClampKind::diode_zener);
  const auto r = simulate_switch_off(board, test_support::catalogue());
  REQUIRE(r.channels.size() == 3);
  CHECK(r.channels[0].name.empty());
  for (std::size_t k = 0; k < 3; ++k) {
    CAPTURE(k);
    const auto alone = simulate_switch_off(channel_driver_spec(board, k), test_support::catalogue());
    const auto& m = r.channels[k].metrics;
    for (const char* name : {"coil_current_at_switch_off_A", "switch_voltage_peak_V", "release_time_s", "current_decay_time_10pct_s"}) {
      CAPTURE(name);
      CHECK(m.get(name) == rel(alone.metrics.get(name)).epsilon(1e-5));
    }
    CHECK(m.get("clamp_energy_J") == rel(alone.metrics.get("clamp_energy_J")).epsilon(3e-4));
  }
  // The result's own metrics are the first channel's; its checks every channel's, named.
  CHECK(r.metrics.get("release_time_s") == r.channels[0].metrics.get("release_time_s"));
  bool named = false;
  for (const auto& c : r.checks) named = named || c.name == "c: switch_voltage";
  CHECK(named);
  CHECK(std::isnan(r.metrics.get("common_clamp_energy_J")));
}

TEST_CASE("coils sharing a flat clamp pin: each decays as into its own V_c, the pin's Zener takes V_Z·ΣQ") {
  // The flat Zener (1 mΩ) holds V_Z whatever the coils send it, so every channel sees the
  // constant clamp V_c = V_F + V_Z = 15.7 V of its own diode and the shared Zener: release and
  // charge of the closed forms, peak V_s + V_c. The channel's own clamp energy is its diode's,
  // V_F·Q; the Zener's is V_Z·(Q_first + Q_b + Q_c). Its peak current is the two coils that switch
  // off together (the third, 0.3 ms later, meets the others decayed: 29.7 + 17.2 + 34.5 mA
  // against 89 mA, worked by hand). Tolerances as in test_clamp_closed_forms.cpp: 1e-3 for
  // times and voltages (the pwl switch's turn-off, the 1 mΩ segments), 2e-3 for energies.
  const double vs = 12.0, vf = 0.7, vz = 15.0, ith = 3e-3;
  const DriverSpec board = three_channels(ClampKind::common_pin);
  DriverSpec flat = board;
  flat.common_clamp.zener_part = "zener_500mw_15v";
  flat.common_clamp.zener_overrides = board.clamp.zener_overrides;  // the fixture's flat breakdown
  const auto r = simulate_switch_off(flat, test_support::catalogue());
  REQUIRE(r.channels.size() == 3);
  double q_total = 0.0;
  for (const auto& [name, rc, lc] : {std::tuple{"", 400.0, 0.6}, std::tuple{"b", 200.0, 0.3}, std::tuple{"c", 400.0, 0.6}}) {
    CAPTURE(name);
    const auto& m = channel(r, name).metrics;
    const double i0 = m.get("coil_current_at_switch_off_A");
    const double vc = vf + vz;
    CHECK(m.get("release_time_s") == rel(threshold_time_s(lc / rc, i0, ith, vc / rc)).epsilon(1e-3));
    CHECK(m.get("switch_voltage_peak_V") == rel(vs + vc).epsilon(1e-3));
    const double q = clamp_charge_C(lc / rc, i0, vc / rc);
    CHECK(m.get("clamp_energy_J") == rel(vf * q).epsilon(2e-3));
    q_total += q;
  }
  CHECK(r.metrics.get("common_clamp_energy_J") == rel(vz * q_total).epsilon(2e-3));
  const double i_first = r.channels[0].metrics.get("coil_current_at_switch_off_A");
  const double i_b = channel(r, "b").metrics.get("coil_current_at_switch_off_A");
  CHECK(r.metrics.get("common_clamp_current_peak_A") == rel(i_first + i_b).epsilon(1e-3));
  CHECK(r.metrics.get("energy_balance_error") < 1e-6);
}

TEST_CASE("three coils on a clamp pin whose Zener has a dynamic resistance decay through R + 3·r_z") {
  // A Zener line V_Z0 + r_z·I shared by N coils that switch off together adds N·r_z to each
  // coil's loop (docs/derivations.md, "Coils sharing one clamp pin"): the peak is V_s + V_0 +
  // (r_d + N·r_z)·I0 and the release the closed form with R + r_d + N·r_z. V_0 (diode knee plus
  // the Zener line's intercept) is read from the same clamp with one coil. Tolerance 1e-3 as for
  // the flat clamp; the peak difference 2·r_z·I0 (3 V) to 1e-2 (the difference of two peaks,
  // each good to 1e-3 of 30 V).
  const double vs = 12.0, rc = 400.0, lc = 0.6, ith = 3e-3, rd = 1e-3, rz = 50.0;
  DriverSpec one = test_support::relay_case(true);
  one.clamp.kind = ClampKind::common_pin;
  one.common_clamp.zener_part = "zener_500mw_15v";
  one.common_clamp.zener_overrides = one.clamp.zener_overrides;
  one.common_clamp.zener_overrides["breakdown_dynamic_resistance"] = rz;
  const auto alone = simulate_switch_off(one, test_support::catalogue());
  const double i0 = alone.metrics.get("coil_current_at_switch_off_A");
  const double v0 = alone.metrics.get("switch_voltage_peak_V") - vs - (rd + rz) * i0;
  CHECK(alone.metrics.get("release_time_s") == rel(threshold_time_s(lc / (rc + rd + rz), i0, ith, v0 / (rc + rd + rz))).epsilon(1e-3));

  DriverSpec board = one;
  board.channels = {channel_like(one, "second"), channel_like(one, "third")};
  const auto r = simulate_switch_off(board, test_support::catalogue());
  const double r3 = rc + rd + 3.0 * rz;
  for (const auto& ch : r.channels) {
    CAPTURE(ch.name);
    CHECK(ch.metrics.get("coil_current_at_switch_off_A") == rel(i0).epsilon(1e-6));
    CHECK(ch.metrics.get("switch_voltage_peak_V") == rel(vs + v0 + (rd + 3.0 * rz) * i0).epsilon(1e-3));
    CHECK(ch.metrics.get("release_time_s") == rel(threshold_time_s(lc / r3, i0, ith, v0 / r3)).epsilon(1e-3));
  }
  CHECK(r.metrics.get("switch_voltage_peak_V") - alone.metrics.get("switch_voltage_peak_V") == rel(2.0 * rz * i0).epsilon(1e-2));
  CHECK(r.metrics.get("common_clamp_current_peak_A") == rel(3.0 * i0).epsilon(1e-3));
}

TEST_CASE("channel errors name the channel and the field") {
  DriverSpec s = three_channels(ClampKind::diode);
  s.channels[0].coil.inductance_H = -1.0;
  CHECK_THROWS_WITH_AS(check_driver_spec(s), doctest::Contains("channel 'b': coil: inductance_H"), std::invalid_argument);
  s = three_channels(ClampKind::diode);
  s.channels[1].name = "b";
  CHECK_THROWS_WITH_AS(check_driver_spec(s), doctest::Contains("channel 'b': the name is given twice"), std::invalid_argument);
  s = three_channels(ClampKind::diode);
  s.channels[1].name = "pump 2";
  CHECK_THROWS_WITH_AS(check_driver_spec(s), doctest::Contains("letters, digits and '_'"), std::invalid_argument);
  s = three_channels(ClampKind::diode);
  s.cable.length_m = 30.0;
  s.channels[0].switch_.topology = Topology::high_side_pnp;
  s.channels[0].switch_.part = "pnp_small_signal_40v";
  CHECK_THROWS_WITH_AS(check_driver_spec(s), doctest::Contains("channel 'b': with a cable every channel is low side or every channel high side"),
                       std::invalid_argument);
  s = three_channels(ClampKind::diode);
  s.channels[0].switch_.topology = Topology::high_side_pnp;
  s.channels[0].switch_.part = "pnp_small_signal_40v";
  s.channels[0].clamp.kind = ClampKind::common_pin;
  CHECK_THROWS_WITH_AS(check_driver_spec(s), doctest::Contains("channel 'b': clamp: kind common_pin is for low-side"), std::invalid_argument);
  s = three_channels(ClampKind::diode);
  s.channels[0].switch_.part = "nmos_logic_level_60v";
  CHECK_THROWS_WITH_AS(build_driver_network(s, test_support::catalogue()), doctest::Contains("channel 'b': switch.part"), std::invalid_argument);
}

TEST_CASE("coils on a shared cable's common core: on-currents by nodal analysis, and each coil's own peak at the far end") {
  // Field wiring of a board: every coil's common side on one core back to the rail, each switched
  // side on a core of its own (60 m, 26 Ω/km per core: 1.56 Ω each). At DC the common core carries
  // the sum: V_s − V_sw,k = (R_k + R_core)·I_k + R_core·Σ_j I_j for each channel k — the node-voltage
  // method by hand (Nilsson & Riedel, "Electric Circuits", 10th ed., ch. 4, from memory), solved here
  // with the switches' own on-state drops. Tolerance 1e-6: the DC Newton's tolerance.
  DriverSpec s = three_channels(ClampKind::diode_zener);
  s.cable.length_m = 60.0;
  const auto r = simulate_switch_off(s, test_support::catalogue());
  REQUIRE(r.channels.size() == 3);
  const double vs = 12.0, r_core = 0.5 * s.cable.loop_resistance_ohm();
  const double rc[3] = {400.0, 200.0, 400.0};
  Eigen::Matrix3d a;
  Eigen::Vector3d rhs;
  for (int k = 0; k < 3; ++k) {
    for (int j = 0; j < 3; ++j) a(k, j) = r_core + (j == k ? rc[k] + r_core : 0.0);
    rhs[k] = vs - r.channels[static_cast<std::size_t>(k)].metrics.get("switch_saturation_voltage_V");
  }
  const Eigen::Vector3d i = a.partialPivLu().solve(rhs);
  for (int k = 0; k < 3; ++k) {
    CAPTURE(k);
    CHECK(r.channels[static_cast<std::size_t>(k)].metrics.get("coil_current_at_switch_off_A") == rel(i[k]).epsilon(1e-6));
  }
  // Shared-core heat and each pair's own; the account closes (Tellegen's theorem, 1e-3 the
  // product's accuracy limit; measured far below).
  CHECK(r.metrics.get("cable_common_core_energy_J") > 0.0);
  CHECK(r.channels[1].metrics.get("cable_energy_J") > 0.0);
  CHECK(r.metrics.get("energy_balance_error") < 1e-3);
  // Every coil sits at its line's far end: the coil's own peak differs from the switch's.
  for (const auto& ch : r.channels) CHECK(ch.metrics.get("coil_end_peak_V") != ch.metrics.get("switch_voltage_peak_V"));
}
