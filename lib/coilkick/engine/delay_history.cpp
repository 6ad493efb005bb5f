#include "coilkick/engine/delay_history.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

namespace coilkick::engine {

void DelayHistory::clear() {
  times_.clear();
  values_.clear();
  rates_before_.clear();
  rates_after_.clear();
  kinks_.clear();
  cursor_ = 0;
}

void DelayHistory::append(double t_s, const double* values, const double* rates_before, const double* rates_after) {
  const auto n = static_cast<std::size_t>(channels_);
  if (!times_.empty() && t_s <= times_.back()) {
    if (t_s < times_.back()) throw std::logic_error("delay history: points must come in time order");
    times_.pop_back();
    values_.resize(values_.size() - n);
    rates_before_.resize(rates_before_.size() - n);
    rates_after_.resize(rates_after_.size() - n);
  }
  times_.push_back(t_s);
  values_.insert(values_.end(), values, values + n);
  rates_before_.insert(rates_before_.end(), rates_before, rates_before + n);
  rates_after_.insert(rates_after_.end(), rates_after, rates_after + n);
}

void DelayHistory::set_last_rates(const double* before, const double* after) {
  std::copy(before, before + channels_, rates_before_.end() - channels_);
  std::copy(after, after + channels_, rates_after_.end() - channels_);
}

void DelayHistory::set_last_rates_after(const double* rates) {
  std::copy(rates, rates + channels_, rates_after_.end() - channels_);
}

double DelayHistory::point_after(double t_s, int n) const {
  const auto it = std::upper_bound(times_.begin(), times_.end(), t_s);
  const auto left = times_.end() - it;
  return left < n ? std::numeric_limits<double>::infinity() : *(it + (n - 1));
}

double DelayHistory::next_kink_after(double t_s) const {
  const auto it = std::upper_bound(kinks_.begin(), kinks_.end(), t_s);
  return it == kinks_.end() ? std::numeric_limits<double>::infinity() : *it;
}

std::size_t DelayHistory::piece(double t_s, bool before) const {
  const std::size_t last = times_.size() - 2;  // pieces 0..last
  auto holds = [&](std::size_t k) {
    return before ? (times_[k] < t_s || k == 0) && t_s <= times_[k + 1]
                  : times_[k] <= t_s && (t_s < times_[k + 1] || k == last);
  };
  for (std::size_t k = std::min(cursor_, last); k <= std::min(cursor_ + 1, last); ++k) {
    if (holds(k)) return cursor_ = k;
  }
  const auto it = before ? std::lower_bound(times_.begin(), times_.end(), t_s)
                         : std::upper_bound(times_.begin(), times_.end(), t_s);
  const auto idx = static_cast<std::size_t>(it - times_.begin());
  return cursor_ = idx == 0 ? 0 : std::min(idx - 1, last);
}

void DelayHistory::hermite(int channel, std::size_t k, double t_s, double* value, double* rate) const {
  const auto n = static_cast<std::size_t>(channels_);
  const auto c = static_cast<std::size_t>(channel);
  const double t0 = times_[k], h = times_[k + 1] - t0;
  const double y0 = values_[k * n + c], y1 = values_[(k + 1) * n + c];
  const double d0 = rates_after_[k * n + c] * h, d1 = rates_before_[(k + 1) * n + c] * h;
  const double s = (t_s - t0) / h, s2 = s * s, s3 = s2 * s;
  if (value) {
    *value = (2 * s3 - 3 * s2 + 1) * y0 + (s3 - 2 * s2 + s) * d0 + (-2 * s3 + 3 * s2) * y1 + (s3 - s2) * d1;
  }
  if (rate) {
    *rate = ((6 * s2 - 6 * s) * y0 + (3 * s2 - 4 * s + 1) * d0 + (-6 * s2 + 6 * s) * y1 + (3 * s2 - 2 * s) * d1) / h;
  }
}

double DelayHistory::value(int channel, double t_s) const {
  const auto n = static_cast<std::size_t>(channels_);
  if (t_s <= times_.front() || times_.size() == 1) {
    return t_s <= times_.front() ? values_[static_cast<std::size_t>(channel)]
                                 : values_[(times_.size() - 1) * n + static_cast<std::size_t>(channel)];
  }
  double v = 0.0;
  hermite(channel, piece(t_s), t_s, &v, nullptr);
  return v;
}

double DelayHistory::rate(int channel, double t_s, bool before) const {
  if (t_s < times_.front() || (before && t_s == times_.front()) || times_.size() == 1) return 0.0;
  double r = 0.0;
  hermite(channel, piece(t_s, before), t_s, nullptr, &r);
  return r;
}

bool DelayHistory::follows_tangent(int channel, double from_s, double tolerance) const {
  const auto n = static_cast<std::size_t>(channels_);
  const auto c = static_cast<std::size_t>(channel);
  const double t1 = times_.back(), v1 = values_[(times_.size() - 1) * n + c];
  const double r1 = rates_before_[(times_.size() - 1) * n + c];
  auto off_line = [&](double t, double v) { return std::abs(v - (v1 - (t1 - t) * r1)) > tolerance; };
  if (off_line(from_s, value(channel, from_s))) return false;
  auto it = std::upper_bound(times_.begin(), times_.end(), from_s);
  for (auto k = static_cast<std::size_t>(it - times_.begin()); k + 1 < times_.size(); ++k) {
    if (off_line(times_[k], values_[k * n + c])) return false;
  }
  return true;
}

double DelayHistory::integral_of_square(int channel, double from_s, double to_s) const {
  if (!(to_s > from_s)) return 0.0;
  double total = 0.0;
  // Before the first point the channel is constant.
  if (from_s < times_.front()) {
    const double v = values_[static_cast<std::size_t>(channel)];
    total += v * v * (std::min(to_s, times_.front()) - from_s);
    from_s = times_.front();
  }
  if (times_.size() < 2 || !(to_s > from_s)) return total;
  // 4-point Gauss–Legendre on each piece: exact for the sixth-degree square of a cubic.
  static const double node[4] = {-0.8611363115940526, -0.3399810435848563, 0.3399810435848563, 0.8611363115940526};
  static const double weight[4] = {0.3478548451374538, 0.6521451548625461, 0.6521451548625461, 0.3478548451374538};
  for (std::size_t k = piece(from_s); k + 1 < times_.size() && times_[k] < to_s; ++k) {
    const double a = std::max(from_s, times_[k]), b = std::min(to_s, times_[k + 1]);
    if (!(b > a)) continue;
    for (int q = 0; q < 4; ++q) {
      double v = 0.0;
      hermite(channel, k, 0.5 * (a + b) + 0.5 * (b - a) * node[q], &v, nullptr);
      total += 0.5 * (b - a) * weight[q] * v * v;
    }
  }
  return total;
}

}  // namespace coilkick::engine
