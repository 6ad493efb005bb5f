#include "coilkick/analyses/tolerance.hpp"

#include <algorithm>
#include <cmath>
#include <random>
#include <stdexcept>

#include "coilkick/analyses/parallel.hpp"
#include "coilkick/catalogue/part_parameters.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/interrupt.hpp"

namespace coilkick::analyses {
namespace {

using drivers::ClampKind;

bool uses_zener(const drivers::DriverSpec& d) { return d.clamp.kind == ClampKind::diode_zener; }
bool uses_active_zener(const drivers::DriverSpec& d) { return d.clamp.kind == ClampKind::active_clamp; }
bool uses_tvs(const drivers::DriverSpec& d) { return d.clamp.kind == ClampKind::tvs_across_switch; }
bool bjt_switch(const drivers::DriverSpec& d) {
  return d.switch_.topology == drivers::Topology::low_side_npn || d.switch_.topology == drivers::Topology::high_side_pnp ||
         d.switch_.topology == drivers::Topology::low_side_darlington;
}
bool mos_switch(const drivers::DriverSpec& d) {
  return d.switch_.topology == drivers::Topology::low_side_nmos || d.switch_.topology == drivers::Topology::high_side_pmos;
}

double part_value(const catalogue::Catalogue& parts, const std::string& part, const drivers::Overrides& o,
                  const std::string& key) {
  auto it = o.find(key);
  if (it != o.end()) return it->second;
  return parts.part(part).parameter(key);
}

Spread relative(const std::string& name, double nominal, double tol) {
  return {name, nominal * (1.0 - tol), nominal, nominal * (1.0 + tol), false};
}

double tolerance_of(const catalogue::Catalogue& parts, const std::string& part, double declared) {
  if (declared >= 0.0) return declared;
  const auto& rec = parts.part(part);
  return rec.has_rating("breakdown_voltage_tolerance") ? rec.rating("breakdown_voltage_tolerance") : 0.0;
}

// Uniform double in [0, 1) from 53 random bits (identical on every platform and thread).
double unit(std::mt19937_64& g) { return static_cast<double>(g() >> 11) * (1.0 / 9007199254740992.0); }

double draw(const Spread& sp, std::mt19937_64& g) {
  if (sp.uniform) return sp.low + (sp.high - sp.low) * unit(g);
  const double half = sp.high - sp.nominal;
  for (;;) {  // Box–Muller, truncated at ±3σ = ±half
    const double u1 = 1.0 - unit(g), u2 = unit(g);
    const double z = std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * M_PI * u2);
    if (std::abs(z) <= 3.0) return sp.nominal + half * z / 3.0;
  }
}

double percentile(std::vector<double> v, double p) {
  if (v.empty()) return std::nan("");
  std::sort(v.begin(), v.end());
  const double pos = p * (static_cast<double>(v.size()) - 1.0);
  const auto lo = static_cast<std::size_t>(std::floor(pos));
  const auto hi = std::min(lo + 1, v.size() - 1);
  return v[lo] + (v[hi] - v[lo]) * (pos - static_cast<double>(lo));
}

}  // namespace

std::vector<Spread> scenario_spreads(const scenario::Scenario& s, const catalogue::Catalogue& parts) {
  const auto& d = s.driver;
  const auto& t = s.tolerances;
  std::vector<Spread> out;
  if (t.supply > 0) out.push_back(relative("supply_voltage_V", d.supply.voltage_V, t.supply));
  if (t.coil_resistance > 0) out.push_back(relative("coil_resistance_at_20C_ohm", d.coil.resistance_at_20C_ohm, t.coil_resistance));
  if (t.inductance > 0) out.push_back(relative("coil_inductance_H", d.coil.inductance_H, t.inductance));
  if (t.has_coil_temperature_range && t.coil_temperature_max_C > t.coil_temperature_min_C) {
    out.push_back({"coil_temperature_C", t.coil_temperature_min_C, d.coil.temperature_C, t.coil_temperature_max_C, true});
  }
  if (t.has_forward_beta_range && bjt_switch(d) && t.forward_beta_max > t.forward_beta_min) {
    out.push_back({"switch_forward_beta", t.forward_beta_min, part_value(parts, d.switch_.part, d.switch_.overrides, "forward_beta"),
                   t.forward_beta_max, true});
  }
  if (t.threshold_voltage > 0 && mos_switch(d)) {
    out.push_back(relative("switch_threshold_voltage_V", part_value(parts, d.switch_.part, d.switch_.overrides, "threshold_voltage"),
                           t.threshold_voltage));
  }
  if (uses_zener(d) || uses_active_zener(d)) {
    const std::string& part = uses_zener(d) ? d.clamp.zener_part : d.clamp.active_clamp_zener_part;
    const auto& o = uses_zener(d) ? d.clamp.zener_overrides : d.clamp.active_clamp_zener_overrides;
    const double tol = tolerance_of(parts, part, t.zener_voltage);
    if (tol > 0) out.push_back(relative("zener_breakdown_voltage_V", part_value(parts, part, o, "breakdown_voltage"), tol));
  }
  if (uses_tvs(d)) {
    const double tol = tolerance_of(parts, d.clamp.tvs_part, t.tvs_voltage);
    if (tol > 0) out.push_back(relative("tvs_breakdown_voltage_V", part_value(parts, d.clamp.tvs_part, d.clamp.tvs_overrides, "breakdown_voltage"), tol));
  }
  return out;
}

