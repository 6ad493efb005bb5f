// Scenario files: units with SI prefixes, and a table of bad inputs — each gives one clear
// message naming the key and its file:line:column.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <cmath>
#include <string>
#include <vector>

#include "../drivers/driver_fixture.hpp"
#include "coilkick/scenario/quantity.hpp"
#include "coilkick/scenario/scenario.hpp"

using namespace coilkick;
using namespace coilkick::scenario;

TEST_CASE("quantities: SI prefixes and units, checked against the expected dimension") {
  CHECK(parse_quantity("4.7 kohm", Dimension::resistance) == rel(4700.0));
  CHECK(parse_quantity("4.7 k\xCE\xA9", Dimension::resistance) == rel(4700.0));  // kΩ
  CHECK(parse_quantity("550 mH", Dimension::inductance) == rel(0.55));
  CHECK(parse_quantity("24 V", Dimension::voltage) == 24.0);
  CHECK(parse_quantity("20 ns", Dimension::time) == rel(20e-9));
  CHECK(parse_quantity("30 pF", Dimension::capacitance) == rel(30e-12));
  CHECK(parse_quantity("10 \xC2\xB5" "F", Dimension::capacitance) == rel(10e-6));  // µF
  CHECK(parse_quantity("60 degC", Dimension::temperature) == 60.0);
  CHECK(parse_quantity("10 %", Dimension::ratio) == rel(0.1));
  CHECK(parse_quantity("1e-3", Dimension::time) == 1e-3);  // SI base unit implied
  CHECK(parse_quantity("52 mohm/m", Dimension::resistance_per_length) == rel(0.052));
  CHECK(parse_quantity("0.55 uH/m", Dimension::inductance_per_length) == rel(0.55e-6));
  CHECK(parse_quantity("80 pF/m", Dimension::capacitance_per_length) == rel(80e-12));
  CHECK(parse_quantity("60 m", Dimension::length) == 60.0);
  CHECK_THROWS_WITH_AS(parse_quantity("0.55 uH", Dimension::inductance_per_length),
                       doctest::Contains("is an inductance, but an inductance per metre (H/m)"), std::invalid_argument);
  CHECK_THROWS_WITH_AS(parse_quantity("30 pF", Dimension::inductance), doctest::Contains("is a capacitance, but an inductance"),
                       std::invalid_argument);
  CHECK_THROWS_WITH_AS(parse_quantity("3 furlongs", Dimension::time), doctest::Contains("unknown unit"), std::invalid_argument);
  CHECK_THROWS_WITH_AS(parse_quantity("nan V", Dimension::voltage), doctest::Contains("not a finite number"), std::invalid_argument);
}

namespace {
// A valid scenario, one statement per line; rows below replace or append lines.
std::vector<std::string> base_lines() {
  return {
      "name = \"test driver\"",             // 1
      "[supply]",                           // 2
      "voltage = \"12 V\"",                 // 3
      "[drive]",                            // 4
      "high_level = \"5 V\"",               // 5
      "switch_off_at = \"100 us\"",         // 6
      "[coil]",                             // 7
      "resistance = \"400 ohm\"",           // 8
      "inductance = \"600 mH\"",            // 9
      "release_current = \"3 mA\"",         // 10
      "[switch]",                           // 11
      "topology = \"low_side_npn\"",        // 12
      "part = \"npn_small_signal_40v\"",    // 13
      "base_resistor = \"1 kohm\"",         // 14
      "[clamp]",                            // 15
      "kind = \"diode_zener\"",             // 16
      "diode_part = \"rectifier_1a\"",      // 17
      "zener_part = \"zener_500mw_15v\"",   // 18
      "[analysis]",                         // 19
      "model_level = \"pwl\"",              // 20
  };
}
std::string join(const std::vector<std::string>& lines) {
  std::string s;
  for (const auto& l : lines) s += l + "\n";
  return s;
}
struct Row {
  const char* what;
  int replace_line;      // 1-based line to replace, 0: append
  std::string text;      // new line content ("" with replace: delete the line's content)
  int expect_line;       // line the message must name
  const char* expect;    // part of the message
};
}  // namespace

