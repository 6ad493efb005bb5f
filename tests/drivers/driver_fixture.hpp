#pragma once
// Driver descriptions shared by the driver tests.
#include <algorithm>
#include <string>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/switch_off.hpp"

namespace test_support {

inline const coilkick::catalogue::Catalogue& catalogue() {
  static const coilkick::catalogue::Catalogue c = coilkick::catalogue::load_default_catalogue();
  return c;
}

// A 12 V / 400 ohm / 0.6 H relay-like coil (invented test values) on a low-side NPN, release
// threshold 3 mA, no winding or board capacitance. With `ideal`, every part is pwl with
// near-ideal segments: diode knee 0.7 V and 1 mΩ, Zener/TVS/transistor breakdown flat.
inline coilkick::drivers::DriverSpec relay_case(bool ideal) {
  using namespace coilkick::drivers;
  DriverSpec s;
  s.supply.voltage_V = 12.0;
  s.drive.high_level_V = 5.0;
  s.drive.switch_off_at_s = 1e-4;
  s.switch_.topology = Topology::low_side_npn;
  s.switch_.part = "npn_small_signal_40v";
  s.switch_.base_resistor_ohm = 1e3;
  s.switch_.board_stray_capacitance_F = 0.0;
  s.coil.resistance_at_20C_ohm = 400.0;
  s.coil.inductance_H = 0.6;
  s.coil.release_current_A = 3e-3;
  s.clamp.zener_part = "zener_500mw_15v";
  s.clamp.active_clamp_zener_part = "zener_500mw_15v";
  s.clamp.tvs_part = "tvs_400w_33v";
  s.clamp.resistor_ohm = 400.0;
  s.analysis.relative_tolerance = 1e-8;
  if (ideal) {
    s.analysis.model_level = coilkick::devices::ModelLevel::pwl;
    s.clamp.diode_overrides = {{"knee_voltage", 0.7}, {"on_resistance", 1e-3}};
    const Overrides flat_breakdown{{"knee_voltage", 0.7}, {"on_resistance", 1e-3},
                                   {"breakdown_dynamic_resistance", 1e-3}, {"breakdown_knee_emission_coefficient", 1e-4}};
    s.clamp.zener_overrides = flat_breakdown;
    s.clamp.active_clamp_zener_overrides = flat_breakdown;
    s.clamp.tvs_overrides = flat_breakdown;
    s.switch_.overrides = {{"breakdown_dynamic_resistance", 1e-3}, {"breakdown_knee_emission_coefficient", 1e-4}};
  }
  return s;
}

// A 24 V solenoid valve (invented demo values) on a logic-level N-MOSFET with a plain rectifier
// diode: 48 Ω at 20 °C, 0.35 H, release at 60 mA.
inline coilkick::drivers::DriverSpec valve_case() {
  using namespace coilkick::drivers;
  DriverSpec s;
  s.supply.voltage_V = 24.0;
  s.drive.high_level_V = 5.0;
  s.drive.fall_time_s = 20e-9;
  s.switch_.topology = Topology::low_side_nmos;
  s.switch_.part = "nmos_logic_level_60v";
  s.switch_.base_resistor_ohm = 100.0;
  s.coil.resistance_at_20C_ohm = 48.0;
  s.coil.inductance_H = 0.35;
  s.coil.release_current_A = 60e-3;
  s.clamp.kind = ClampKind::diode;
  s.clamp.diode_part = "rectifier_1a";
  s.clamp.zener_part = "zener_500mw_18v";
  s.clamp.tvs_part = "tvs_400w_33v";
  return s;
}

// The same driver at the scenario's default integration tolerances.
inline coilkick::drivers::DriverSpec at_default_tolerances(coilkick::drivers::DriverSpec s) {
  const coilkick::drivers::AnalysisSpec d;
  s.analysis.relative_tolerance = d.relative_tolerance;
  s.analysis.voltage_tolerance_V = d.voltage_tolerance_V;
  s.analysis.current_tolerance_A = d.current_tolerance_A;
  return s;
}

// The same driver at tight ones (1 nV, 1 pA and the given relative tolerance): a convergence reference.
inline coilkick::drivers::DriverSpec at_tight_tolerances(coilkick::drivers::DriverSpec s, double relative_tolerance) {
  s.analysis.relative_tolerance = relative_tolerance;
  s.analysis.voltage_tolerance_V = 1e-9;
  s.analysis.current_tolerance_A = 1e-12;
  // A tight run of a slow ringing takes ~15 s here and over a minute in the sanitizer builds on a
  // loaded machine: a wall-time budget that only a real hang reaches.
  s.analysis.maximum_wall_time_s = std::max(s.analysis.maximum_wall_time_s, 900.0);
  return s;
}

// The message of the exception of type E that a switch-off of `s` throws; empty if it throws
// none (another type propagates).
template <class E>
std::string switch_off_error(const coilkick::drivers::DriverSpec& s) {
  try {
    coilkick::drivers::simulate_switch_off(s, catalogue());
  } catch (const E& e) {
    return e.what();
  }
  return {};
}

}  // namespace test_support
