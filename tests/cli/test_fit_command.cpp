// coilkick fit end to end on the demo capture (models/captures/greenhouse_valve_switch_off.csv:
// demo data, invented, written by scripts/make_demo_capture.py from known values with noise,
// 12-bit steps and a 0.5 ohm shunt): the known values found within the reported errors, the coil
// record read back by the catalogue, the chart and CSV, and the messages for bad input.
#include <doctest/doctest.h>

#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "cli_support.hpp"
#include "coilkick/catalogue/catalogue.hpp"

using namespace coilkick;
using namespace test_support;

namespace {
std::string capture_path(const char* name = "greenhouse_valve_switch_off.csv") {
  return catalogue::default_models_directory() + "/captures/" + name;
}

std::string read_file(const std::string& path) {
  std::ifstream f(path);
  std::stringstream s;
  s << f.rdbuf();
  return s.str();
}

// The known values, from the capture's own header line "# known values: key = value, ...".
std::map<std::string, double> known_values(const std::string& capture) {
  std::map<std::string, double> out;
  std::istringstream in(read_file(capture));
  std::string line;
  while (std::getline(in, line)) {
    const std::string tag = "# known values: ";
    if (line.rfind(tag, 0) != 0) continue;
    std::istringstream items(line.substr(tag.size(), line.find(" (SI units)") - tag.size()));
    std::string item;
    while (std::getline(items, item, ',')) {
      const auto eq = item.find('=');
      std::string key = item.substr(0, eq);
      key.erase(0, key.find_first_not_of(' '));
      key.erase(key.find_last_not_of(' ') + 1);
      out[key] = std::stod(item.substr(eq + 1));
    }
  }
  return out;
}
}  // namespace

TEST_CASE("fit: the demo capture's known values found within 3 standard errors, and the record, chart and CSV written") {
  const auto known = known_values(capture_path());
  REQUIRE(known.size() == 3);
  const auto dir = std::filesystem::temp_directory_path() / "coilkick_fit_test";
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir / "models" / "coils");
  const auto record = (dir / "models" / "coils" / "valve_on_the_bench.toml").string();
  const auto svg = (dir / "overlay.svg").string(), csv = (dir / "fit.csv").string();
  const auto r = run_program("fit " + scenario_path("greenhouse_valve.toml") + " --capture " + capture_path() +
                             " --shunt \"0.5 ohm\" --json --quiet --coil-record " + record + " --plot " + svg + " --csv " + csv);
  REQUIRE(r.code == 0);
  const auto j = nlohmann::json::parse(r.output);
  CHECK(j["edge"] == "switch-off");
  CHECK(j["samples"] == 4001);
  std::map<std::string, double> fitted;
  for (const auto& p : j["parameters"]) {
    const std::string key = p["key"];
    CAPTURE(key);
    REQUIRE(known.count(key));
    const double v = p["value"], se = p["standard_error"];
    fitted[key] = v;
    CHECK(std::abs(v - known.at(key)) < 3.0 * se);
    CHECK(p["determined"] == true);
  }
  CHECK(fitted.size() == 3);
  // The noise is estimated from the samples before the edge: 0.6 mV of noise and 12-bit steps of
  // 0.2 mV on a 0.5 ohm shunt are 1.2 mA and 0.11 mA rms; with that weight a fit that explains the
  // capture leaves residuals of about one (10 %: the sample spread of the estimate from 500 samples).
  CHECK(std::abs(double(j["current_noise_A"]) - 1.2e-3) < 0.1 * 1.2e-3);
  CHECK(std::abs(double(j["residual_rms"]) - 1.0) < 0.1);
  CHECK(j.contains("caution"));

  // The record, read back by the catalogue with the bundled parts beside it.
  std::filesystem::create_directory_symlink(catalogue::default_models_directory() + "/parts", dir / "models" / "parts");
  catalogue::Catalogue parts;
  parts.load_directory((dir / "models").string());
  const auto& coil = parts.part("valve_on_the_bench");
  CHECK(coil.family == "coil");
  CHECK(coil.parameter("inductance") == fitted.at("coil.inductance"));  // the shortest text reads back the same double
  CHECK(coil.parameter("core_loss_resistance") == fitted.at("coil.core_loss_resistance"));
  CHECK(coil.parameter("release_time") == fitted.at("relay.release_time"));
  CHECK(coil.parameters.at("inductance").source.find("fitted to greenhouse_valve_switch_off.csv") == 0);
  CHECK(coil.parameters.at("resistance_at_20C").source.find("not fitted") != std::string::npos);

  const std::string chart = read_file(svg);
  CHECK(chart.rfind("<svg", 0) == 0);
  CHECK(chart.find("Caution") != std::string::npos);
  const std::string table = read_file(csv);
  CHECK(table.rfind("# Caution", 0) == 0);
  CHECK(std::count(table.begin(), table.end(), '\n') == 4001 + 2);
}