TEST_CASE("the base scenario is valid and reads as written") {
  const auto s = read_scenario_text(join(base_lines()), "base.toml", test_support::catalogue());
  CHECK(s.driver.supply.voltage_V == 12.0);
  CHECK(s.driver.coil.inductance_H == rel(0.6));
  CHECK(s.driver.switch_.base_resistor_ohm == rel(1e3));
  CHECK(s.driver.clamp.zener_part == "zener_500mw_15v");
  CHECK(s.locations.at("coil.inductance").line == 9);
}

TEST_CASE("bad scenario inputs: one clear message with file:line:column each") {
  const std::vector<Row> rows{
      {"TOML syntax", 2, "[supply", 2, "TOML syntax"},
      {"unknown section", 2, "[suply]", 2, "unknown section or key (did you mean 'supply'?)"},
      {"unknown key", 9, "inductnce = \"600 mH\"", 9, "unknown key (did you mean 'coil.inductance'?)"},
      {"missing supply voltage", 3, "", 2, "key 'supply.voltage': is required"},
      {"missing topology", 12, "", 11, "key 'switch.topology': is required"},
      {"missing switch part", 13, "", 11, "key 'switch.part': is required"},
      {"missing clamp kind", 16, "", 15, "key 'clamp.kind': is required"},
      {"capacitance given for an inductance", 9, "inductance = \"30 pF\"", 9, "is a capacitance, but an inductance"},
      {"unknown unit", 9, "inductance = \"550 mX\"", 9, "unknown unit 'mX'"},
      {"not a number", 3, "voltage = \"twelve V\"", 3, "does not start with a number"},
      {"NaN string", 3, "voltage = \"nan V\"", 3, "not a finite number"},
      {"negative inductance", 9, "inductance = \"-1 H\"", 9, "key 'coil.inductance': coil.inductance must be finite and > 0"},
      {"zero resistance", 8, "resistance = 0", 8, "key 'coil.resistance': coil.resistance must be finite and > 0"},
      {"boolean for a voltage", 3, "voltage = true", 3, "must be a number or a quantity string"},
      {"number for a topology", 12, "topology = 5", 12, "must be a string, not an integer"},
      {"unknown topology", 12, "topology = \"low_side_npm\"", 12, "unknown switch topology 'low_side_npm' (did you mean 'low_side_npn'?)"},
      {"unknown clamp kind", 16, "kind = \"diode_zenner\"", 16, "unknown clamp kind 'diode_zenner' (did you mean 'diode_zener'?)"},
      {"unknown switch part", 13, "part = \"npn_small_signal_40\"", 13, "no part named 'npn_small_signal_40' in the catalogue (did you mean 'npn_small_signal_40v'?)"},
      {"part of the wrong family", 13, "part = \"zener_500mw_12v\"", 13, "does not fit topology low_side_npn"},
      {"unknown coil part", 8, "part = \"greenhouse_valve\"", 8, "key 'coil.part': no part named 'greenhouse_valve' in the catalogue (did you mean 'greenhouse_valve_24v'?)"},
      {"override of an unknown parameter", 0, "[switch.overrides]\nforward_bet = 150", 22, "'forward_bet' is not a parameter of npn part 'npn_small_signal_40v' (did you mean 'forward_beta'?)"},
      {"override with the wrong unit", 0, "[clamp.zener.overrides]\nbreakdown_voltage = \"20 A\"", 22, "is a current, but a voltage"},
      {"release current and release voltage", 10, "release_current = \"3 mA\"\nrelease_voltage = \"1 V\"", 10,
       "key 'coil.release_current': give coil.release_current or coil.release_voltage, not both"},
      {"stop time before switch-off", 0, "stop_time = \"50 us\"", 21, "analysis.stop_time must be after the end of the drive's switch-off edge"},
      {"negative source resistance", 3, "voltage = \"12 V\"\nsource_resistance = \"-1 ohm\"", 4,
       "key 'supply.source_resistance': supply.source_resistance must be finite and >= 0"},
      {"a Zener as the reverse-polarity diode", 3, "voltage = \"12 V\"\nreverse_polarity_diode_part = \"zener_500mw_12v\"", 4,
       "key 'supply.reverse_polarity_diode_part': supply.reverse_polarity_diode_part: part 'zener_500mw_12v' is a zener; a diode is needed here"},
      {"a capacitance for the source inductance", 3, "voltage = \"12 V\"\nsource_inductance = \"2 uF\"", 4, "is a capacitance, but an inductance"},
      // Appended [[extra_part]] tables start at line 21: name 22, element 23, between 24, value 25.
      {"extra part on a misspelt node", 0, "[[extra_part]]\nname = \"r\"\nelement = \"resistor\"\nbetween = [\"swich\", \"supply\"]\nvalue = \"10 ohm\"", 24,
       "key 'extra_part.r.between': extra_part 'r': node 'swich' is neither a node of the driver nor used by another extra part (did you mean 'switch'?)"},
      {"extra part joining a node to itself", 0, "[[extra_part]]\nname = \"r\"\nelement = \"resistor\"\nbetween = [\"switch\", \"switch\"]\nvalue = \"10 ohm\"", 24,
       "joins a node to itself"},
      {"extra resistor with a capacitance", 0, "[[extra_part]]\nname = \"r\"\nelement = \"resistor\"\nbetween = [\"switch\", \"supply\"]\nvalue = \"10 nF\"", 25,
       "key 'extra_part.r.value': \"10 nF\" is a capacitance, but a resistance"},
      {"extra part of an unknown element", 0, "[[extra_part]]\nname = \"r\"\nelement = \"resistr\"", 23,
       "unknown extra part element 'resistr' (did you mean 'resistor'?)"},
      {"extra part without its nodes", 0, "[[extra_part]]\nname = \"r\"\nelement = \"resistor\"\nvalue = \"10 ohm\"", 21,
       "key 'extra_part.r.between': is required"},
      {"extra part with a negative value", 0, "[[extra_part]]\nname = \"r\"\nelement = \"resistor\"\nbetween = [\"switch\", \"supply\"]\nvalue = \"-10 ohm\"", 25,
       "extra_part 'r': value must be finite and > 0"},
      {"extra part with an unknown key", 0, "[[extra_part]]\nname = \"r\"\nelement = \"resistor\"\nvalu = 10", 24,
       "unknown key (did you mean 'value'?)"},
      {"extra part without its element", 0, "[[extra_part]]\nname = \"r\"\nvalue = 10", 21, "key 'extra_part.element': is required"},
      {"extra part as a table, not an array", 0, "[extra_part]\nname = \"r\"", 21, "must be an array of tables [[extra_part]]"},
      {"a rectifier as the Zener", 18, "zener_part = \"rectifier_1a\"", 18,
       "key 'clamp.zener_part': clamp.zener_part: part 'rectifier_1a' is a diode; a Zener or TVS is needed here"},
      {"Zener clamp without a Zener", 18, "", 15, "key 'clamp.zener_part': is required for clamp.kind = diode_zener"},
      {"diode + resistor without a resistor", 16, "kind = \"diode_resistor\"", 15, "key 'clamp.resistor': is required for clamp.kind = diode_resistor"},
      {"RC snubber without values", 16, "kind = \"rc_across_coil\"", 15, "key 'clamp.snubber_resistance': is required"},
      {"high side without a pull-up", 12, "topology = \"high_side_pnp\"", 11, "key 'switch.pullup_resistor': is required for a high-side switch"},
      {"key given twice", 0, "model_level = \"pwl\"", 21, "TOML syntax"},
      {"huge supply voltage", 3, "voltage = \"1e300 V\"", 3, "key 'supply.voltage': supply.voltage must be at most"},
      {"unknown model level", 20, "model_level = \"fast\"", 20, "device models must be \"physical\" or \"piecewise_linear\""},
      {"relative tolerance out of range", 0, "relative_tolerance = 0.5", 21, "key 'analysis.relative_tolerance'"},
      {"array for a value", 3, "voltage = [12]", 3, "must be a number or a quantity string such as \"4.7 kohm\", not an array"},
      {"coil temperature out of range", 10, "temperature = \"300 degC\"", 10, "key 'coil.temperature': coil.temperature must be inside"},
      {"temperature with a prefix", 0, "device_temperature = \"25 kdegC\"", 21, "a temperature takes no prefix"},
      {"tolerance without its pair", 0, "[tolerances]\ncoil_temperature_min = \"-10 degC\"", 22, "give both tolerances.coil_temperature_min and tolerances.coil_temperature_max"},
      {"spread out of range", 0, "[tolerances]\ncoil_resistance = \"60 %\"", 22, "must be a relative spread in [0, 50 %)"},
      {"top-level unknown key", 1, "title = \"x\"", 1, "unknown section or key"},
      {"section given as a value", 0, "[tolerances]\n[tolerances.inner]", 22, "unknown key"},
      {"armature model without operate voltage", 0, "[relay]\narmature_model = true", 22,
       "key 'relay.armature_model': relay: the armature model needs coil.operate_voltage"},
      {"time for a length", 0, "[relay]\ncontact_gap = \"0.4 ms\"", 22, "is a time, but a length (m) is expected"},
      {"negative over-travel", 0, "[relay]\nover_travel = \"-0.1 mm\"", 22, "key 'relay.over_travel': relay.over_travel must be inside"},
      {"misspelt relay key", 0, "[relay]\narmature = true", 22, "unknown key (did you mean 'relay.armature_model'?)"},
      // [hold] appended at line 21, its keys from line 22.
      {"PWM duty above 1", 0, "[hold]\npull_in_time = \"20 ms\"\npwm_frequency = \"20 kHz\"\npwm_duty = 1.5", 24,
       "key 'hold.pwm_duty': hold.pwm_duty must be between 0 and 1 (exclusive), got 1.5"},
      {"PWM duty of 0 %", 0, "[hold]\npull_in_time = \"20 ms\"\npwm_frequency = \"20 kHz\"\npwm_duty = \"0 %\"", 24,
       "hold.pwm_duty must be between 0 and 1"},
      {"PWM too fast for the edges", 0, "[hold]\npull_in_time = \"20 ms\"\npwm_frequency = \"5 MHz\"\npwm_duty = 0.1", 23,
       "key 'hold.pwm_frequency': hold.pwm_frequency is too high for the drive's edges"},
      {"hold current above the pull-in current", 0,
       "[hold]\npull_in_current = \"20 mA\"\npwm_frequency = \"20 kHz\"\naverage_current = \"25 mA\"", 24,
       "key 'hold.average_current': hold.average_current must be below the pull-in current"},
      {"pull-in current the coil never reaches", 0, "[hold]\npull_in_current = \"1 A\"\npwm_frequency = \"20 kHz\"\npwm_duty = 0.5", 22,
       "hold.pull_in_current must be below the full-drive current"},
      {"hold without its PWM frequency", 0, "[hold]\npwm_duty = 0.5", 21, "key 'hold': hold.pwm_frequency is needed for a hold"},
      {"hold with both duty and average current", 0,
       "[hold]\npull_in_time = \"20 ms\"\npwm_frequency = \"20 kHz\"\npwm_duty = 0.5\naverage_current = \"10 mA\"", 25,
       "give hold.pwm_duty or hold.average_current (one of them)"},
      {"repetition without its on-time", 0, "[repeat]\nperiod = \"1 s\"\ncount = 3", 22, "repeat.on_time is needed with repeat.period"},
      {"repetition of zero cycles", 0, "[repeat]\nperiod = \"1 s\"\non_time = \"0.5 s\"\ncount = 0", 24, "key 'repeat.count': must be 1 to"},
      {"repetition counted in a fraction", 0, "[repeat]\nperiod = \"1 s\"\non_time = \"0.5 s\"\ncount = 2.5", 24, "must be a whole number of cycles"},
      {"on-time longer than the period", 0, "[repeat]\nperiod = \"1 s\"\non_time = \"2 s\"\ncount = 3", 23,
       "key 'repeat.on_time': repeat.on_time must leave the on- and off-times"},
      {"a hold and a repetition", 0,
       "[hold]\npull_in_time = \"20 ms\"\npwm_frequency = \"20 kHz\"\npwm_duty = 0.5\n[repeat]\nperiod = \"1 s\"\non_time = \"0.5 s\"\ncount = 3", 25,
       "a drive is a hold or a repetition, not both"},
      {"negative cable length", 0, "[cable]\nlength = \"-3 m\"", 22, "key 'cable.length': cable.length must be"},
      {"cable capacitance not per metre", 0, "[cable]\nlength = \"60 m\"\ncapacitance_per_metre = \"80 pF\"", 23,
       "is a capacitance, but a capacitance per metre (F/m)"},
      {"a hold with a cable", 0, "[cable]\nlength = \"60 m\"\n[hold]\npull_in_time = \"20 ms\"\npwm_frequency = \"20 kHz\"\npwm_duty = 0.5", 23,
       "a PWM hold or a repetition with a cable is not available yet"},
      {"misspelt cable key", 0, "[cable]\nlenght = \"60 m\"", 22, "did you mean 'cable.length'?"},
      {"cable loss fraction of the whole delay", 0, "[cable]\nlength = \"60 m\"\nhigh_frequency_loss_fraction = 1.5", 23,
       "key 'cable.high_frequency_loss_fraction'"},
      {"insulation loss tangent above 1", 0, "[cable]\nlength = \"60 m\"\ninsulation_loss_tangent = 1.5", 23,
       "key 'cable.insulation_loss_tangent'"},
      {"insulation loss tangent with a unit", 0, "[cable]\nlength = \"60 m\"\ninsulation_loss_tangent = \"5 %\"", 23,
       "key 'cable.insulation_loss_tangent'"},
      // [[channel]] appended at line 21: name 22, a sub-table 23, its key 24.
      {"channel without a name", 0, "[[channel]]\n[channel.coil]\ninductance = \"0.3 H\"", 21, "key 'channel.name': is required in every [[channel]]"},
      {"channel name not a string", 0, "[[channel]]\nname = 2", 22, "key 'channel.name': must be a string, not an integer"},
      {"channel with a board's section", 0, "[[channel]]\nname = \"b\"\n[channel.supply]\nvoltage = \"24 V\"", 23,
       "a channel takes name, [channel.drive], [channel.switch], [channel.coil] and [channel.clamp]"},
      {"channel coil with the wrong unit", 0, "[[channel]]\nname = \"b\"\n[channel.coil]\ninductance = \"30 pF\"", 24,
       "is a capacitance, but an inductance (H) is expected (in the [[channel]] named 'b')"},
      {"misspelt channel key", 0, "[[channel]]\nname = \"b\"\n[channel.coil]\ninductnce = \"0.3 H\"", 24, "did you mean 'coil.inductance'?"},
      {"negative channel inductance", 0, "[[channel]]\nname = \"b\"\n[channel.coil]\ninductance = \"-0.3 H\"", 24,
       "key 'channel.b.coil.inductance': coil.inductance must be finite and > 0"},
      {"channel switch part of the wrong family", 0, "[[channel]]\nname = \"b\"\n[channel.switch]\npart = \"nmos_logic_level_60v\"", 24,
       "key 'channel.b.switch.part': switch.part: 'nmos_logic_level_60v' is a nmos, which does not fit topology low_side_npn"},
      {"channel name given twice", 0, "[[channel]]\nname = \"b\"\n[[channel]]\nname = \"b\"", 24, "'b' is given twice"},
      {"channel name with a space", 0, "[[channel]]\nname = \"pump 2\"", 21, "letters, digits and '_'"},
      {"channel named as a board node", 0, "[[channel]]\nname = \"switch\"", 21, "the name is a node or part name of the board"},
      {"channels with a repetition", 0, "[[channel]]\nname = \"b\"\n[repeat]\nperiod = \"1 s\"\non_time = \"0.5 s\"\ncount = 3", 21,
       "several channels do not yet combine with a hold or a repetition"},
      {"a rectifier as the common clamp's Zener", 0, "[common_clamp]\nzener_part = \"rectifier_1a\"", 22,
       "key 'common_clamp.zener_part': common_clamp.zener_part: part 'rectifier_1a' is a diode; a Zener or TVS is needed here"},
      {"hold with a frequency for the duty", 0, "[hold]\npull_in_time = \"20 ms\"\npwm_frequency = \"20 kHz\"\npwm_duty = \"5 Hz\"", 24,
       "is a frequency, but a ratio"},
  };
  CHECK(rows.size() >= 30);
  int k = 0;
  for (const auto& r : rows) {
    CAPTURE(std::string(r.what));
    auto lines = base_lines();
    if (r.replace_line > 0) lines[static_cast<std::size_t>(r.replace_line - 1)] = r.text;
    else lines.push_back(r.text);
    const std::string name = "bad_" + std::to_string(k++) + ".toml";
    std::string msg = "no error";
    try {
      (void)read_scenario_text(join(lines), name, test_support::catalogue());
    } catch (const ScenarioError& e) {
      msg = e.what();
    }
    CAPTURE(msg);
    CHECK(msg.rfind(name + ":" + std::to_string(r.expect_line) + ":", 0) == 0);
    CHECK(msg.find(r.expect) != std::string::npos);
  }
}

