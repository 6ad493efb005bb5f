// The armature model inside a driver: contact opening per clamp, the energy account with the
// mechanical terms, and the switch-on run for the operate time.
#include <doctest/doctest.h>

#include <cmath>
#include <map>

#include "../approx.hpp"
#include "coilkick/drivers/switch_on.hpp"
#include "coilkick/relay/relay_calibration.hpp"
#include "driver_fixture.hpp"

using namespace coilkick;

namespace {

// The relay_case driver (12 V, low-side NPN, physical models) with the demo fan relay's data
// sheet (invented demo data, models/coils/demo_coils.toml) driving the armature model.
drivers::DriverSpec armature_case(drivers::ClampKind kind) {
  auto s = test_support::relay_case(false);
  s.coil.resistance_at_20C_ohm = 320.0;
  s.coil.inductance_H = 0.45;
  s.coil.release_current_A = std::nan("");
  s.coil.release_voltage_V = 1.8;
  s.coil.operate_voltage_V = 8.4;
  s.relay.armature_model = true;
  s.relay.operate_time_s = 7e-3;
  s.relay.release_time_s = 2e-3;
  s.relay.contact_gap_m = 0.4e-3;
  s.relay.over_travel_m = 0.12e-3;
  s.analysis.relative_tolerance = 1e-7;
  s.clamp.kind = kind;
  return s;
}

const drivers::SwitchOffResult& run(drivers::ClampKind kind) {
  static std::map<drivers::ClampKind, drivers::SwitchOffResult> cache;
  auto it = cache.find(kind);
  if (it == cache.end()) it = cache.emplace(kind, drivers::simulate_switch_off(armature_case(kind), test_support::catalogue())).first;
  return it->second;
}

}  // namespace

TEST_CASE("armature driver: energy balance includes the mechanical terms") {
  // Energy conservation of the coupled circuit and armature (Tellegen's theorem, Desoer & Kuh,
  // Basic Circuit Theory, for the circuit; the lumped electromechanical account of Woodson &
  // Melcher, Electromechanical Dynamics, Part I, §3.1): ½·L·I0² plus the supply's input equals the heat of clamp, coil,
  // switch, armature damping and stops plus what stays stored (field, kinetic, springs).
  // The issue asks for a residual below 0.1 %; at tolerance 1e-7 it is ~3e-8. The mechanical heat
  // is ~1 % of ½·L·I0² here, so leaving it out of the account would fail the check.
  using drivers::ClampKind;
  for (auto kind : {ClampKind::none, ClampKind::diode, ClampKind::diode_zener, ClampKind::rc_across_coil}) {
    CAPTURE(drivers::to_string(kind));
    const auto& r = run(kind);
    CHECK(r.metrics.get("energy_balance_error") < 1e-3);
    const auto& e = r.transient->energy();
    CHECK(e.channel_J("coil.damping") + e.channel_J("coil.stops") > 0.0);  // the mechanical heat is in the account
    CHECK(!std::isnan(r.metrics.get("contact_open_time_s")));
  }
}

