// coilkick suggest FILE --max-release-time T --max-switch-voltage V: preferred-value clamps
// that meet both limits, ranked.
#include <cmath>
#include <iomanip>

#include "coilkick/analyses/suggest.hpp"
#include "coilkick/scenario/quantity.hpp"
#include "commands.hpp"
#include "progress.hpp"
#include "report_format.hpp"

namespace coilkick::cli {

int cmd_suggest(const CommonOptions& o, const std::string& max_release_time, const std::string& max_switch_voltage, int top,
                std::ostream& out, const std::string& time_metric, const std::vector<std::string>& kinds) {
  analyses::SuggestLimits lim;
  lim.time_metric = time_metric;
  for (const auto& k : kinds) {
    try {
      lim.kinds.push_back(drivers::parse_clamp_kind(k));
    } catch (const std::invalid_argument& e) {
      throw std::invalid_argument(std::string("--kinds: ") + e.what());
    }
  }
  try {
    lim.max_release_time_s = scenario::parse_quantity(max_release_time, scenario::Dimension::time);
  } catch (const std::invalid_argument& e) {
    throw std::invalid_argument(std::string("--max-release-time: ") + e.what());
  }
  try {
    lim.max_switch_voltage_V = scenario::parse_quantity(max_switch_voltage, scenario::Dimension::voltage);
  } catch (const std::invalid_argument& e) {
    throw std::invalid_argument(std::string("--max-switch-voltage: ") + e.what());
  }
  const Loaded l = load(o);
  const auto list = analyses::suggest_clamps(l.scenario, l.parts, lim, thread_count(o), progress_bar(o.quiet, "suggest"));
  int meeting = 0;
  for (const auto& g : list) meeting += g.meets ? 1 : 0;
  if (o.json) {
    nlohmann::json a = nlohmann::json::array();
    for (const auto& g : list) {
      nlohmann::json j{{"clamp_kind", drivers::to_string(g.clamp.kind)}, {"parts", g.parts}, {"meets_limits", g.meets}};
      if (g.run.ok()) {
        j["release_margin"] = number_json(g.release_margin);
        j["voltage_margin"] = number_json(g.voltage_margin);
        j["metrics"] = metrics_json(g.run.metrics);
        j["overall"] = drivers::to_string(g.run.status);
      } else {
        j["error"] = g.run.error;
      }
      a.push_back(j);
    }
    out << nlohmann::json{{"scenario", l.scenario.driver.name}, {"max_release_time_s", lim.max_release_time_s},
                          {"max_switch_voltage_V", lim.max_switch_voltage_V}, {"time_metric", lim.time_metric}, {"meeting", meeting}, {"candidates", a},
                          {"caution", kCaution}}.dump(2)
        << "\n";
    return 0;
  }
  out << "coilkick suggest — " << l.scenario.driver.name << " (" << o.file << ")\n"
      << "limits: " << (lim.time_metric == "contact_open_time_s" ? "contacts open" : "release") << " within "
      << metric_text("x_s", lim.max_release_time_s) << ", switch voltage at most "
      << metric_text("x_V", lim.max_switch_voltage_V) << "; " << meeting << " of " << list.size() << " candidates meet both\n\n";
  out << std::left << std::setw(5) << "rank" << std::setw(18) << "clamp" << std::setw(34) << "parts" << std::right << std::setw(11)
      << (lim.time_metric == "contact_open_time_s" ? "opens" : "release") << std::setw(9) << "margin" << std::setw(11) << "peak" << std::setw(9) << "margin";
  const bool hold = l.scenario.driver.has_periodic_drive();
  if (hold) out << std::setw(12) << "hold clamp" << std::setw(10) << "front";
  out << "  checks\n";
  const auto further = drivers::further_channel_names(l.scenario.driver);
  auto board = [&](const drivers::Metrics& m, const std::string& name) { return drivers::highest_over_channels(m, further, name); };
  int shown = 0;
  for (const auto& g : list) {
    if (!g.meets || shown >= top) break;
    ++shown;
    out << std::left << std::setw(5) << shown << std::setw(18) << drivers::to_string(g.clamp.kind) << std::setw(34) << g.parts << std::right
        << std::setw(11) << metric_text("x_s", board(g.run.metrics, lim.time_metric)) << std::setw(8)
        << static_cast<int>(std::lround(100 * g.release_margin)) << "%" << std::setw(11)
        << metric_text("x_V", board(g.run.metrics, "switch_voltage_peak_V")) << std::setw(8) << static_cast<int>(std::lround(100 * g.voltage_margin))
        << "%";
    if (hold) {
      out << std::setw(12) << metric_text("x_W", g.run.metrics.get("hold_clamp_average_power_W")) << std::setw(10)
          << (g.dominated_by == 0 ? "yes" : "-");
    }
    out << "  " << drivers::to_string(g.run.status) << "\n";
  }
  if (shown == 0) out << "  none of the candidates meets both limits; relax one, or choose another switch\n";
  if (!further.empty()) {
    out << "\nA board of " << further.size() + 1 << " channels, each with the candidate clamp: the slowest release and the highest peak of any channel.\n";
  }
  if (hold) {
    out << "\nPWM hold: release times from the hold's steady state; hold clamp: the clamp's average power in\n"
           "hold. Ranked front first: no other candidate is both cooler in hold and no slower to release.\n";
  }
  out << "\nPreferred values: Zener and TVS voltages of the catalogue (E24, IEC 60063), resistors E12,\n"
         "RC pairs E3. Check the parts' ratings in the full report (coilkick run) before choosing.\n\n"
      << kCaution << "\n";
  return 0;
}

}  // namespace coilkick::cli
