#include "coilkick/engine/event_locator.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace coilkick::engine {
namespace {
bool better(EventSpec::Kind kind, double candidate, double current) {
  if (std::isnan(current)) return true;
  return kind == EventSpec::Kind::maximum ? candidate > current : candidate < current;
}

// Golden-section search for the largest value of s on [a, b], down to `tol` — or until one of
// the two inner points reaches `enough`. The bracket and its inner points are returned.
struct GoldenBracket {
  double a, b, c, d, sc, sd;
};
template <class S>
GoldenBracket golden_section(double a, double b, double tol, S&& s, double enough = std::numeric_limits<double>::infinity()) {
  const double r = 0.5 * (std::sqrt(5.0) - 1.0);
  GoldenBracket g{a, b, b - r * (b - a), a + r * (b - a), 0.0, 0.0};
  g.sc = s(g.c);
  g.sd = s(g.d);
  for (int it = 0; it < 200 && (g.b - g.a) > tol && g.sc < enough && g.sd < enough; ++it) {
    if (g.sc > g.sd) {
      g.b = g.d;
      g.d = g.c;
      g.sd = g.sc;
      g.c = g.b - r * (g.b - g.a);
      g.sc = s(g.c);
    } else {
      g.a = g.c;
      g.c = g.d;
      g.sc = g.sd;
      g.d = g.a + r * (g.b - g.a);
      g.sd = s(g.d);
    }
  }
  return g;
}
}  // namespace

EventLocator::EventLocator(const std::vector<EventSpec>& specs, int state_size,
                           double time_tolerance_s, double dense_agreement)
    : specs_(specs), tol_(time_tolerance_s), dense_agreement_(dense_agreement) {
  for (auto& s : samples_) {
    s.x.resize(static_cast<std::size_t>(state_size));
    s.rate.resize(static_cast<std::size_t>(state_size));
  }
  for (const auto& s : specs_) outcomes_.push_back({s.name, std::nullopt, std::nan("")});
  end_time_.assign(specs_.size(), std::nan(""));
  end_value_.assign(specs_.size(), std::nan(""));
  kept_.resize(specs_.size());
  best_point_ = outcomes_;
}

double EventLocator::probe_at_start(std::size_t k, double t0, const double* x0, const double* r0) {
  return end_time_[k] == t0 ? end_value_[k] : specs_[k].probe(t0, x0, r0);
}

double EventLocator::probe_at_end(std::size_t k, double t1, const double* x1, const double* r1) {
  end_time_[k] = t1;
  end_value_[k] = specs_[k].probe(t1, x1, r1);
  return end_value_[k];
}

void EventLocator::forget_samples() {
  for (auto& s : samples_) s.t = std::numeric_limits<double>::quiet_NaN();
}

double EventLocator::probe_at(const EventSpec& e, double t, const Interpolant& f) {
  const bool wants_rates = e.probe.reads_rates();
  Sample* held = nullptr;
  for (auto& s : samples_) {
    if (s.t == t) held = &s;
  }
  if (!held || (wants_rates && !held->rates_valid)) {
    if (!held) {
      held = &samples_[next_sample_];
      next_sample_ = (next_sample_ + 1) % kSamplesKept;
    }
    f(t, held->x.data(), wants_rates ? held->rate.data() : nullptr);
    held->t = t;
    held->rates_valid = wants_rates;
  }
  return e.probe(t, held->x.data(), wants_rates ? held->rate.data() : nullptr);
}

void EventLocator::start(double t_s, const double* x, const double* rates) {
  for (std::size_t k = 0; k < specs_.size(); ++k) {
    const auto& e = specs_[k];
    if (e.kind == EventSpec::Kind::crossing || t_s < e.after_time_s) continue;
    outcomes_[k].time_s = t_s;
    outcomes_[k].value = e.probe(t_s, x, rates);
    best_point_[k] = outcomes_[k];
  }
}

double EventLocator::locate_crossing(const EventSpec& e, double a, double ga, double b,
                                     const Interpolant& f) {
  // Bisection on g = probe − threshold; ga has the pre-crossing sign.
  for (int it = 0; it < 200 && (b - a) > tol_; ++it) {
    const double m = 0.5 * (a + b);
    if (m <= a || m >= b) break;
    const double gm = probe_at(e, m, f) - e.threshold;
    if ((gm > 0.0) == (ga > 0.0) && gm != 0.0) {
      a = m;
      ga = gm;
    } else {
      b = m;
    }
  }
  return b;
}

