#include "report_format.hpp"

#include <cmath>
#include <sstream>

#include "coilkick/drivers/si_format.hpp"

namespace coilkick::cli {

const char* const kCaution =
    "Caution: a simulation is not a qualification. Build and measure the real driver at its\n"
    "worst-case supply and temperature before relying on it. Where relays or contactors switch\n"
    "mains loads, wiring and checks belong to qualified people; local codes and licensed practice\n"
    "take precedence over this report.";

const char* const kCautionLine =
    "Caution: a simulation is not a qualification - build and measure the real driver; mains wiring by qualified "
    "people; local codes and licensed practice take precedence.";

std::string csv_caution_comment() { return std::string("# ") + kCautionLine + "\n"; }

std::string metric_unit(const std::string& m) {
  static const std::pair<const char*, const char*> suffixes[] = {{"_Hz", "Hz"}, {"_V", "V"}, {"_A", "A"}, {"_J", "J"},
                                                                 {"_W", "W"},   {"_m_per_s", "m/s"}, {"_s", "s"}, {"_ohm", "ohm"}, {"_H", "H"}};
  for (const auto& [suffix, unit] : suffixes) {
    const std::string s = suffix;
    if (m.size() > s.size() && m.compare(m.size() - s.size(), s.size(), s) == 0) return unit;
  }
  return "";
}

std::string metric_text(const std::string& metric, double value) {
  if (std::isnan(value)) return "-";
  const std::string unit = metric_unit(metric);
  if (!unit.empty()) return drivers::format_si(value, unit, 4);
  std::ostringstream o;
  o.precision(4);
  o << value;
  return o.str();
}

nlohmann::json number_json(double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr); }

nlohmann::json metrics_json(const drivers::Metrics& m) {
  nlohmann::json j = nlohmann::json::object();
  for (const auto& [name, v] : m.items()) j[name] = number_json(v);
  return j;
}

nlohmann::json checks_json(const std::vector<drivers::RatingCheck>& checks) {
  nlohmann::json a = nlohmann::json::array();
  for (const auto& c : checks) {
    a.push_back({{"name", c.name}, {"status", drivers::to_string(c.status)}, {"value", number_json(c.value)},
                 {"limit", number_json(c.limit)}, {"fail_limit", number_json(c.fail_limit)}, {"unit", c.unit},
                 {"detail", c.detail}});
  }
  return a;
}

std::string status_word(drivers::CheckStatus s) {
  switch (s) {
    case drivers::CheckStatus::pass: return "PASS";
    case drivers::CheckStatus::warn: return "WARN";
    case drivers::CheckStatus::fail: return "FAIL";
  }
  return "?";
}

std::string csv_number(double v) {
  if (!std::isfinite(v)) return "";
  std::ostringstream o;
  o.precision(10);
  o << v;
  return o.str();
}

}  // namespace coilkick::cli