TEST_CASE("fit: the demo switch-on capture of the fan relay: known values, and the armature's flight beside the model's") {
  // models/captures/fan_relay_switch_on.csv: demo data (invented), the relay's switch-on with its
  // armature from known values, a 10 ohm shunt, 5 us samples.
  const auto capture = capture_path("fan_relay_switch_on.csv");
  const auto known = known_values(capture);
  REQUIRE(known.size() == 3);
  const auto r = run_program("fit " + scenario_path("fan_relay.toml") + " --capture " + capture + " --shunt \"10 ohm\" --json --quiet");
  REQUIRE(r.code == 0);
  const auto j = nlohmann::json::parse(r.output);
  CHECK(j["edge"] == "switch-on");
  for (const auto& p : j["parameters"]) {
    const std::string key = p["key"];
    CAPTURE(key);
    REQUIRE(known.count(key));
    CHECK(std::abs(double(p["value"]) - known.at(key)) < 3.0 * double(p["standard_error"]));
  }
  // The dip read from the noisy capture and from the fitted model's current: the same flight
  // within the smoothing window (7 samples of 5 us) and a few samples more.
  const double measured_end = j["measured_armature_motion"]["end_s"], model_end = j["model_armature_motion"]["end_s"];
  CHECK(std::abs(measured_end - model_end) < 100e-6);
  // Contact make (the operate time, IEC 61810-1) comes before the armature rests on its stop
  // (the over-travel) and after the flight began (the operate time counts from the drive edge,
  // the flight from the switch-voltage edge: microseconds apart, against milliseconds here).
  const double make = j["model_operate_time_s"];
  CHECK(make > double(j["measured_armature_motion"]["start_s"]));
  CHECK(make < measured_end);
}

TEST_CASE("fit: the text report") {
  const auto r = run_program("fit " + scenario_path("greenhouse_valve.toml") + " --capture " + capture_path() +
                             " --shunt \"0.5 ohm\" --quiet --parameters coil.inductance");
  REQUIRE(r.code == 0);
  for (const char* text : {"switch-off, 4001 samples", "coil.inductance", "clock shift of the capture", "Residual RMS", "Caution"}) {
    CAPTURE(text);
    CHECK(r.output.find(text) != std::string::npos);
  }
}

TEST_CASE("fit: bad input is named, with exit code 2") {
  const std::string base = "fit " + scenario_path("greenhouse_valve.toml") + " --quiet --capture ";
  const std::string ok = base + capture_path() + " --shunt \"0.5 ohm\"";
  const struct {
    std::string args;
    const char* message;
  } rows[] = {
      {base + "/nonexistent/capture.csv", "cannot read the capture file"},
      {ok + " --channels current=9", "greenhouse_valve_switch_off.csv"},
      {ok + " --channels speed=2", "unknown channel role 'speed'"},
      {ok + " --channels current", "is not NAME=VALUE"},
      {ok + " --parameters coil.inductanse", "did you mean 'coil.inductance'"},
      {ok + " --noise \"-1 mA\"", "--noise: must be > 0"},
      {ok + " --noise \"1 V\"", "--noise:"},
      {base + capture_path() + " --shunt \"0 ohm\"", "--shunt: must be > 0"},
      {base + capture_path(), "needs the shunt resistance"},
      {ok + " --coil-record /nonexistent/dir/x.toml", "--coil-record: cannot write"},
  };
  for (const auto& row : rows) {
    CAPTURE(row.args);
    const auto r = run_program(row.args);
    CHECK(r.code == 2);
    CHECK(r.output.find(row.message) != std::string::npos);
    CHECK(r.output.find("internal error") == std::string::npos);
  }
}
