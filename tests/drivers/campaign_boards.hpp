#pragma once
// Random drivers of the campaigns (scripts/tolerance_campaign.py; invented values) that more than
// one test file runs.
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/scenario/scenario.hpp"
#include "driver_fixture.hpp"

namespace test_support {

// A four-channel high-side P-MOSFET board with a small-signal diode, pwl devices, switched off
// 0.587 s into the run (--extras seed 752): the pwl level shifters' corners slide.
inline coilkick::drivers::DriverSpec sliding_corners_board() {
  return coilkick::scenario::read_scenario_text(R"(
name = "four channels, sliding corners"
[supply]
voltage = "36 V"
[drive]
high_level = "5 V"
switch_off_at = "0.587259 s"
fall_time = "146.608 ns"
rise_time = "6.12329 ns"
[coil]
resistance = "12.4442 ohm"
inductance = "1.46159 H"
release_current = "505.727 mA"
[switch]
topology = "high_side_pmos"
part = "pmos_logic_level_60v"
gate_resistor = "946.818 ohm"
pullup_resistor = "51891.5 ohm"
level_shifter_part = "npn_small_signal_40v"
level_shifter_base_resistor = "1113.85 ohm"
[clamp]
kind = "diode"
diode_part = "small_signal_diode"
[analysis]
device_models = "piecewise_linear"
[[channel]]
name = "ch2"
[channel.coil]
resistance = "706.939 ohm"
inductance = "1.25944 H"
release_current = "25.3649 mA"
[channel.drive]
switch_off_at = "0.587846 s"
[[channel]]
name = "ch3"
[channel.coil]
resistance = "340.447 ohm"
inductance = "2.16332 H"
release_current = "24.6926 mA"
[[channel]]
name = "ch4"
[channel.coil]
resistance = "15.0469 ohm"
inductance = "3.41273 mH"
release_current = "849.799 mA"
)", "sliding corners", catalogue()).driver;
}

}  // namespace test_support
