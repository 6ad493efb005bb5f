// Bench captures (scenario/capture.hpp): CSV as instruments write it, read into SI units, and
// every malformed capture an error with its file and line. Unit prefixes: the SI Brochure (BIPM,
// 9th ed., 2019, §3); the numbers below are exact in those units.
#include <doctest/doctest.h>

#include "../approx.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>
#include <string>

#include "coilkick/scenario/capture.hpp"

using namespace coilkick::scenario;

namespace {
// A switch-off of our own (invented demo values): 1 µs samples, the switch voltage a linear
// ramp from 0.1 V to 40.1 V between 20 µs and 30 µs, the current falling linearly.
std::string ramp_capture(char sep, bool decimal_comma, const std::string& header) {
  std::ostringstream o;
  o << "# demo capture (invented)\n" << "Record length" << sep << "40\n" << header << "\n";
  for (int k = 0; k < 40; ++k) {
    const double t = k * 1e-6;
    const double v = t < 20e-6 ? 0.1 : t > 30e-6 ? 40.1 : 0.1 + 40.0 * (t - 20e-6) / 10e-6;
    const double i_mA = 500.0 - 10.0 * k;
    std::ostringstream row;
    row.precision(10);
    row << t << sep << i_mA << sep << v;
    std::string r = row.str();
    if (decimal_comma) std::replace(r.begin(), r.end(), '.', ',');
    o << r << "\n";
  }
  return o.str();
}
}  // namespace

TEST_CASE("a capture with header lines, units in brackets, semicolons and decimal commas") {
  CaptureOptions o;
  o.channels = {{"current", "coil current"}, {"voltage", "CH2"}};
  const Capture c = read_capture_text(ramp_capture(';', true, "time (s);coil current [mA];CH2 (V)"), "scope.csv", o);
  REQUIRE(c.time_s.size() == 40);
  CHECK(c.first_data_line == 4);
  CHECK(c.time_s[5] == rel(5e-6).epsilon(1e-12));
  CHECK(c.current_A[10] == rel(0.4).epsilon(1e-12));  // 400 mA
  CHECK(c.voltage_V[25] == rel(20.1).epsilon(1e-12));
  CHECK(c.contact.empty());
}

TEST_CASE("a shunt's voltage as the current, units given for a header without them, columns by number") {
  CaptureOptions o;
  o.channels = {{"current", "2"}, {"voltage", "3"}};
  o.units = {{"2", "mV"}, {"1", "s"}};
  o.shunt_resistance_ohm = 0.1;
  const Capture c = read_capture_text(ramp_capture(',', false, "t,shunt,drain"), "logger.csv", o);
  // 400 mV across 0.1 Ω: 4 A.
  CHECK(c.current_A[10] == rel(4.0).epsilon(1e-12));
}

TEST_CASE("time zero at the switch-voltage edge: half way from the first value to the peak") {
  CaptureOptions o;
  o.channels = {{"voltage", "CH2"}};
  o.time_zero = CaptureTimeZero::switch_voltage_edge;
  const Capture c = read_capture_text(ramp_capture(',', false, "time (s),I (mA),CH2 (V)"), "edge.csv", o);
  // Half way from 0.1 V to 40.1 V is 20.1 V, reached on the linear ramp at 25 µs exactly.
  CHECK(c.time_shift_s == rel(25e-6).epsilon(1e-9));
  CHECK(c.time_s[0] == rel(-25e-6).epsilon(1e-9));
}