void EventLocator::refine_extremum(std::size_t k, double a, double b, const KeptStep& step) {
  const auto& e = specs_[k];
  const double sign = e.kind == EventSpec::Kind::maximum ? 1.0 : -1.0;
  auto search = [&](const Interpolant& f) {
    forget_samples();  // another interpolant
    const GoldenBracket g = golden_section(a, b, tol_, [&](double t) { return sign * probe_at(e, t, f); });
    return 0.5 * (g.a + g.b);
  };
  auto value = [&](double t, const Interpolant& f) {
    forget_samples();
    return probe_at(e, t, f);
  };
  // The kept step holds the best sample of the run, so its refined value is the extremum, even
  // where it lies a little below the sample (which may have read the less exact rates).
  double t = search(step.dense), v = value(t, step.dense);
  if (step.exact) {
    const double v_exact = value(t, step.exact);
    if (step.finer && std::abs(v_exact - v) > dense_agreement_ * std::max(std::abs(v_exact), std::abs(v))) {
      t = search(step.finer(a, b));
      v = value(t, step.exact);
    } else {
      v = v_exact;
    }
  }
  outcomes_[k].time_s = t;
  outcomes_[k].value = v;
  if (step.exact && best_point_[k].time_s && better(e.kind, best_point_[k].value, v)) outcomes_[k] = best_point_[k];
  forget_samples();
}

double EventLocator::on_step(double t0, const double* x0, const double* r0, double t1,
                             const double* x1, const double* r1, const Interpolant& f,
                             const KeepInterpolant& keep) {
  forget_samples();  // a new step's interpolant
  // A run that ends inside this step ends there for every other event too: the stopping
  // crossings first, then the rest up to the earliest of them (a probe still rising when the run
  // stops — a coil's voltage as its last energy drains — would otherwise read its value at the
  // step's end, past the run's end, higher the longer the step).
  double stop_at = std::numeric_limits<double>::infinity();
  for (std::size_t k = 0; k < specs_.size(); ++k) {
    const auto& e = specs_[k];
    if (e.kind == EventSpec::Kind::crossing && e.stops_run && t1 >= e.after_time_s) stop_at = std::min(stop_at, on_crossing(k, t0, x0, r0, t1, x1, r1, f));
  }
  const bool stops = stop_at < t1;
  const double t_end = stops ? stop_at : t1;
  for (std::size_t k = 0; k < specs_.size(); ++k) {
    const auto& e = specs_[k];
    if (t_end < e.after_time_s || (e.kind == EventSpec::Kind::crossing && e.stops_run)) continue;
    if (e.kind == EventSpec::Kind::crossing) on_crossing(k, t0, x0, r0, t_end, stops ? nullptr : x1, r1, f);
    else on_extremum(k, t0, x0, r0, t_end, stops ? nullptr : x1, r1, f, keep);
  }
  return stop_at;
}

double EventLocator::probe_at_step_end(std::size_t k, double t1, const double* x1, const double* r1, const Interpolant& f) {
  return x1 ? probe_at_end(k, t1, x1, r1) : probe_at(specs_[k], t1, f);
}

double EventLocator::on_crossing(std::size_t k, double t0, const double* x0, const double* r0, double t1, const double* x1,
                                 const double* r1, const Interpolant& f) {
  const auto& e = specs_[k];
  const double a = std::max(t0, e.after_time_s);
  if (outcomes_[k].time_s) return std::numeric_limits<double>::infinity();  // first occurrence only
  auto crosses = [&e](double g0, double g1) {
    const bool falls = g0 > 0.0 && g1 <= 0.0, rises = g0 < 0.0 && g1 >= 0.0;
    return (e.direction == Direction::falling && falls) || (e.direction == Direction::rising && rises) ||
           (e.direction == Direction::either && (falls || rises));
  };
  double ga = (a == t0 ? probe_at_start(k, t0, x0, r0) : probe_at(e, a, f)) - e.threshold;
  const double gb = probe_at_step_end(k, t1, x1, r1, f) - e.threshold;
  double b = t1;
  bool hit = crosses(ga, gb);
  if (!hit && e.stops_run && t1 > a && ga != 0.0 && (ga > 0.0 ? e.direction != Direction::rising : e.direction != Direction::falling)) {
    // A run-ending probe can pass its threshold inside one step and come back: a long step
    // that carries a decaying coil current through zero (where a clamp diode would have
    // stopped it) has the coil's energy vanish inside the step and grow again. Look for the
    // probe's turning point towards the threshold inside the step (golden section); where it
    // lies beyond the threshold the run ends at the crossing before it.
    const double toward = ga > 0.0 ? -1.0 : 1.0;  // the direction of the threshold
    // Two probes just inside the ends tell whether it turns: heading for the threshold at the
    // start, away from it at the end. Only then (rare) is the turning point searched for.
    const double eps = 1e-6 * (t1 - a);
    const bool turns = toward * (probe_at(e, a + eps, f) - e.threshold - ga) > 0.0 &&
                       toward * (gb - (probe_at(e, t1 - eps, f) - e.threshold)) < 0.0;
    if (turns) {
      const GoldenBracket g = golden_section(a, t1, tol_, [&](double t) { return toward * (probe_at(e, t, f) - e.threshold); }, 0.0);
      // The crossing lies between the step's start and the first inner point beyond the threshold.
      if (g.sc >= 0.0 || g.sd >= 0.0) {
        hit = true;
        b = g.sc >= 0.0 ? g.c : g.d;  // c lies before d
      }
    }
  }
  if (!hit) return std::numeric_limits<double>::infinity();
  const double tc = locate_crossing(e, a, ga, b, f);
  outcomes_[k].time_s = tc;
  outcomes_[k].value = probe_at(e, tc, f);
  return tc;
}