TEST_CASE("armature driver: the coil's heat is its winding's Joule heat, the armature's mechanical heat apart") {
  // coil_resistance_energy_J is the heat in the winding (and core loss, none here): Joule's law,
  // R·∫i²dt over the switch-off, with R read from the on-state as V/I (Ohm's law at DC; the
  // coil's inductance drops nothing there). The current is sampled from the run's dense output
  // and integrated by Simpson's rule on 40,000 intervals: its own error is far below the 1e-4
  // allowed. The armature's damping and stop impacts (mechanical heat, in the energy account as
  // their own channels) are ~1 % of the heat here and must not be in it.
  const auto& r = run(drivers::ClampKind::diode_zener);
  const auto& tr = *r.transient;
  const double r_coil = r.metrics.get("coil_voltage_on_V") / r.metrics.get("coil_current_at_switch_off_A");
  const auto i_index = static_cast<Eigen::Index>(tr.circuit().state_index("coil.current"));
  const double t0 = armature_case(drivers::ClampKind::diode_zener).drive.switch_off_at_s, t1 = tr.end_time_s();
  constexpr int n = 40000;
  const double h = (t1 - t0) / n;
  double sum = 0.0;
  for (int k = 0; k <= n; ++k) {
    const double i = tr.sample(t0 + k * h)[i_index];
    sum += (k == 0 || k == n ? 1.0 : (k % 2 ? 4.0 : 2.0)) * i * i;
  }
  const double joule = r_coil * sum * h / 3.0;
  const auto& e = tr.energy();
  REQUIRE(e.channel_J("coil.damping") + e.channel_J("coil.stops") > 1e-3 * joule);  // the case tells them apart
  CHECK(r.metrics.get("coil_resistance_energy_J") == rel(joule).epsilon(1e-4));
}

TEST_CASE("armature driver: a plain diode opens the contact later and slower than diode + Zener") {
  // Common practice: a flyback diode holds the coil's flux, so the armature
  // starts late and is held back while it travels; a Zener in series collapses the current first.
  // Measured here: diode 4.54 ms at 105.6 mm/s, diode + 15 V Zener 2.52 ms at 107.5 mm/s, none
  // (switch avalanche) 2.11 ms. The speeds differ little because the calibrated contact spring
  // drives the first part of the travel in every case.
  const auto& diode = run(drivers::ClampKind::diode).metrics;
  const auto& zener = run(drivers::ClampKind::diode_zener).metrics;
  const auto& none = run(drivers::ClampKind::none).metrics;
  CHECK(diode.get("contact_open_time_s") > 1.5 * zener.get("contact_open_time_s"));
  CHECK(zener.get("contact_open_time_s") > none.get("contact_open_time_s"));
  CHECK(diode.get("armature_speed_at_contact_open_m_per_s") < 0.99 * zener.get("armature_speed_at_contact_open_m_per_s"));
  // Release-time extension by the diode over the unclamped coil: commonly quoted 2×–10× (common
  // practice).
  const double extension = diode.get("contact_open_time_s") / none.get("contact_open_time_s");
  CHECK(extension > 1.8);
  CHECK(extension < 10.0);
  // The contact opens after the coil current has fallen below the release current.
  CHECK(diode.get("contact_open_time_s") > diode.get("release_time_s"));
}

TEST_CASE("armature driver: the switch-on run's operate time equals the coil alone on the same voltage") {
  // The driver's switch-on (logic edge, transistor turning on) against the coil alone on an ideal
  // source at the on-state coil voltage, with the same (hot) armature parameters. The switch adds
  // a turn-on delay of well under a microsecond and its voltage drop is already in the coil
  // voltage: 0.5 % covers the difference of a few µs in 7 ms (measured 0.06 %).
  auto spec = armature_case(drivers::ClampKind::diode);
  const auto& r = run(drivers::ClampKind::diode);
  const auto built = drivers::build_driver_network(spec, test_support::catalogue());
  const double alone = relay::operate_time_s(*built.armature, r.metrics.get("coil_voltage_on_V"));
  CHECK(r.metrics.get("operate_time_s") == rel(alone).epsilon(5e-3));
  // At the data sheet's nominal 12 V and 20 °C the calibration met 7 ms; here the switch drops
  // ~0.1 V, so slightly later (measured 7.11 ms).
  CHECK(r.metrics.get("operate_time_s") > 7e-3);
  CHECK(r.metrics.get("operate_time_s") < 7.5e-3);
}

