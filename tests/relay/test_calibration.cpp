// Calibration of the armature model from data-sheet values (IEC 61810-1 terms: operate and
// release voltage, operate and release time). The data sheet is the demo fan relay's (invented
// demo data, models/coils/demo_coils.toml).
#include <doctest/doctest.h>

#include <cmath>
#include <memory>
#include <stdexcept>

#include "../approx.hpp"
#include "coilkick/engine/network.hpp"
#include "coilkick/engine/operating_point.hpp"
#include "coilkick/engine/transient.hpp"
#include "coilkick/relay/armature_operating_point.hpp"
#include "coilkick/relay/relay_calibration.hpp"

using namespace coilkick;

namespace {

relay::RelayDatasheet fan_relay() {
  relay::RelayDatasheet s;  // demo data (invented)
  s.nominal_voltage_V = 12.0;
  s.coil_resistance_ohm = 320.0;
  s.closed_inductance_H = 0.45;
  s.operate_voltage_V = 8.4;
  s.release_voltage_V = 1.8;
  s.operate_time_s = 7e-3;
  s.release_time_s = 2e-3;
  s.contact_gap_m = 0.4e-3;
  s.over_travel_m = 0.12e-3;
  return s;
}

// The coil voltage at which the contact changes state while the voltage ramps slowly
// (0 → V or V → 0 over 20 s): the static operate / release voltage measured as a test bench would.
double ramp_switching_voltage_V(const relay::ArmatureCoilParameters& p, double v_nominal, bool rising) {
  const double t0 = 1e-3, ramp = 20.0;
  engine::Network net;
  net.add_voltage_source("source", "top", engine::Waveform::edge(rising ? 0.0 : v_nominal, rising ? v_nominal : 0.0, t0, ramp));
  net.add(std::make_shared<relay::ArmatureCoil>("coil", "top", engine::Network::ground, p));
  const engine::Circuit c(net);
  const engine::CircuitState start = rising ? relay::operating_point_with_armatures_open(net, c, 0.0)
                                             : relay::operating_point_with_armatures_closed(net, c, 0.0);
  engine::TransientOptions o;
  o.stop_time_s = t0 + ramp;
  o.record_waveforms = false;
  o.maximum_step_s = 1e-3;  // well below the snap-over time: an L-stable step must not damp it
  const auto ev = engine::EventSpec::crossing("contact", engine::Probe::state(c, "coil.gap"), p.mechanics.make_gap_m,
                                              rising ? engine::Direction::falling : engine::Direction::rising, t0, true);
  const auto r = engine::simulate(c, start, o, {ev});
  REQUIRE(r.event("contact").time_s);
  const double fraction = (*r.event("contact").time_s - t0) / ramp;
  return rising ? fraction * v_nominal : (1.0 - fraction) * v_nominal;
}

}  // namespace

TEST_CASE("calibrated relay meets its data-sheet values") {
  const auto& cal = relay::calibrate_relay_cached(fan_relay());
  for (const auto& t : cal.targets) {
    CAPTURE(t.name);
    CAPTURE(t.achieved);
    // The static values are met by construction (force balance, round-off), the times by root
    // finding to 2e-4 in log(time); 1 % is the reporting threshold of the driver checks' half.
    CHECK(std::abs(t.relative_error()) < 0.01);
  }
  // Closed inductance several times the open one (common practice for small relays, from memory).
  const auto& p = cal.parameters;
  const double ratio = p.magnetic.inductance_H(p.mechanics.residual_gap_m) / p.magnetic.inductance_H(p.mechanics.open_gap_m);
  CHECK(ratio > 2.0);
  CHECK(ratio < 20.0);
}

TEST_CASE("calibrated relay operates and releases at its data-sheet voltages on a slow ramp") {
  // IEC 61810-1 defines operate and release voltage by slowly raising / lowering the coil
  // voltage. The quasi-static ramp is an independent route to the force balance the calibration
  // solves. The armature leaves a balance that has just turned unstable (a saddle-node) slowly:
  // the switching voltage lags by an amount ∝ ramp rate^(2/3) — measured 0.33 V on a 2 s ramp and
  // 0.07 V (0.8 %) on 20 s, the ratio 10^(2/3) as that scaling predicts; release lags 0.4 %.
  // The current's own lag, L/R·dV/dt, is ~1 mV. 2 % is the limit.
  const auto s = fan_relay();
  const auto& p = relay::calibrate_relay_cached(s).parameters;
  CHECK(ramp_switching_voltage_V(p, s.nominal_voltage_V, true) == rel(s.operate_voltage_V).epsilon(0.02));
  CHECK(ramp_switching_voltage_V(p, s.nominal_voltage_V, false) == rel(s.release_voltage_V).epsilon(0.02));
}

TEST_CASE("calibration rejects data no armature of this shape can meet, naming the field") {
  auto s = fan_relay();
  s.release_voltage_V = 0.1;  // operate/release ratio 84 with a 0.57 mm travel: impossible
  CHECK_THROWS_WITH_AS(relay::calibrate_relay(s), doctest::Contains("release_voltage_V"), std::invalid_argument);
  s = fan_relay();
  s.operate_time_s = -1.0;
  CHECK_THROWS_WITH_AS(relay::calibrate_relay(s), doctest::Contains("operate_time_s"), std::invalid_argument);
}

TEST_CASE("calibration reports an operate time it cannot reach instead of hiding it") {
  auto s = fan_relay();
  s.operate_time_s = 0.3e-3;  // shorter than the electrical pick-up delay of this coil
  const auto cal = relay::calibrate_relay(s);
  double miss = 0.0;
  for (const auto& t : cal.targets) {
    if (t.name == "operate_time_s") miss = t.relative_error();
  }
  CHECK(miss > 0.5);
  CHECK(cal.worst_relative_error() == rel(miss));
}
