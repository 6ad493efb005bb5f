#include "coilkick/analyses/sweep.hpp"

#include <cmath>
#include <stdexcept>

#include "coilkick/analyses/parallel.hpp"
#include "coilkick/catalogue/part_parameters.hpp"
#include "coilkick/scenario/quantity.hpp"

namespace coilkick::analyses {

std::vector<double> SweepAxis::values() const {
  std::vector<double> v;
  for (int k = 0; k < count; ++k) v.push_back(count == 1 ? start : start + (stop - start) * k / (count - 1));
  return v;
}

namespace {
// Dimension of a numeric key, for parsing "100mH".
scenario::Dimension key_dimension(const std::string& key, const scenario::Scenario& s, const catalogue::Catalogue& parts) {
  for (const auto& [k, unit] : scenario::numeric_keys()) {
    if (k == key) {
      if (unit == "1" || unit == "1/K") return scenario::Dimension::dimensionless;
      return scenario::dimension_of_unit(unit);
    }
  }
  if (key.rfind("extra_part.", 0) == 0) return scenario::extra_part_dimension(s, key);
  // Part override: validate through a scratch copy, then look the unit up.
  scenario::Scenario probe = s;
  scenario::set_numeric_key(probe, key, 1.0, parts);  // throws with a suggestion if unknown
  const auto dot = key.rfind('.');
  const std::string pkey = key.substr(dot + 1);
  for (const auto& fam : catalogue::families()) {
    if (fam == "coil") continue;
    for (const auto& [k, unit] : catalogue::parameter_keys(fam)) {
      if (k == pkey) return scenario::dimension_of_unit(unit);
    }
  }
  return scenario::Dimension::dimensionless;
}
}  // namespace

SweepAxis parse_sweep_axis(const std::string& text, const scenario::Scenario& s, const catalogue::Catalogue& parts) {
  const auto eq = text.find('=');
  if (eq == std::string::npos || eq == 0) {
    throw std::invalid_argument("--vary '" + text + "': expected KEY=START:STOP:COUNT");
  }
  SweepAxis a;
  a.key = text.substr(0, eq);
  const std::string range = text.substr(eq + 1);
  const auto c1 = range.find(':'), c2 = range.find(':', c1 == std::string::npos ? c1 : c1 + 1);
  if (c1 == std::string::npos || c2 == std::string::npos) {
    throw std::invalid_argument("--vary '" + text + "': expected KEY=START:STOP:COUNT");
  }
  const scenario::Dimension dim = key_dimension(a.key, s, parts);
  try {
    a.start = scenario::parse_quantity(range.substr(0, c1), dim);
    a.stop = scenario::parse_quantity(range.substr(c1 + 1, c2 - c1 - 1), dim);
  } catch (const std::invalid_argument& e) {
    throw std::invalid_argument("--vary '" + text + "': " + e.what());
  }
  const std::string count = range.substr(c2 + 1);
  std::size_t used = 0;
  long n = 0;
  try {
    n = std::stol(count, &used);
  } catch (...) {
    used = 0;
  }
  if (used != count.size() || count.empty() || n < 1 || n > 100000) {
    throw std::invalid_argument("--vary '" + text + "': COUNT must be a whole number from 1 to 100000");
  }
  a.count = static_cast<int>(n);
  return a;
}

std::vector<SweepPoint> run_sweep(const scenario::Scenario& s, const std::vector<SweepAxis>& axes,
                                  const catalogue::Catalogue& parts, int threads,
                                  const std::function<void(int, int)>& progress) {
  if (axes.empty()) throw std::invalid_argument("sweep: give at least one --vary KEY=START:STOP:COUNT");
  long total = 1;
  for (const auto& a : axes) {
    total *= a.count;
    if (total > 1000000) throw std::invalid_argument("sweep: more than 1,000,000 grid points");
  }
  std::vector<SweepPoint> points(static_cast<std::size_t>(total));
  std::vector<std::vector<double>> values;
  for (const auto& a : axes) values.push_back(a.values());
  for (long i = 0; i < total; ++i) {
    long rest = i;
    std::vector<double> v(axes.size());
    for (std::size_t k = axes.size(); k-- > 0;) {
      v[k] = values[k][static_cast<std::size_t>(rest % axes[k].count)];
      rest /= axes[k].count;
    }
    points[static_cast<std::size_t>(i)].values = v;
  }
  parallel_for(static_cast<int>(total), threads, [&](int i) {
    auto& p = points[static_cast<std::size_t>(i)];
    scenario::Scenario si = s;
    try {
      for (std::size_t k = 0; k < axes.size(); ++k) scenario::set_numeric_key(si, axes[k].key, p.values[k], parts);
    } catch (const std::invalid_argument& e) {
      p.run.error = std::string("invalid at this point: ") + e.what();
      p.run.invalid_input = true;
      return;
    }
    p.run = summarize_run(si.driver, parts);
  }, progress);
  return points;
}

}  // namespace coilkick::analyses
