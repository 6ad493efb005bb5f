// The coilkick commands end to end on the bundled demo scenarios, JSON keys, and the program's
// exit codes and messages for bad input.
#include <doctest/doctest.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <sys/wait.h>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/metrics.hpp"
#include "commands.hpp"
#include "cli_support.hpp"
#include "report_format.hpp"

using namespace coilkick;
using namespace coilkick::cli;
using namespace test_support;

namespace {
const char* kPwlScenario = R"(name = "cli test"
[supply]
voltage = "12 V"
[drive]
high_level = "5 V"
switch_off_at = "100 us"
[coil]
resistance = "400 ohm"
inductance = "600 mH"
release_current = "3 mA"
[switch]
topology = "low_side_npn"
part = "npn_small_signal_40v"
base_resistor = "1 kohm"
[clamp]
kind = "diode"
diode_part = "rectifier_1a"
zener_part = "zener_500mw_15v"
[analysis]
model_level = "pwl"
[tolerances]
coil_resistance = "10 %"
)";

}  // namespace

TEST_CASE("run: readable report with checks and the caution, JSON with every metric") {
  CommonOptions o;
  o.file = scenario_path("greenhouse_valve.toml");
  std::ostringstream text;
  CHECK(cmd_run(o, "", false, text) == 0);
  CHECK(text.str().find("Rating checks") != std::string::npos);
  CHECK(text.str().find("release_time_s") != std::string::npos);
  CHECK(text.str().find("simulation is not a qualification") != std::string::npos);
  o.json = true;
  std::ostringstream js;
  const std::string csv = scratch("waves.csv", "");
  CHECK(cmd_run(o, csv, false, js) == 0);
  const auto j = nlohmann::json::parse(js.str());
  // JSON keys are stable: exactly the documented metric names.
  std::vector<std::string> keys;
  for (const auto& [k, v] : j.at("metrics").items()) keys.push_back(k);
  std::vector<std::string> expected = drivers::metric_names();
  std::sort(keys.begin(), keys.end());
  std::sort(expected.begin(), expected.end());
  CHECK(keys == expected);
  for (const char* k : {"scenario", "file", "topology", "switch_part", "clamp_kind", "clamp_parts", "model_level", "checks", "overall", "caution"}) {
    CHECK(j.contains(k));
  }
  std::ifstream w(csv);
  std::string caution, header;
  std::getline(w, caution);
  std::getline(w, header);
  CHECK(caution.rfind("# Caution: a simulation is not a qualification", 0) == 0);  // every CSV starts with it
  CHECK(header.rfind("time_s,switch_voltage_V,coil_current_A,clamp_current_A", 0) == 0);
}

TEST_CASE("compare: every applicable clamp of the scenario, CSV and SVG written") {
  CommonOptions o;
  o.file = scenario_path("fan_relay.toml");
  const std::string csv = scratch("compare.csv", ""), svg = scratch("compare.svg", "");
  std::ostringstream out;
  CHECK(cmd_compare(o, csv, svg, out) == 0);
  for (const char* kind : {"none", "diode", "diode_zener", "diode_resistor", "rc_across_coil", "rc_across_switch", "tvs_across_switch", "active_clamp"}) {
    CHECK(out.str().find(kind) != std::string::npos);
  }
  std::ifstream c(csv);
  int lines = 0;
  std::string first_csv;
  for (std::string l; std::getline(c, l);) {
    if (lines++ == 0) first_csv = l;
  }
  CHECK(lines == 10);  // caution + header + 8 clamp kinds
  CHECK(first_csv.rfind("# Caution:", 0) == 0);
  std::ifstream s(svg);
  std::stringstream chart;
  chart << s.rdbuf();
  CHECK(chart.str().rfind("<svg", 0) == 0);
  CHECK(chart.str().find(kCautionLine) != std::string::npos);  // the chart's footer
}

TEST_CASE("compare and run on a coil at the end of a cable: the coil's own peak is shown beside the switch's") {
  CommonOptions o;
  o.file = scenario_path("greenhouse_valve_cable.toml");
  const std::string csv = scratch("compare_cable.csv", ""), svg = scratch("compare_cable.svg", "");
  std::ostringstream out;
  CHECK(cmd_compare(o, csv, svg, out) == 0);
  CHECK(out.str().find("coil end") != std::string::npos);
  std::ostringstream run_out;
  CHECK(cmd_run(o, "", false, run_out) == 0);
  CHECK(run_out.str().find("peak voltage across the coil") != std::string::npos);
  CHECK(run_out.str().find("energy into the cable") != std::string::npos);
  // The line the cable is: √(L′/C′) and 60·√(L′·C′) of the file's 0.55 µH/m and 80 pF/m by hand
  // (the telegrapher's equations, Pozar 4th ed. §2.1), its quarter wave 1/(4·398 ns).
  CHECK(run_out.str().find("impedance 82.9 ohm, delay 398 ns, loop 3.12 ohm; it rings at 628 kHz") != std::string::npos);
  CHECK(run_out.str().find("skin effect and insulation") != std::string::npos);
  CHECK(run_out.str().find("Caution") != std::string::npos);
}