void EventLocator::on_extremum(std::size_t k, double t0, const double* x0, const double* r0, double t1, const double* x1,
                               const double* r1, const Interpolant& f, const KeepInterpolant& keep) {
  const auto& e = specs_[k];
  const double a = std::max(t0, e.after_time_s);
  // Extremum: sample, then refine around the best sample. When the best sample is an end of the
  // step, one probe just inside it tells whether the extremum lies inside (then refine) or is
  // the end itself (a monotone stretch, e.g. a spike rising over many steps): refining there
  // would only confirm it, at ~60 probe calls.
  constexpr int n = 5;
  double ts[n], vs[n];
  ts[0] = a;
  ts[n - 1] = t1;
  vs[0] = a == t0 ? probe_at_start(k, t0, x0, r0) : probe_at(e, a, f);
  vs[n - 1] = probe_at_step_end(k, t1, x1, r1, f);
  // The ends that are accepted points (the start where the step starts at or after the event's
  // start time, the end unless the run stops inside the step): their values are as exact as the
  // states.
  if (a == t0 && better(e.kind, vs[0], best_point_[k].value)) best_point_[k] = {e.name, t0, vs[0]};
  if (x1 && better(e.kind, vs[n - 1], best_point_[k].value)) best_point_[k] = {e.name, t1, vs[n - 1]};
  // Once an extremum is known, a step whose two ends both lie more than 10 % of it on the far
  // side cannot hold a better one: the step's error control keeps the states (and so a probe of
  // them) from swinging that far inside one step and back. Skip it without sampling — probes
  // such as a device's current cost a full circuit evaluation each.
  if (outcomes_[k].time_s) {
    const double best_value = outcomes_[k].value, margin = 0.1 * std::abs(best_value);
    auto far_worse = [&](double v) { return e.kind == EventSpec::Kind::maximum ? v < best_value - margin : v > best_value + margin; };
    if (far_worse(vs[0]) && far_worse(vs[n - 1])) return;
  }
  int best = 0;
  for (int j = 0; j < n; ++j) {
    ts[j] = a + (t1 - a) * j / (n - 1);
    if (j > 0 && j < n - 1) vs[j] = probe_at(e, ts[j], f);
    if (better(e.kind, vs[j], vs[best]) && j > 0) best = j;
  }
  if (!better(e.kind, vs[best], outcomes_[k].value) && outcomes_[k].time_s) return;
  outcomes_[k].time_s = ts[best];
  outcomes_[k].value = vs[best];
  kept_[k].step = {};  // an earlier kept step holds no better sample than this one
  if (!(t1 > a)) return;
  bool interior = best > 0 && best < n - 1;
  if (!interior) {
    const double inside = best == 0 ? ts[0] + 1e-3 * (ts[1] - ts[0]) : ts[n - 1] - 1e-3 * (ts[n - 1] - ts[n - 2]);
    interior = better(e.kind, probe_at(e, inside, f), vs[best]);
  }
  // Refining costs ~35 probes; while the extremum may still move to a later step, keep this
  // step's dense output instead and refine once in finish().
  if (interior) kept_[k] = {ts[std::max(best - 1, 0)], ts[std::min(best + 1, n - 1)], keep()};
}

void EventLocator::finish() {
  for (std::size_t k = 0; k < kept_.size(); ++k) {
    if (!kept_[k].step.dense) continue;
    refine_extremum(k, kept_[k].a, kept_[k].b, kept_[k].step);
    kept_[k].step = {};
  }
}

}  // namespace coilkick::engine
