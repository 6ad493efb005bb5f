#pragma once
// Time waveforms of independent sources. Every waveform is piecewise linear in time: constant,
// one edge with a finite transition time, a trapezoidal pulse train, or a table of points.
// Corners (where the slope changes) are reported so that the integrator never steps over one.
// Values are in the unit of the source that uses the waveform (V for a voltage source, A for a
// current source).
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace coilkick::engine {

class Waveform {
 public:
  // Holds `value` for all time.
  static Waveform constant(double value);
  // `from_value` until start_time_s, then a straight ramp to `to_value` over transition_time_s
  // (must be > 0: an ideal step has no physical meaning here and would make dv/dt infinite).
  static Waveform edge(double from_value, double to_value, double start_time_s,
                       double transition_time_s);
  // Trapezoidal pulses: `low_value` until first_rise_s, rise over rise_time_s to `high_value`,
  // hold for high_time_s, fall over fall_time_s, stay low until the next period starts.
  // count = 0 repeats forever.
  static Waveform pulse_train(double low_value, double high_value, double first_rise_s,
                              double rise_time_s, double high_time_s, double fall_time_s,
                              double period_s, int count = 0);
  // Straight lines between (time_s, value) points, times strictly increasing; constant before the
  // first and after the last point.
  static Waveform table(std::vector<std::pair<double, double>> points);

  // (A constant waveform answers inline: every evaluation of a circuit reads its sources.) A NaN
  // time (a failed trial step) gives NaN, which the integrator rejects.
  double value(double t_s) const { return constant_at(t_s) ? points_.front().second : value_at(t_s); }
  // Slope of the segment that contains the instant `t_s`; at a corner this is the slope of the
  // segment that starts there (right-continuous).
  double slope(double t_s) const { return constant_at(t_s) ? 0.0 : slope_at(t_s); }
  // First corner strictly after t_s, if any.
  std::optional<double> next_corner_after(double t_s) const;
  // A short description, e.g. "edge 5 -> 0 at 1e-3 s over 2e-8 s".
  std::string describe() const;

 private:
  Waveform() = default;
  // One period's pattern (or the whole waveform when period_ == 0), times relative to origin_.
  std::vector<std::pair<double, double>> points_;
  double origin_ = 0.0;
  double period_ = 0.0;  // 0: not periodic
  int count_ = 0;        // periods, 0 = unlimited
  std::string description_;

  bool constant_at(double t_s) const { return points_.size() == 1 && period_ == 0.0 && t_s == t_s; }  // NaN t: not answered here
  double value_at(double t_s) const;
  double slope_at(double t_s) const;
  // Maps t to the position within the pattern; returns false if t lies outside all periods.
  bool local_time(double t_s, double& local_s) const;
};

}  // namespace coilkick::engine