scenario::Scenario apply_spreads(const scenario::Scenario& s, const std::vector<Spread>& spreads,
                                 const std::vector<double>& values, const catalogue::Catalogue& parts) {
  scenario::Scenario r = s;
  auto& d = r.driver;
  for (std::size_t k = 0; k < spreads.size(); ++k) {
    const std::string& n = spreads[k].name;
    const double v = values[k];
    if (n == "supply_voltage_V") d.supply.voltage_V = v;
    else if (n == "coil_resistance_at_20C_ohm") d.coil.resistance_at_20C_ohm = v;
    else if (n == "coil_inductance_H") d.coil.inductance_H = v;
    else if (n == "coil_temperature_C") d.coil.temperature_C = v;
    else if (n == "switch_forward_beta") d.switch_.overrides["forward_beta"] = v;
    else if (n == "switch_threshold_voltage_V") d.switch_.overrides["threshold_voltage"] = v;
    else if (n == "zener_breakdown_voltage_V") (uses_zener(d) ? d.clamp.zener_overrides : d.clamp.active_clamp_zener_overrides)["breakdown_voltage"] = v;
    else if (n == "tvs_breakdown_voltage_V") d.clamp.tvs_overrides["breakdown_voltage"] = v;
    else throw std::logic_error("unknown spread " + n);
  }
  // A board of several channels: every channel moves with the first (one batch of coils and parts
  // in one enclosure on one rail) — coils by the same factor, at the same temperature, parts of the
  // same kind to the same value.
  const auto& d0 = s.driver;
  for (auto& ch : d.channels) {
    ch.coil.resistance_at_20C_ohm *= d.coil.resistance_at_20C_ohm / d0.coil.resistance_at_20C_ohm;
    ch.coil.inductance_H *= d.coil.inductance_H / d0.coil.inductance_H;
    if (d.coil.temperature_C != d0.coil.temperature_C) ch.coil.temperature_C = d.coil.temperature_C;
    if (ch.switch_.part == d.switch_.part) {
      for (const char* k : {"forward_beta", "threshold_voltage"}) {
        if (d.switch_.overrides.count(k)) ch.switch_.overrides[k] = d.switch_.overrides.at(k);
      }
    }
    auto same = [](const std::string& part, drivers::Overrides& o, const std::string& first_part, const drivers::Overrides& first) {
      if (part == first_part && first.count("breakdown_voltage")) o["breakdown_voltage"] = first.at("breakdown_voltage");
    };
    same(ch.clamp.zener_part, ch.clamp.zener_overrides, d.clamp.zener_part, d.clamp.zener_overrides);
    same(ch.clamp.active_clamp_zener_part, ch.clamp.active_clamp_zener_overrides, d.clamp.active_clamp_zener_part,
         d.clamp.active_clamp_zener_overrides);
    same(ch.clamp.tvs_part, ch.clamp.tvs_overrides, d.clamp.tvs_part, d.clamp.tvs_overrides);
  }
  (void)parts;
  return r;
}

std::vector<ToleranceRun> tolerance_plan(const std::vector<Spread>& spreads, int samples, unsigned long long seed) {
  if (samples < 0 || samples > 10000000) throw std::invalid_argument("tolerance: --samples must be from 0 to 10,000,000");
  const std::size_t k = spreads.size();
  if (k > 12) throw std::invalid_argument("tolerance: more than 12 spreads (4096 corners)");
  std::vector<ToleranceRun> plan;
  const int n_corners = k == 0 ? 0 : 1 << k;
  for (int c = 0; c < n_corners; ++c) {
    ToleranceRun run;
    run.label = "corner " + std::to_string(c + 1);
    for (std::size_t j = 0; j < k; ++j) run.values.push_back((c >> j) & 1 ? spreads[j].high : spreads[j].low);
    plan.push_back(std::move(run));
  }
  for (int i = 0; i < samples; ++i) {
    if (i % 4096 == 0) engine::throw_if_interrupted();  // millions of samples take a while
    ToleranceRun run;
    run.label = "sample " + std::to_string(i + 1);
    std::seed_seq sq{static_cast<unsigned>(seed & 0xffffffffu), static_cast<unsigned>(seed >> 32), static_cast<unsigned>(i)};
    std::mt19937_64 g(sq);
    for (const auto& sp : spreads) run.values.push_back(draw(sp, g));
    plan.push_back(std::move(run));
  }
  return plan;
}