TEST_CASE("a board of several channels: run's channel table and every channel's checks, compare and faults by channel") {
  CommonOptions o;
  o.file = scenario_path("greenhouse_valve_bank.toml");
  std::ostringstream run_out;
  CHECK(cmd_run(o, "", false, run_out) == 0);
  for (const char* s : {"Channels (each from its own switch-off edge", "valve_bed_2", "pump: switch_voltage", "common_clamp_energy_J",
                        "Caution"}) {
    CAPTURE(s);
    CHECK(run_out.str().find(s) != std::string::npos);
  }
  o.json = true;
  std::ostringstream js;
  CHECK(cmd_run(o, "", false, js) == 0);
  const auto j = nlohmann::json::parse(js.str());
  REQUIRE(j.at("channels").size() == 3);
  CHECK(j.at("channels").at(2).at("name") == "pump");
  // The pump's contactor (1.75 A) dominates the shared TVS: the board's common clamp energy is
  // more than each channel's coil energy ½·L·I0² (0.35 H, 0.41 A: 29 mJ), less than the three
  // together (0.1 H at 1.75 A: 153 mJ, plus two valves: 211 mJ) — the coils' resistance takes the rest.
  const double e_common = j.at("metrics").at("common_clamp_energy_J").get<double>();
  CHECK(e_common > 0.029);
  CHECK(e_common < 0.211);
  CHECK(j.at("metrics").contains("pump.release_time_s"));
  o.json = false;
  std::ostringstream cmp;
  CHECK(cmd_compare(o, "", "", cmp) == 0);
  CHECK(cmp.str().find("common_pin") != std::string::npos);
  CHECK(cmp.str().find("A board of 3 channels") != std::string::npos);
  std::ostringstream faults;
  CHECK(cmd_faults(o, "", faults) == 0);
  CHECK(faults.str().find("pump.coil open") != std::string::npos);
  CHECK(faults.str().find("pump coil current") != std::string::npos);
}

TEST_CASE("sweep: CSV with one row per grid point") {
  CommonOptions o;
  o.file = scratch("sweep.toml", kPwlScenario);
  o.quiet = true;
  std::ostringstream out;
  CHECK(cmd_sweep(o, {"coil.inductance=0.3:0.6:4", "supply.voltage=11V:13V:2"}, "", out) == 0);
  std::istringstream in(out.str());
  std::string caution, header;
  std::getline(in, caution);
  std::getline(in, header);
  CHECK(caution == "# " + std::string(kCautionLine));
  CHECK(header.rfind("coil.inductance,supply.voltage,overall,error,", 0) == 0);
  int rows = 0;
  for (std::string l; std::getline(in, l);) ++rows;
  CHECK(rows == 8);
  // --json: the same points, with the caution.
  o.json = true;
  std::ostringstream js;
  CHECK(cmd_sweep(o, {"coil.inductance=0.3:0.6:4", "supply.voltage=11V:13V:2"}, "", js) == 0);
  const auto j = nlohmann::json::parse(js.str());
  CHECK(j.at("points").size() == 8);
  CHECK(j.at("caution") == kCaution);
  CHECK(j.at("points")[0].at("values").contains("coil.inductance"));
  CHECK(j.at("points")[0].at("metrics").contains("release_time_s"));
  // --output: the table in the file, a summary and the caution on the screen.
  o.json = false;
  const std::string file = scratch("sweep_out.csv", "");
  std::ostringstream summary;
  CHECK(cmd_sweep(o, {"coil.inductance=0.3:0.6:4"}, file, summary) == 0);
  CHECK(summary.str().find("4 points written to") != std::string::npos);
  CHECK(summary.str().find(kCaution) != std::string::npos);
}

TEST_CASE("tolerance: summary, worst cases, and the same JSON on 1 and 2 threads") {
  CommonOptions o;
  o.file = scratch("tol.toml", kPwlScenario);
  o.quiet = true;
  o.json = true;
  std::ostringstream a, b;
  o.threads = 1;
  CHECK(cmd_tolerance(o, 20, 7, a) == 0);
  o.threads = 2;
  CHECK(cmd_tolerance(o, 20, 7, b) == 0);
  CHECK(a.str() == b.str());
  const auto j = nlohmann::json::parse(a.str());
  CHECK(j.at("corners") == 2);
  CHECK(j.at("samples") == 20);
  CHECK(j.at("summary").contains("release_time_s"));
  o.json = false;
  std::ostringstream text;
  CHECK(cmd_tolerance(o, 5, 7, text) == 0);
  CHECK(text.str().find("Worst release time") != std::string::npos);
}

