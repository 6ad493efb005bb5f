#include "coilkick/engine/waveform.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>
#include <stdexcept>

namespace coilkick::engine {
namespace {

void require_finite(double v, const char* field) {
  if (!std::isfinite(v)) {
    throw std::invalid_argument(std::string("waveform: ") + field + " must be finite");
  }
}

void require_positive(double v, const char* field) {
  require_finite(v, field);
  if (!(v > 0.0)) {
    std::ostringstream m;
    m << "waveform: " << field << " must be > 0, got " << v;
    throw std::invalid_argument(m.str());
  }
}

// Value and slope on a pattern of points, constant outside it.
double pattern_value(const std::vector<std::pair<double, double>>& p, double t) {
  if (std::isnan(t)) return t;  // a failed trial step: propagate, the integrator rejects it
  if (t <= p.front().first) return p.front().second;
  if (t >= p.back().first) return p.back().second;
  auto it = std::upper_bound(p.begin(), p.end(), t,
                             [](double x, const std::pair<double, double>& q) { return x < q.first; });
  const auto& b = *it;
  const auto& a = *(it - 1);
  return a.second + (b.second - a.second) * (t - a.first) / (b.first - a.first);
}

double pattern_slope(const std::vector<std::pair<double, double>>& p, double t) {
  if (std::isnan(t)) return t;
  if (t < p.front().first || t >= p.back().first) return 0.0;
  auto it = std::upper_bound(p.begin(), p.end(), t,
                             [](double x, const std::pair<double, double>& q) { return x < q.first; });
  const auto& b = *it;
  const auto& a = *(it - 1);
  return (b.second - a.second) / (b.first - a.first);
}

}  // namespace

Waveform Waveform::constant(double value) {
  require_finite(value, "value");
  Waveform w;
  w.points_ = {{0.0, value}};
  std::ostringstream d;
  d << "constant " << value;
  w.description_ = d.str();
  return w;
}

Waveform Waveform::edge(double from_value, double to_value, double start_time_s,
                        double transition_time_s) {
  require_finite(from_value, "from_value");
  require_finite(to_value, "to_value");
  require_finite(start_time_s, "start_time_s");
  require_positive(transition_time_s, "transition_time_s");
  Waveform w;
  w.points_ = {{start_time_s, from_value}, {start_time_s + transition_time_s, to_value}};
  std::ostringstream d;
  d << "edge " << from_value << " -> " << to_value << " at " << start_time_s << " s over "
    << transition_time_s << " s";
  w.description_ = d.str();
  return w;
}

Waveform Waveform::pulse_train(double low_value, double high_value, double first_rise_s,
                               double rise_time_s, double high_time_s, double fall_time_s,
                               double period_s, int count) {
  require_finite(low_value, "low_value");
  require_finite(high_value, "high_value");
  require_finite(first_rise_s, "first_rise_s");
  require_positive(rise_time_s, "rise_time_s");
  require_finite(high_time_s, "high_time_s");
  if (high_time_s < 0.0) throw std::invalid_argument("waveform: high_time_s must be >= 0");
  require_positive(fall_time_s, "fall_time_s");
  require_positive(period_s, "period_s");
  if (rise_time_s + high_time_s + fall_time_s > period_s) {
    throw std::invalid_argument(
        "waveform: rise_time_s + high_time_s + fall_time_s must not exceed period_s");
  }
  if (count < 0) throw std::invalid_argument("waveform: count must be >= 0 (0 = unlimited)");
  Waveform w;
  w.origin_ = first_rise_s;
  w.period_ = period_s;
  w.count_ = count;
  w.points_ = {{0.0, low_value},
               {rise_time_s, high_value},
               {rise_time_s + high_time_s, high_value},
               {rise_time_s + high_time_s + fall_time_s, low_value}};
  std::ostringstream d;
  d << "pulse train " << low_value << "/" << high_value << " from " << first_rise_s
    << " s, period " << period_s << " s";
  w.description_ = d.str();
  return w;
}

Waveform Waveform::table(std::vector<std::pair<double, double>> points) {
  if (points.empty()) throw std::invalid_argument("waveform: table needs at least one point");
  for (std::size_t k = 0; k < points.size(); ++k) {
    require_finite(points[k].first, "table time");
    require_finite(points[k].second, "table value");
    if (k > 0 && !(points[k].first > points[k - 1].first)) {
      std::ostringstream m;
      m << "waveform: table times must be strictly increasing (point " << k << " at "
        << points[k].first << " s follows " << points[k - 1].first << " s)";
      throw std::invalid_argument(m.str());
    }
  }
  Waveform w;
  w.points_ = std::move(points);
  std::ostringstream d;
  d << "table of " << w.points_.size() << " points";
  w.description_ = d.str();
  return w;
}

bool Waveform::local_time(double t_s, double& local_s) const {
  if (period_ == 0.0 || std::isnan(t_s)) {
    local_s = t_s;
    return true;
  }
  const double rel = t_s - origin_;
  if (rel < 0.0) return false;
  const double k = std::floor(rel / period_);
  if (count_ > 0 && k >= count_) return false;
  local_s = rel - k * period_;
  return true;
}

double Waveform::value_at(double t_s) const {
  double local = 0.0;
  if (!local_time(t_s, local)) return points_.front().second;  // periodic: low outside periods
  return pattern_value(points_, local);
}

double Waveform::slope_at(double t_s) const {
  double local = 0.0;
  if (!local_time(t_s, local)) return 0.0;
  return pattern_slope(points_, local);
}

std::optional<double> Waveform::next_corner_after(double t_s) const {
  if (period_ == 0.0) {
    for (const auto& p : points_) {
      if (p.first > t_s) return p.first;
    }
    return std::nullopt;
  }
  const double rel = t_s - origin_;
  double k = rel < 0.0 ? 0.0 : std::floor(rel / period_);
  for (int guard = 0; guard < 3; ++guard, k += 1.0) {
    if (count_ > 0 && k >= count_) return std::nullopt;
    for (const auto& p : points_) {
      const double c = origin_ + k * period_ + p.first;
      if (c > t_s) return c;
    }
  }
  return std::nullopt;
}

std::string Waveform::describe() const { return description_; }

}  // namespace coilkick::engine