std::optional<drivers::OperatingPoints> nominal_operating_points(const scenario::Scenario& s, const catalogue::Catalogue& parts) {
  try {
    return drivers::solve_operating_points(s.driver, parts);
  } catch (const engine::SimulationError&) {
    return std::nullopt;  // each run then solves from the cold guess and reports its own failure
  } catch (const std::invalid_argument&) {
    return std::nullopt;
  }
}

RunSummary run_tolerance_point(const scenario::Scenario& s, const std::vector<Spread>& spreads, const std::vector<double>& values,
                               const catalogue::Catalogue& parts, const std::optional<drivers::OperatingPoints>& starts) {
  return summarize_run(apply_spreads(s, spreads, values, parts).driver, parts, starts ? &*starts : nullptr);
}

ToleranceResult run_tolerance(const scenario::Scenario& s, const catalogue::Catalogue& parts, int samples,
                              unsigned long long seed, int threads, const std::function<void(int, int)>& progress) {
  ToleranceResult r;
  r.spreads = scenario_spreads(s, parts);
  const std::size_t k = r.spreads.size();
  const int n_corners = k == 0 ? 0 : 1 << k;
  auto plan = tolerance_plan(r.spreads, samples, seed);
  r.corners.assign(plan.begin(), plan.begin() + n_corners);
  r.samples.assign(plan.begin() + n_corners, plan.end());
  const int total = n_corners + samples;
  const auto starts = nominal_operating_points(s, parts);
  parallel_for(total, threads, [&](int i) {
    ToleranceRun& run = i < n_corners ? r.corners[static_cast<std::size_t>(i)] : r.samples[static_cast<std::size_t>(i - n_corners)];
    run.run = run_tolerance_point(s, r.spreads, run.values, parts, starts);
  }, progress);

  // Summaries over every run, in a fixed order (corners, then samples).
  std::map<std::string, std::vector<double>> values;
  double worst_peak = -1e300, worst_release = -1e300;
  for (int i = 0; i < total; ++i) {
    const auto& run = r.run(i).run;
    if (!run.ok()) {
      ++r.runs_in_error;
      continue;
    }
    for (const auto& [name, v] : run.metrics.items()) {
      if (std::isfinite(v)) values[name].push_back(v);
    }
    switch (run.status) {
      case drivers::CheckStatus::pass: ++r.runs_passed; break;
      case drivers::CheckStatus::warn: ++r.runs_warned; break;
      case drivers::CheckStatus::fail: ++r.runs_failed; break;
    }
    for (const auto& c : run.checks) {
      if (c.status == drivers::CheckStatus::fail) ++r.check_failures[c.name];
      if (c.status == drivers::CheckStatus::warn) ++r.check_warnings[c.name];
    }
    const double pk = run.metrics.get("switch_voltage_peak_V"), rel = run.metrics.get("release_time_s");
    if (std::isfinite(pk) && pk > worst_peak) {
      worst_peak = pk;
      r.worst_peak_run = i;
    }
    if (std::isfinite(rel) && rel > worst_release) {
      worst_release = rel;
      r.worst_release_run = i;
    }
  }
  for (const auto& name : drivers::metric_names(drivers::further_channel_names(s.driver))) {
    auto it = values.find(name);
    if (it == values.end()) continue;
    const auto& v = it->second;
    MetricSummary m;
    m.name = name;
    m.count = static_cast<int>(v.size());
    m.minimum = *std::min_element(v.begin(), v.end());
    m.maximum = *std::max_element(v.begin(), v.end());
    double sum = 0.0;
    for (double x : v) sum += x;
    m.mean = sum / static_cast<double>(v.size());
    double ss = 0.0;
    for (double x : v) ss += (x - m.mean) * (x - m.mean);
    m.standard_deviation = v.size() > 1 ? std::sqrt(ss / static_cast<double>(v.size() - 1)) : 0.0;
    m.p01 = percentile(v, 0.01);
    m.p50 = percentile(v, 0.5);
    m.p99 = percentile(v, 0.99);
    r.summary.push_back(m);
  }
  return r;
}

}  // namespace coilkick::analyses
