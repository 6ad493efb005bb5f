#pragma once
// Bench captures: the CSV an oscilloscope or a data logger writes — header lines (skipped, the
// last one naming the columns, units in brackets: "time (s)", "CH1 [mV]"), comma, semicolon or
// tab separated (with semicolons a decimal comma is read too), a time column and channels.
// The caller maps columns to roles (time, current, voltage, contact, drive) by name or 1-based number;
// a current measured as a shunt's voltage is divided by the shunt resistance. Time zero can be
// moved to the switch-voltage edge of a switch-off or switch-on capture, or to the drive edge.
//
// Errors name the file and line: a missing column (with the columns there are), a non-numeric
// or empty value, time that does not increase, too few samples, a unit that does not fit its
// role (a current channel in volts without a shunt).
#include <limits>
#include <map>
#include <string>
#include <vector>

namespace coilkick::scenario {

enum class CaptureTimeZero { as_recorded, switch_voltage_edge, drive_edge };

struct CaptureOptions {
  // role ("time", "current", "voltage", "contact", "drive") -> column name or 1-based column number.
  // Unmapped roles: "time" is the first column; the others are absent.
  std::map<std::string, std::string> channels;
  // column (as mapped) -> unit with an optional SI prefix ("mV", "A"), where the header has none
  // or says something else; a role's unit must fit it (s, A, V, and V for a shunt's current).
  std::map<std::string, std::string> units;
  double shunt_resistance_ohm = std::numeric_limits<double>::quiet_NaN();  // current = shunt voltage / this
  CaptureTimeZero time_zero = CaptureTimeZero::as_recorded;
  std::size_t minimum_samples = 16;
};

struct Capture {
  std::string file;
  std::vector<double> time_s;
  std::vector<double> current_A;  // empty where the capture has no current channel
  std::vector<double> voltage_V;  // the switch voltage; empty where absent
  std::vector<double> contact;    // contact monitor, as recorded (any unit); empty where absent
  std::vector<double> drive_V;    // the driver's logic input (the drive edge); empty where absent
  double time_shift_s = 0.0;      // subtracted from the recorded times (time zero)
  int first_data_line = 0;
};

// A signal's edge: the level half way from its first value to the value farthest from it (a
// switch voltage's switch-off peak or switch-on low, a drive signal's other level), and which way
// the signal crosses it (+1 rising, −1 falling, 0 where it never moves by more than 1e-9 of its
// first value, or 1e-9 V).
struct EdgeLevel {
  double level = 0.0;
  int direction = 0;
};
EdgeLevel edge_level(const std::vector<double>& signal);

// Where the signal first reaches its edge_level (linear between samples): the edge a capture's
// time zero and a fit's alignment use; NaN where the signal never moves.
double edge_time_s(const std::vector<double>& time_s, const std::vector<double>& signal);

// Throws std::invalid_argument "file:line: ..." for anything it cannot read as asked.
Capture read_capture_text(const std::string& text, const std::string& file, const CaptureOptions& options);
Capture read_capture_file(const std::string& path, const CaptureOptions& options);

}  // namespace coilkick::scenario