TEST_CASE("armature driver: the operate time at the scenario's tolerance is that of a tight run") {
  // The operate-time run takes a thousand times the scenario's tolerances (relative at most
  // 1e-3, voltage and current by the same factor; its energy accumulators out of the error
  // control: switch_on.cpp): the make instant, milliseconds after the edge, must still be that of
  // a run at relative tolerance 1e-11 (its operate run at 1e-8, 1 µV). 1e-5 is a hundred times
  // below the 0.1 % this project holds its metrics to, and above what was measured (fan relay
  // 9.7e-7, valve 2.9e-6, held valve 2.2e-6).
  const auto spec = test_support::at_default_tolerances(armature_case(drivers::ClampKind::diode));
  const double t_default = drivers::simulate_operate_time_s(spec, drivers::build_driver_network(spec, test_support::catalogue()));
  const auto tight = test_support::at_tight_tolerances(spec, 1e-11);
  const double t_tight = drivers::simulate_operate_time_s(tight, drivers::build_driver_network(tight, test_support::catalogue()));
  CHECK(t_default == rel(t_tight).epsilon(1e-5));
}

TEST_CASE("fixed-coil driver reports no contact metrics") {
  auto s = armature_case(drivers::ClampKind::diode);
  s.relay.armature_model = false;
  const auto r = drivers::simulate_switch_off(s, test_support::catalogue());
  CHECK(std::isnan(r.metrics.get("contact_open_time_s")));
  CHECK(std::isnan(r.metrics.get("operate_time_s")));
  CHECK(r.waveforms.armature_gap_m.size() == 0);
}

TEST_CASE("armature driver: a coil inductance off the data sheet's scales the magnet's inductance at every gap") {
  // A tolerance run or a sweep of coil.inductance keeps the data sheet (the magnet and springs
  // calibrated from it) and changes the winding: L(g) = L_leak + N²/ℛ(g) (reluctance model,
  // Fitzgerald, Kingsley & Umans, Electric Machinery, 6th ed., ch. 3) scales by the ratio when N²
  // and the leakage do. Before, the spread reached the fixed-coil field only and the armature
  // coil ignored it.
  auto nominal = armature_case(drivers::ClampKind::diode_zener);
  drivers::freeze_relay_datasheet(nominal);
  auto more = nominal;
  more.coil.inductance_H *= 1.1;
  const auto a = drivers::build_driver_network(nominal, test_support::catalogue());
  const auto b = drivers::build_driver_network(more, test_support::catalogue());
  REQUIRE(a.armature);
  REQUIRE(b.armature);
  for (double gap : {a.armature->mechanics.residual_gap_m, 0.2e-3, a.armature->mechanics.open_gap_m}) {
    CHECK(b.armature->magnetic.inductance_H(gap) == rel(1.1 * a.armature->magnetic.inductance_H(gap)).epsilon(1e-12));
  }
  // And the switch-off sees it: the same on-state current with 10 % more stored energy decays
  // later into the same clamp.
  const auto ra = drivers::simulate_switch_off(nominal, a);
  const auto rb = drivers::simulate_switch_off(more, b);
  CHECK(rb.metrics.get("release_time_s") > 1.05 * ra.metrics.get("release_time_s"));
}

TEST_CASE("armature driver: a driver that never pulls the relay in is told so, by name, not as a solver failure") {
  // 1 MΩ of base resistor leaves the NPN a few µA of base current, so the coil gets about a
  // milliampere, well under its release current: no closed armature exists to open (the DC
  // Newton had ended in "did not converge" on the armature's velocity row). The current the
  // message names as needed is the release current by the data sheet's release voltage over the
  // coil's resistance (the release voltage as IEC 61810-1 defines it, from memory: the voltage at
  // which the armature drops out; the calibration sets the spring by that force balance),
  // 1.8 V / 320 Ω = 5.63 mA.
  auto s = armature_case(drivers::ClampKind::diode);
  s.switch_.base_resistor_ohm = 1e6;
  const std::string message = test_support::switch_off_error<std::invalid_argument>(s);
  CAPTURE(message);
  CHECK(message.find("relay.armature_model: the on-state current of 'coil'") == 0);
  CHECK(message.find("does not hold its armature closed (that needs 5.63 mA)") != std::string::npos);
}
