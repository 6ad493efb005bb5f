#pragma once
// Tolerance analysis over the spreads a scenario declares (supply.tolerance, [tolerances], and
// the Zener/TVS breakdown tolerance of the parts in use):
//  - corners: every combination of each spread's two extremes (2^k runs, k spreads);
//  - Monte Carlo: `samples` runs; relative tolerances as normal distributions with the
//    tolerance at 3σ, truncated at ±tolerance (common practice for ±tolerance parts); ranges
//    (coil temperature, forward gain) uniform. Sample i draws from its own generator seeded with
//    (seed, i), so the numbers are the same on any thread count.
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "coilkick/analyses/run_summary.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::analyses {

struct Spread {
  std::string name;  // e.g. "supply_voltage_V", "coil_temperature_C", "zener_breakdown_voltage_V"
  double low = 0.0, nominal = 0.0, high = 0.0;
  bool uniform = false;  // true: uniform on [low, high]; false: normal, ±(high−nominal) at 3σ
};

// The spreads of a scenario with their absolute low/nominal/high values.
std::vector<Spread> scenario_spreads(const scenario::Scenario& s, const catalogue::Catalogue& parts);
// The scenario with each spread set to values[k].
scenario::Scenario apply_spreads(const scenario::Scenario& s, const std::vector<Spread>& spreads,
                                 const std::vector<double>& values, const catalogue::Catalogue& parts);
// The nominal scenario's DC points, where they solve (empty otherwise): every run of a tolerance
// analysis starts Newton there, its circuit having the nominal's shape — a few iterations instead
// of dozens from the cold guess (a pwl run's DC solves were a fifth of its time).
std::optional<drivers::OperatingPoints> nominal_operating_points(const scenario::Scenario& s, const catalogue::Catalogue& parts);
// One run of a tolerance analysis: the scenario with each spread at values[k], from `starts`.
RunSummary run_tolerance_point(const scenario::Scenario& s, const std::vector<Spread>& spreads, const std::vector<double>& values,
                               const catalogue::Catalogue& parts, const std::optional<drivers::OperatingPoints>& starts);

struct ToleranceRun {
  std::string label;            // "corner 5" or "sample 17"
  std::vector<double> values;   // one per spread
  RunSummary run;
};

struct MetricSummary {
  std::string name;
  int count = 0;                // finite values
  double minimum = 0, maximum = 0, mean = 0, standard_deviation = 0, p01 = 0, p50 = 0, p99 = 0;
};

struct ToleranceResult {
  std::vector<Spread> spreads;
  std::vector<ToleranceRun> corners, samples;
  std::vector<MetricSummary> summary;        // over corners and samples together
  std::map<std::string, int> check_failures; // per check name: runs with status fail
  std::map<std::string, int> check_warnings;
  int runs_passed = 0, runs_warned = 0, runs_failed = 0, runs_in_error = 0;
  int worst_peak_run = -1, worst_release_run = -1;  // index into corners then samples
  const ToleranceRun& run(int index) const { return index < static_cast<int>(corners.size()) ? corners[static_cast<std::size_t>(index)] : samples[static_cast<std::size_t>(index) - corners.size()]; }
};

// The runs of a tolerance analysis without running them: corners first, then samples (values
// only). run_tolerance and the Python/distributed paths share it, so every path runs the same
// points.
std::vector<ToleranceRun> tolerance_plan(const std::vector<Spread>& spreads, int samples, unsigned long long seed);

ToleranceResult run_tolerance(const scenario::Scenario& s, const catalogue::Catalogue& parts, int samples,
                              unsigned long long seed, int threads, const std::function<void(int, int)>& progress = {});

}  // namespace coilkick::analyses