TEST_CASE("suggest: a ranked list that meets the limits") {
  CommonOptions o;
  o.file = scratch("suggest.toml", kPwlScenario);
  o.quiet = true;
  std::ostringstream out;
  CHECK(cmd_suggest(o, "0.8 ms", "32 V", 5, out) == 0);
  CHECK(out.str().find("rank") != std::string::npos);
  CHECK(out.str().find("zener_500mw_18v") != std::string::npos);
  CHECK_THROWS_WITH_AS(cmd_suggest(o, "0.8 V", "32 V", 5, out), doctest::Contains("--max-release-time"), std::invalid_argument);
}

TEST_CASE("the program: exit codes and messages") {
  CHECK(run_program("--help").code == 0);
  CHECK(run_program("run --help").code == 0);
  const auto demo = run_program("demo --quiet");
  CHECK(demo.code == 0);
  CHECK(demo.output.find("diode_zener") != std::string::npos);
  // Bad input: exit code 2 with file:line:column.
  const std::string bad = scratch("bad.toml", std::string(kPwlScenario) + "[coil.more]\n");
  const auto r = run_program("run " + bad);
  CHECK(r.code == 2);
  CHECK(r.output.find(bad + ":23:") != std::string::npos);
  const auto missing = run_program("run /nonexistent.toml");
  CHECK(missing.code == 2);
  CHECK(missing.output.find("cannot open") != std::string::npos);
  CHECK(run_program("tolerance " + bad + " --samples -3").code == 2);
  const auto unknown = run_program("frobnicate " + bad);
  CHECK(unknown.code == 2);
  CHECK(unknown.output.find("unknown command 'frobnicate'") != std::string::npos);
  const auto directory = run_program("run /tmp");
  CHECK(directory.code == 2);
  CHECK(directory.output.find("/tmp:1:1: is a directory, not a scenario file") != std::string::npos);
  // A sweep with nothing valid in it is bad input, not a table of errors that exits 0.
  const auto all_invalid = run_program("sweep " + scratch("ok1.toml", kPwlScenario) + " --quiet --vary coil.inductance=-1:-2:3");
  CHECK(all_invalid.code == 2);
  CHECK(all_invalid.output.find("every point is invalid") != std::string::npos);
  CHECK(run_program("sweep " + scratch("ok.toml", kPwlScenario) + " --vary coil.inductanse=1:2:2").code == 2);
  // A solver failure is an error (exit 3), not a result.
  std::string text = kPwlScenario;
  text.insert(text.find("[tolerances]"), "maximum_wall_time = \"1 us\"\n");
  const auto failed = run_program("run " + scratch("slow2.toml", text));
  CHECK(failed.code == 3);
  CHECK(failed.output.find("wall-time budget") != std::string::npos);
  CHECK(failed.output.find("analysis.maximum_wall_time sets that budget") != std::string::npos);
}

TEST_CASE("sweep, tolerance and suggest on the bundled demo scenario (physical models)") {
  CommonOptions o;
  o.file = scenario_path("greenhouse_valve.toml");
  o.quiet = true;
  std::ostringstream sweep;
  CHECK(cmd_sweep(o, {"clamp.zener.overrides.breakdown_voltage=12V:24V:3"}, "", sweep) == 0);
  int rows = 0;
  std::istringstream in(sweep.str());
  for (std::string l; std::getline(in, l);) rows += l.find(",pass,") != std::string::npos || l.find(",warn,") != std::string::npos ||
                                                    l.find(",fail,") != std::string::npos;
  CHECK(rows == 3);
  std::ostringstream tol;
  CHECK(cmd_tolerance(o, 4, 3, tol) == 0);
  CHECK(tol.str().find("64 corners and 4 Monte Carlo samples") != std::string::npos);
  std::ostringstream sug;
  CHECK(cmd_suggest(o, "5 ms", "48 V", 5, sug) == 0);
  CHECK(sug.str().find("candidates meet both") != std::string::npos);
}

TEST_CASE("faults: readings grouped by symptom, JSON and CSV") {
  CommonOptions o;
  o.file = scratch("faults.toml", kPwlScenario);
  std::ostringstream text;
  const std::string csv = scratch("faults.csv", "");
  CHECK(cmd_faults(o, csv, text) == 0);
  for (const char* s : {"== relay never operates ==", "== relay never releases ==", "switch collector-emitter shorted", "healthy on"}) {
    CHECK(text.str().find(s) != std::string::npos);
  }
  o.json = true;
  std::ostringstream js;
  CHECK(cmd_faults(o, "", js) == 0);
  const auto j = nlohmann::json::parse(js.str());
  CHECK(j.at("healthy").at("readings").contains("switch"));
  CHECK(j.at("by_symptom").contains("relay never operates"));
  std::ifstream f(csv);
  std::string caution, header;
  std::getline(f, caution);
  std::getline(f, header);
  CHECK(caution == "# " + std::string(kCautionLine));
  CHECK(header == "part,fault,symptoms,node,healthy_on_V,faulty_on_V,healthy_off_V,faulty_off_V");
}