TEST_CASE("an unreadable file is a clear error") {
  CHECK_THROWS_WITH_AS(read_scenario_file("/nonexistent/dir/x.toml", test_support::catalogue()),
                       doctest::Contains("/nonexistent/dir/x.toml:1:1: cannot open"), ScenarioError);
}

TEST_CASE("a threshold key in the file replaces the coil part's: release current over the part's release voltage") {
  // The demo coil part gives release and operate voltages; the file's current keys win, and the
  // part's voltages stay the armature model's data-sheet values.
  const std::string text = R"(
[supply]
voltage = "24 V"
[coil]
part = "greenhouse_valve_24v"
release_current = "50 mA"
operate_current = "0.3 A"
[switch]
topology = "low_side_nmos"
part = "nmos_logic_level_60v"
[clamp]
kind = "diode"
diode_part = "rectifier_1a"
)";
  const auto s = read_scenario_text(text, "threshold.toml", test_support::catalogue());
  CHECK(s.driver.coil.release_current_A == 0.05);
  CHECK(std::isnan(s.driver.coil.release_voltage_V));
  CHECK(s.driver.coil.operate_current_A == 0.3);
  CHECK(std::isnan(s.driver.coil.operate_voltage_V));
  const auto& part = test_support::catalogue().part("greenhouse_valve_24v");
  CHECK(s.driver.relay.release_voltage_V == part.parameter("release_voltage"));
  CHECK(s.driver.relay.operate_voltage_V == part.parameter("operate_voltage"));
}

