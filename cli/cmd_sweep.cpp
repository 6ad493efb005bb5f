// coilkick sweep FILE --vary KEY=START:STOP:COUNT ...: grid of runs, CSV of metrics per point.
#include <fstream>
#include <iostream>
#include <stdexcept>

#include "coilkick/analyses/sweep.hpp"
#include "coilkick/engine/errors.hpp"
#include "commands.hpp"
#include "progress.hpp"
#include "report_format.hpp"

namespace coilkick::cli {

int cmd_sweep(const CommonOptions& o, const std::vector<std::string>& vary, const std::string& output, std::ostream& out) {
  const Loaded l = load(o);
  std::vector<analyses::SweepAxis> axes;
  for (const auto& v : vary) axes.push_back(analyses::parse_sweep_axis(v, l.scenario, l.parts));
  const auto points = analyses::run_sweep(l.scenario, axes, l.parts, thread_count(o), progress_bar(o.quiet, "sweep"));
  std::ofstream file;
  if (!output.empty()) {
    file.open(output);
    if (!file) throw std::invalid_argument("--output: cannot write '" + output + "'");
  }
  std::ostream& csv = output.empty() ? out : file;
  for (const auto& a : axes) csv << a.key << ",";
  csv << "overall,error";
  for (const auto& n : drivers::metric_names()) csv << "," << n;
  csv << "\n";
  std::size_t failed = 0, invalid = 0;
  for (const auto& p : points) {
    for (double v : p.values) csv << csv_number(v) << ",";
    csv << (p.run.ok() ? drivers::to_string(p.run.status) : "error") << ",\"" << p.run.error << "\"";
    for (const auto& n : drivers::metric_names()) csv << "," << (p.run.ok() ? csv_number(p.run.metrics.get(n)) : "");
    csv << "\n";
    failed += p.run.ok() ? 0 : 1;
    invalid += p.run.invalid_input ? 1 : 0;
  }
  if (!o.quiet && failed) {
    std::cerr << "coilkick sweep: " << failed << " of " << points.size() << " points failed; their rows carry the error\n";
  }
  // Nothing computed at all is not a result: bad input (2) when every point was invalid,
  // a solver failure (3) when every point failed otherwise.
  if (!points.empty() && failed == points.size()) {
    const std::string first = points.front().run.error;
    if (invalid == points.size()) throw std::invalid_argument("sweep: every point is invalid; the first: " + first);
    throw engine::SimulationError("sweep: every point failed; the first: " + first);
  }
  return 0;
}

}  // namespace coilkick::cli
