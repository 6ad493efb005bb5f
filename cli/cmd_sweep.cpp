// coilkick sweep FILE --vary KEY=START:STOP:COUNT ...: grid of runs, CSV (or JSON) of metrics per point.
#include <fstream>
#include <iostream>
#include <stdexcept>

#include "coilkick/analyses/sweep.hpp"
#include "coilkick/engine/errors.hpp"
#include "commands.hpp"
#include "progress.hpp"
#include "report_format.hpp"

namespace coilkick::cli {
namespace {

// The table as CSV: the caution comment, a header, one row per point.
void write_csv(std::ostream& csv, const std::vector<analyses::SweepAxis>& axes, const std::vector<analyses::SweepPoint>& points,
               const std::vector<std::string>& names) {
  csv << csv_caution_comment();
  for (const auto& a : axes) csv << a.key << ",";
  csv << "overall,error";
  for (const auto& n : names) csv << "," << n;
  csv << "\n";
  for (const auto& p : points) {
    for (double v : p.values) csv << csv_number(v) << ",";
    csv << (p.run.ok() ? drivers::to_string(p.run.status) : "error") << ",\"" << p.run.error << "\"";
    for (const auto& n : names) csv << "," << (p.run.ok() ? csv_number(p.run.metrics.get(n)) : "");
    csv << "\n";
  }
}

nlohmann::json sweep_json(const Loaded& l, const CommonOptions& o, const std::vector<analyses::SweepAxis>& axes,
                          const std::vector<analyses::SweepPoint>& points) {
  nlohmann::json ax = nlohmann::json::array();
  for (const auto& a : axes) ax.push_back({{"key", a.key}, {"start", a.start}, {"stop", a.stop}, {"count", a.count}});
  nlohmann::json rows = nlohmann::json::array();
  for (const auto& p : points) {
    nlohmann::json values = nlohmann::json::object();
    for (std::size_t k = 0; k < axes.size(); ++k) values[axes[k].key] = number_json(p.values[k]);
    nlohmann::json row{{"values", values}, {"overall", p.run.ok() ? drivers::to_string(p.run.status) : "error"}, {"error", p.run.error}};
    if (p.run.ok()) {
      row["metrics"] = metrics_json(p.run.metrics);
      row["checks"] = checks_json(p.run.checks);
    }
    rows.push_back(row);
  }
  return {{"scenario", l.scenario.driver.name}, {"file", o.file}, {"axes", ax}, {"points", rows}, {"caution", kCaution}};
}

}  // namespace

int cmd_sweep(const CommonOptions& o, const std::vector<std::string>& vary, const std::string& output, std::ostream& out) {
  const Loaded l = load(o);
  std::vector<analyses::SweepAxis> axes;
  for (const auto& v : vary) axes.push_back(analyses::parse_sweep_axis(v, l.scenario, l.parts));
  const auto points = analyses::run_sweep(l.scenario, axes, l.parts, thread_count(o), progress_bar(o.quiet, "sweep"));
  std::size_t failed = 0, invalid = 0;
  for (const auto& p : points) {
    failed += p.run.ok() ? 0 : 1;
    invalid += p.run.invalid_input ? 1 : 0;
  }
  // Nothing computed at all is not a result: bad input (2) when every point was invalid,
  // a solver failure (3) when every point failed otherwise. Nothing is written then.
  if (!points.empty() && failed == points.size()) {
    const std::string first = points.front().run.error;
    if (invalid == points.size()) throw std::invalid_argument("sweep: every point is invalid; the first: " + first);
    throw engine::SimulationError("sweep: every point failed; the first: " + first);
  }
  if (!output.empty()) {
    std::ofstream file(output);
    if (!file) throw std::invalid_argument("--output: cannot write '" + output + "'");
    if (o.json) file << sweep_json(l, o, axes, points).dump(2) << "\n";
    else write_csv(file, axes, points, drivers::metric_names(drivers::further_channel_names(l.scenario.driver)));
  } else if (o.json) {
    out << sweep_json(l, o, axes, points).dump(2) << "\n";
  } else {
    write_csv(out, axes, points, drivers::metric_names(drivers::further_channel_names(l.scenario.driver)));
  }
  if (!o.quiet && failed) {
    std::cerr << "coilkick sweep: " << failed << " of " << points.size() << " points failed; their rows carry the error\n";
  }
  if (!output.empty() && !o.json) {
    out << "coilkick sweep: " << points.size() << " points written to " << output << "\n\n" << kCaution << "\n";
  }
  return 0;
}

}  // namespace coilkick::cli