TEST_CASE("analysis.device_models in our own words, the older analysis.model_level still read, never both") {
  auto with_line = [](const std::string& line) {
    auto lines = base_lines();
    lines[19] = line;  // the model-level line of the base file
    return join(lines);
  };
  using coilkick::devices::ModelLevel;
  CHECK(read_scenario_text(with_line("device_models = \"piecewise_linear\""), "a.toml", test_support::catalogue()).driver.analysis.model_level ==
        ModelLevel::pwl);
  CHECK(read_scenario_text(with_line("device_models = \"physical\""), "b.toml", test_support::catalogue()).driver.analysis.model_level ==
        ModelLevel::physical);
  CHECK(read_scenario_text(with_line("model_level = \"pwl\""), "c.toml", test_support::catalogue()).driver.analysis.model_level ==
        ModelLevel::pwl);
  CHECK_THROWS_WITH_AS(read_scenario_text(with_line("model_level = \"pwl\"\ndevice_models = \"physical\""), "d.toml",
                                          test_support::catalogue()),
                       doctest::Contains("give analysis.device_models (or its older spelling analysis.model_level), not both"),
                       ScenarioError);
}

TEST_CASE("a directory given as the scenario file is named as such") {
  CHECK_THROWS_WITH_AS(read_scenario_file("/tmp", test_support::catalogue()),
                       doctest::Contains("/tmp:1:1: is a directory, not a scenario file"), ScenarioError);
}

