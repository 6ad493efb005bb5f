#pragma once
// The recorded past of the elements that look back in time (a transmission line reads, at each
// end, the wave that left the other end one delay earlier). A run appends every accepted point
// (values and their time rates); between points a channel is the cubic Hermite interpolant of
// both ends, the same order as the Rosenbrock step's dense output. Before the first point a
// channel keeps its first value: a run starts from a DC operating point, whose past is itself.
#include <vector>

namespace coilkick::engine {

class DelayHistory {
 public:
  explicit DelayHistory(int channels) : channels_(channels) {}
  int channel_count() const { return channels_; }
  bool empty() const { return times_.empty(); }
  // Forgets everything; the first point of a run follows.
  void clear();
  // A point at time t_s after the last one (a point at the last one's time replaces it), with the
  // rates of the piece that ends there and of the piece that starts there.
  void append(double t_s, const double* values, const double* rates_before, const double* rates_after);
  double last_time_s() const { return times_.back(); }
  // The point before the last (the last itself if there is only one).
  double previous_time_s() const { return times_.size() > 1 ? times_[times_.size() - 2] : times_.back(); }
  // The last point's rates before it, and its rates after it (set once the step after it is known).
  const double* last_rates_before() const { return rates_before_.data() + rates_before_.size() - static_cast<std::size_t>(channels_); }
  void set_last_rates_after(const double* rates);
  void set_last_rates(const double* before, const double* after);
  // The last point is a kink (a source's corner, or an arriving kink): the rates on its two sides
  // differ. A kink reaches the line's other end one delay later, where a step must land on it —
  // a step over it would integrate a forcing whose slope jumps inside the step, which its error
  // estimate does not see.
  void mark_kink() { kinks_.push_back(times_.back()); }
  // The time of the n-th recorded point strictly after t_s; +inf if there are fewer.
  double point_after(double t_s, int n) const;
  // The first kink strictly after t_s; +inf if none.
  double next_kink_after(double t_s) const;
  // Value and time rate of a channel at t_s (clamped to the first point before it; after the
  // last point the last piece is extended, which a run never asks for). On a kink the rate is
  // that of the piece before it (`before`: a step's own evaluations) or after it.
  double value(int channel, double t_s) const;
  double rate(int channel, double t_s, bool before) const;
  // The channel at from_s and at every recorded point after it lies within `tolerance` of the
  // tangent at the last point (value and rate before it).
  bool follows_tangent(int channel, double from_s, double tolerance) const;
  // ∫ value² dt over [from_s, to_s] (exact for the cubic pieces: 4-point Gauss–Legendre).
  double integral_of_square(int channel, double from_s, double to_s) const;

 private:
  int channels_;
  // Point-major, channels_ per point.
  std::vector<double> times_, values_, rates_before_, rates_after_;
  std::vector<double> kinks_;
  mutable std::size_t cursor_ = 0;              // the piece of the last lookup (lookups move slowly)
  // Index k of the piece [t_k, t_{k+1}] holding t (t inside the recorded span); on a point, the
  // piece that ends there (`before`) or starts there.
  std::size_t piece(double t_s, bool before = false) const;
  void hermite(int channel, std::size_t k, double t_s, double* value, double* rate) const;
};

// One element's window on the history: its channels start at `first`. Null history: the element
// is at a DC operating point (no run yet, or the operating-point solve) and has no past.
// `before`: the evaluation belongs to the step that ends at its instant (its rates are those of
// the pieces before a kink).
struct DelayedValues {
  const DelayHistory* history = nullptr;
  int first = 0;
  bool before = false;
  // The waves are quiet and the step longer than the delay: the element couples its ends
  // without delay (its lumped, quasi-static form).
  bool quasi_static = false;
  double value(int channel, double t_s) const { return history->value(first + channel, t_s); }
  double rate(int channel, double t_s) const { return history->rate(first + channel, t_s, before); }
  double integral_of_square(int channel, double from_s, double to_s) const {
    return history->integral_of_square(first + channel, from_s, to_s);
  }
};

}  // namespace coilkick::engine
