#pragma once
// Formatting shared by the command reports: SI-prefixed values, JSON of metrics and checks,
// the safety caution.
#include <nlohmann/json.hpp>
#include <string>

#include "coilkick/drivers/metrics.hpp"
#include "coilkick/drivers/rating_checks.hpp"

namespace coilkick::cli {

extern const char* const kCaution;
// The caution in one line, for files the commands write: the first line of every CSV (as a
// comment, "# " + it) and the footer of every SVG chart.
extern const char* const kCautionLine;
// "# <caution>\n": the first line of every CSV file a command writes.
std::string csv_caution_comment();

// The unit of a metric from its name suffix ("_V" -> "V", "_s" -> "s" ...), "" if none.
std::string metric_unit(const std::string& metric);
// "45.6 V", "10.6 us", "-" for NaN.
std::string metric_text(const std::string& metric, double value);
// NaN and infinities become null.
nlohmann::json number_json(double v);
nlohmann::json metrics_json(const drivers::Metrics& m);
nlohmann::json checks_json(const std::vector<drivers::RatingCheck>& checks);
// "PASS", "WARN", "FAIL"
std::string status_word(drivers::CheckStatus s);
// Plain number for CSV ("" for NaN).
std::string csv_number(double v);

}  // namespace coilkick::cli