TEST_CASE("numeric keys set by name, part overrides included") {
  auto s = read_scenario_text(join(base_lines()), "base.toml", test_support::catalogue());
  set_numeric_key(s, "coil.inductance", 0.3, test_support::catalogue());
  CHECK(s.driver.coil.inductance_H == 0.3);
  set_numeric_key(s, "clamp.zener.overrides.breakdown_voltage", 20.0, test_support::catalogue());
  CHECK(s.driver.clamp.zener_overrides.at("breakdown_voltage") == 20.0);
  CHECK_THROWS_WITH_AS(set_numeric_key(s, "coil.inductanse", 1.0, test_support::catalogue()),
                       doctest::Contains("did you mean 'coil.inductance'"), ScenarioError);
}

TEST_CASE("every bundled scenario reads") {
  for (const char* f : {"greenhouse_valve.toml", "fan_relay.toml", "greenhouse_valve_rail.toml", "greenhouse_valve_hold.toml",
                        "greenhouse_valve_cable.toml", "greenhouse_valve_bank.toml"}) {
    CAPTURE(f);
    const auto s = read_scenario_file(catalogue::default_models_directory() + "/scenarios/" + f, test_support::catalogue());
    CHECK(!s.driver.name.empty());
  }
}

TEST_CASE("[[channel]] tables start from the first channel and replace what they name, and their keys sweep by channel") {
  auto lines = base_lines();
  lines.push_back("[[channel]]");                      // 21
  lines.push_back("name = \"fan\"");                   // 22
  lines.push_back("[channel.coil]");                   // 23
  lines.push_back("inductance = \"300 mH\"");          // 24
  lines.push_back("[channel.drive]");                  // 25
  lines.push_back("switch_off_at = \"150 us\"");       // 26
  lines.push_back("[[channel]]");                      // 27
  lines.push_back("name = \"pump\"");                  // 28
  lines.push_back("[channel.coil]");                   // 29
  lines.push_back("part = \"pump_contactor_24v\"");    // 30
  lines.push_back("[channel.clamp]");                  // 31
  lines.push_back("kind = \"diode\"");                 // 32
  auto s = read_scenario_text(join(lines), "board.toml", test_support::catalogue());
  REQUIRE(s.driver.channels.size() == 2);
  const auto& fan = s.driver.channels[0];
  const auto& pump = s.driver.channels[1];
  CHECK(fan.name == "fan");
  CHECK(fan.coil.inductance_H == rel(0.3));
  CHECK(fan.coil.resistance_at_20C_ohm == rel(400.0));      // the first channel's
  CHECK(fan.coil.release_current_A == rel(3e-3));           // the first channel's
  CHECK(fan.drive.switch_off_at_s == rel(150e-6));
  CHECK(fan.drive.high_level_V == rel(5.0));                // the first channel's
  CHECK(fan.clamp.kind == drivers::ClampKind::diode_zener); // the first channel's
  CHECK(pump.coil.part == "pump_contactor_24v");
  CHECK(pump.coil.resistance_at_20C_ohm == rel(12.0));      // the part's (models/coils/demo_coils.toml)
  CHECK(pump.clamp.kind == drivers::ClampKind::diode);
  CHECK(s.driver.coil.inductance_H == rel(0.6));            // the first channel untouched
  CHECK(s.locations.at("channel.fan.coil.inductance").line == 24);
  CHECK(s.locations.at("channel.pump.clamp.kind").line == 32);

  set_numeric_key(s, "channel.fan.coil.inductance", 0.45, test_support::catalogue());
  CHECK(s.driver.channels[0].coil.inductance_H == rel(0.45));
  CHECK(s.driver.coil.inductance_H == rel(0.6));
  CHECK(numeric_key_value(s, "channel.fan.coil.inductance") == rel(0.45));
  CHECK_THROWS_WITH_AS(set_numeric_key(s, "channel.fn.coil.inductance", 1.0, test_support::catalogue()),
                       doctest::Contains("no channel named 'fn' (did you mean 'fan'?)"), ScenarioError);
  CHECK_THROWS_WITH_AS(set_numeric_key(s, "channel.fan.supply.voltage", 1.0, test_support::catalogue()),
                       doctest::Contains("a channel's numeric keys are its drive, switch, coil and clamp keys"), ScenarioError);
}
