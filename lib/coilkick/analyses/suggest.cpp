#include "coilkick/analyses/suggest.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "coilkick/analyses/eseries.hpp"
#include "coilkick/analyses/parallel.hpp"
#include "coilkick/drivers/compare.hpp"

namespace coilkick::analyses {

std::vector<Suggestion> suggest_clamps(const scenario::Scenario& s, const catalogue::Catalogue& parts,
                                       const SuggestLimits& limits, int threads,
                                       const std::function<void(int, int)>& progress) {
  if (!(limits.max_release_time_s > 0.0) || !std::isfinite(limits.max_release_time_s)) {
    throw std::invalid_argument("suggest: --max-release-time must be a positive time");
  }
  if (!(limits.max_switch_voltage_V > 0.0) || !std::isfinite(limits.max_switch_voltage_V)) {
    throw std::invalid_argument("suggest: --max-switch-voltage must be a positive voltage");
  }
  const bool contacts = limits.time_metric == "contact_open_time_s";
  if (!contacts && limits.time_metric != "release_time_s") {
    throw std::invalid_argument("suggest: --time-metric must be release_time_s or contact_open_time_s, not '" + limits.time_metric + "'");
  }
  if (contacts && !s.driver.relay.armature_model) {
    throw std::invalid_argument("suggest: --time-metric contact_open_time_s needs the armature model ([relay] armature_model = true)");
  }
  // The time a candidate is judged by; the current-based release time falls back to the 10 %
  // decay when the scenario gives no release threshold.
  // On a board of several channels: the slowest and highest of any channel (every channel takes
  // the candidate clamp).
  const auto further = drivers::further_channel_names(s.driver);
  auto time_of = [&](const drivers::Metrics& m) {
    const double t = drivers::highest_over_channels(m, further, limits.time_metric);
    return std::isnan(t) && !contacts ? drivers::highest_over_channels(m, further, "current_decay_time_10pct_s") : t;
  };
  using drivers::ClampKind;
  const drivers::ClampSpec base = s.driver.clamp;
  std::vector<Suggestion> out;
  auto add = [&](drivers::ClampSpec c) {
    if (!limits.kinds.empty() && std::find(limits.kinds.begin(), limits.kinds.end(), c.kind) == limits.kinds.end()) return;
    c.add_rc_snubber_across_coil = false;
    Suggestion g;
    g.clamp = c;
    g.parts = drivers::describe_clamp_parts(c);
    out.push_back(std::move(g));
  };
  auto by_voltage = [&](const std::string& family) {
    auto names = parts.names(family);
    std::sort(names.begin(), names.end(), [&](const auto& a, const auto& b) {
      return parts.part(a).parameter("breakdown_voltage") < parts.part(b).parameter("breakdown_voltage");
    });
    return names;
  };
  for (const auto& z : by_voltage("zener")) {
    for (const auto kind : {ClampKind::diode_zener, ClampKind::active_clamp}) {
      drivers::ClampSpec c = base;
      c.kind = kind;
      (kind == ClampKind::diode_zener ? c.zener_part : c.active_clamp_zener_part) = z;
      c.zener_overrides.clear();
      c.active_clamp_zener_overrides.clear();
      add(c);
    }
  }
  for (const auto& t : by_voltage("tvs")) {
    drivers::ClampSpec c = base;
    c.kind = ClampKind::tvs_across_switch;
    c.tvs_part = t;
    c.tvs_overrides.clear();
    add(c);
  }
  for (double r : e_series_values(12, 10.0, 10e3)) {
    drivers::ClampSpec c = base;
    c.kind = ClampKind::diode_resistor;
    c.resistor_ohm = r;
    add(c);
  }
  static const std::vector<double> e3{1.0, 2.2, 4.7};
  for (double r : {10.0, 22.0, 47.0, 100.0, 220.0, 470.0, 1000.0}) {
    for (int dec = -8; dec <= -6; ++dec) {
      for (double m : e3) {
        drivers::ClampSpec c = base;
        c.kind = ClampKind::rc_across_coil;
        c.snubber_resistance_ohm = r;
        c.snubber_capacitance_F = m * std::pow(10.0, dec);
        add(c);
      }
    }
    drivers::ClampSpec c = base;
    c.kind = ClampKind::rc_across_coil;
    c.snubber_resistance_ohm = r;
    c.snubber_capacitance_F = 10e-6;
    add(c);
  }
  parallel_for(static_cast<int>(out.size()), threads, [&](int i) {
    auto& g = out[static_cast<std::size_t>(i)];
    drivers::DriverSpec d = s.driver;
    d.clamp = g.clamp;
    for (auto& ch : d.channels) ch.clamp = g.clamp;
    g.run = summarize_run(d, parts);
    if (!g.run.ok()) return;
    const double t_use = time_of(g.run.metrics);
    const double v = drivers::highest_over_channels(g.run.metrics, further, "switch_voltage_peak_V");
    g.release_margin = (limits.max_release_time_s - t_use) / limits.max_release_time_s;
    g.voltage_margin = (limits.max_switch_voltage_V - v) / limits.max_switch_voltage_V;
    g.meets = std::isfinite(t_use) && g.release_margin >= 0.0 && g.voltage_margin >= 0.0 &&
              g.run.status != drivers::CheckStatus::fail;
  }, progress);
  auto key = [&](const Suggestion& g) {
    if (!g.run.ok()) return std::numeric_limits<double>::infinity();
    const double t = time_of(g.run.metrics);
    return std::isnan(t) ? std::numeric_limits<double>::infinity() : t;
  };
  // A PWM-held coil: the clamp also heats in every period. Among those that meet the limits, the
  // ones no other beats on both hold power and release time come first.
  if (s.driver.has_periodic_drive()) {
    auto power = [](const Suggestion& g) { return g.run.metrics.get("hold_clamp_average_power_W"); };
    for (auto& g : out) {
      if (!g.meets) continue;
      for (const auto& other : out) {
        if (&other == &g || !other.meets) continue;
        const bool no_worse = power(other) <= power(g) && key(other) <= key(g);
        const bool better = power(other) < power(g) || key(other) < key(g);
        if (no_worse && better) ++g.dominated_by;
      }
    }
  }
  std::stable_sort(out.begin(), out.end(), [&](const Suggestion& a, const Suggestion& b) {
    if (a.meets != b.meets) return a.meets;
    if (a.dominated_by != b.dominated_by) return a.dominated_by < b.dominated_by;
    return key(a) < key(b);
  });
  return out;
}

}  // namespace coilkick::analyses
