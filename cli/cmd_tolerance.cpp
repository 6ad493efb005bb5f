// coilkick tolerance FILE --samples N --seed S: corners and Monte Carlo over the declared spreads.
#include <iomanip>

#include "coilkick/analyses/tolerance.hpp"
#include "commands.hpp"
#include "progress.hpp"
#include "report_format.hpp"

namespace coilkick::cli {
namespace {
nlohmann::json run_json(const analyses::ToleranceResult& r, int index) {
  if (index < 0) return nullptr;
  const auto& run = r.run(index);
  nlohmann::json values = nlohmann::json::object();
  for (std::size_t k = 0; k < r.spreads.size(); ++k) values[r.spreads[k].name] = run.values[k];
  return {{"label", run.label}, {"values", values}, {"metrics", metrics_json(run.run.metrics)}};
}
}  // namespace

int cmd_tolerance(const CommonOptions& o, int samples, unsigned long long seed, std::ostream& out) {
  const Loaded l = load(o);
  const auto r = analyses::run_tolerance(l.scenario, l.parts, samples, seed, thread_count(o), progress_bar(o.quiet, "tolerance"));
  const int total = static_cast<int>(r.corners.size() + r.samples.size());
  if (o.json) {
    nlohmann::json spreads = nlohmann::json::array(), summary = nlohmann::json::object();
    for (const auto& s : r.spreads) {
      spreads.push_back({{"name", s.name}, {"low", s.low}, {"nominal", s.nominal}, {"high", s.high},
                         {"distribution", s.uniform ? "uniform" : "normal, tolerance at 3 sigma"}});
    }
    for (const auto& m : r.summary) {
      summary[m.name] = {{"count", m.count}, {"min", m.minimum}, {"p01", m.p01}, {"p50", m.p50}, {"p99", m.p99},
                         {"max", m.maximum}, {"mean", m.mean}, {"std", m.standard_deviation}};
    }
    nlohmann::json errors = nlohmann::json::array();
    for (int i = 0; i < total; ++i) {
      if (!r.run(i).run.ok()) errors.push_back({{"label", r.run(i).label}, {"error", r.run(i).run.error}});
    }
    out << nlohmann::json{{"scenario", l.scenario.driver.name}, {"file", o.file}, {"seed", seed}, {"samples", samples},
                          {"corners", r.corners.size()}, {"spreads", spreads}, {"summary", summary},
                          {"runs", {{"passed", r.runs_passed}, {"warned", r.runs_warned}, {"failed", r.runs_failed}, {"in_error", r.runs_in_error}}},
                          {"check_failures", r.check_failures}, {"check_warnings", r.check_warnings},
                          {"worst_peak", run_json(r, r.worst_peak_run)}, {"worst_release", run_json(r, r.worst_release_run)},
                          {"errors", errors}, {"caution", kCaution}}
               .dump(2)
        << "\n";
    return 0;
  }
  out << "coilkick tolerance — " << l.scenario.driver.name << " (" << o.file << ")\n"
      << r.corners.size() << " corners and " << r.samples.size() << " Monte Carlo samples (seed " << seed << ")\n\nSpreads\n";
  for (const auto& s : r.spreads) {
    out << "  " << std::left << std::setw(30) << s.name << std::setw(12) << csv_number(s.low) << std::setw(12) << csv_number(s.nominal)
        << std::setw(12) << csv_number(s.high) << (s.uniform ? "uniform" : "normal, tolerance at 3 sigma") << "\n";
  }
  out << "\nResults over all runs" << "\n  " << std::left << std::setw(30) << "metric" << std::right << std::setw(12) << "min"
      << std::setw(12) << "1 %" << std::setw(12) << "median" << std::setw(12) << "99 %" << std::setw(12) << "max" << "\n";
  for (const auto& m : r.summary) {
    out << "  " << std::left << std::setw(30) << m.name << std::right << std::setw(12) << metric_text(m.name, m.minimum) << std::setw(12)
        << metric_text(m.name, m.p01) << std::setw(12) << metric_text(m.name, m.p50) << std::setw(12) << metric_text(m.name, m.p99)
        << std::setw(12) << metric_text(m.name, m.maximum) << "\n";
  }
  auto worst = [&](const char* what, int index) {
    if (index < 0) return;
    const auto& run = r.run(index);
    out << "\nWorst " << what << ": " << run.label << "\n";
    for (std::size_t k = 0; k < r.spreads.size(); ++k) out << "  " << std::left << std::setw(30) << r.spreads[k].name << csv_number(run.values[k]) << "\n";
    out << "  -> peak " << metric_text("x_V", run.run.metrics.get("switch_voltage_peak_V")) << ", release "
        << metric_text("x_s", run.run.metrics.get("release_time_s")) << "\n";
  };
  worst("peak switch voltage", r.worst_peak_run);
  worst("release time", r.worst_release_run);
  out << "\nRuns: " << r.runs_passed << " pass, " << r.runs_warned << " warn, " << r.runs_failed << " fail, " << r.runs_in_error
      << " in error, of " << total << "\n";
  for (const auto& [name, n] : r.check_failures) out << "  " << name << " failed in " << n << " runs\n";
  for (int i = 0; i < total; ++i) {
    if (!r.run(i).run.ok()) out << "  " << r.run(i).label << ": " << r.run(i).run.error << "\n";
  }
  out << "\n" << kCaution << "\n";
  return 0;
}

}  // namespace coilkick::cli