TEST_CASE("time zero at a falling edge (a switch-on's switch voltage, or a drive channel)") {
  // The ramp as a drive channel: half way (20.1 V) at 25 µs; turned upside down (a switch-on's
  // switch voltage, 40.1 V falling to 0.1 V) half way at the same instant.
  std::string text = ramp_capture(',', false, "time (s),I (mA),logic (V)");
  CaptureOptions o;
  o.channels = {{"drive", "logic"}};
  o.time_zero = CaptureTimeZero::drive_edge;
  Capture c = read_capture_text(text, "drive.csv", o);
  REQUIRE(c.drive_V.size() == 40);
  CHECK(c.voltage_V.empty());
  CHECK(c.time_shift_s == rel(25e-6).epsilon(1e-9));
  std::vector<double> falling;
  for (double v : c.drive_V) falling.push_back(40.2 - v);
  std::vector<double> t(c.time_s.begin(), c.time_s.end());
  CHECK(edge_time_s(t, falling) == rel_or_abs(0.0, 1e-9, 1e-12));
  o.time_zero = CaptureTimeZero::drive_edge;
  o.channels = {{"voltage", "3"}};
  CHECK_THROWS_WITH_AS(read_capture_text(text, "drive.csv", o), doctest::Contains("needs a drive channel"), std::invalid_argument);
}

TEST_CASE("malformed captures: one clear message with the file and line each") {
  const std::string good = ramp_capture(',', false, "time (s),I (mA),CH2 (V)");
  auto replace_line = [&](int line, const std::string& text) {
    std::istringstream in(good);
    std::ostringstream out;
    std::string l;
    int n = 0;
    while (std::getline(in, l)) out << (++n == line ? text : l) << "\n";
    return out.str();
  };
  struct Row {
    const char* what;
    std::string text;
    CaptureOptions options;
    std::string expect;
  };
  CaptureOptions current_and_voltage;
  current_and_voltage.channels = {{"current", "I"}, {"voltage", "CH2"}};
  CaptureOptions misspelt = current_and_voltage;
  misspelt.channels["voltage"] = "CH3";
  CaptureOptions volts_for_current;
  volts_for_current.channels = {{"current", "CH2"}};
  CaptureOptions column_nine;
  column_nine.channels = {{"voltage", "9"}};
  CaptureOptions unknown_role;
  unknown_role.channels = {{"temperature", "2"}};
  CaptureOptions many;
  many.minimum_samples = 100;
  const std::vector<Row> rows{
      {"a column that is not there", good, misspelt, "bad.csv: channel voltage=CH3: no such column; there are columns 1 'time', 2 'I', 3 'CH2'"},
      {"a column number out of range", good, column_nine, "channel voltage=9: there are columns"},
      {"text among the numbers", replace_line(14, "1e-05,abc,0.1"), current_and_voltage, "bad.csv:14: the current ('I') 'abc' is not a number"},
      {"an empty value", replace_line(14, "1e-05,,0.1"), current_and_voltage, "bad.csv:14: the current ('I') is empty"},
      {"a NaN row", replace_line(20, "1.6e-05,340,nan"), current_and_voltage, "bad.csv:20: the voltage ('CH2') 'nan' is not a finite number"},
      {"time that goes back", replace_line(30, "1e-06,240,20.1"), current_and_voltage, "bad.csv:30: time 1e-06 s does not increase"},
      {"a missing column in a row", replace_line(12, "8e-06,420"), current_and_voltage, "bad.csv:12: column 3 ('CH2', the voltage) is missing"},
      {"too few samples", good, many, "bad.csv: 40 samples; at least 100 are needed"},
      {"a current channel in volts without a shunt", good, volts_for_current,
       "channel current (column 'CH2', unit 'V') is in V: a current measured as a shunt's voltage needs the shunt resistance"},
      {"no data at all", "# only a header\ntime,I\n", current_and_voltage, "bad.csv: no data rows"},
      {"an empty file", "", current_and_voltage, "bad.csv: the capture is empty"},
      {"an unknown role", good, unknown_role, "channel role 'temperature' is not one of time, current, voltage, contact, drive"},
  };
  for (const auto& r : rows) {
    CAPTURE(std::string(r.what));
    std::string msg = "no error";
    try {
      (void)read_capture_text(r.text, "bad.csv", r.options);
    } catch (const std::invalid_argument& e) {
      msg = e.what();
    }
    CAPTURE(msg);
    CHECK(msg.find(r.expect) != std::string::npos);
  }
  CHECK_THROWS_WITH_AS(read_capture_file("/nonexistent/capture.csv", {}), "/nonexistent/capture.csv: cannot read the capture file",
                       std::invalid_argument);
}
