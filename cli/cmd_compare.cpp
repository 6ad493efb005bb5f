// coilkick compare FILE: every clamp kind on the driver, side by side, fastest release first.
#include <cmath>
#include <fstream>
#include <iomanip>
#include <stdexcept>

#include "coilkick/drivers/compare.hpp"
#include "commands.hpp"
#include "report_format.hpp"
#include "svg_plot.hpp"

namespace coilkick::cli {

namespace {

// On a board of several channels a column reads the whole board: the highest peak and the slowest
// release of any channel, energies summed over the channels (and the common pin's Zener).
enum class Across { highest, sum };
double board_value(const drivers::Metrics& m, const std::vector<std::string>& further, const std::string& name, Across how) {
  if (how == Across::highest) return drivers::highest_over_channels(m, further, name);
  double v = m.get(name);
  for (const auto& ch : further) v += m.get(ch + "." + name);
  if (how == Across::sum && name == "clamp_energy_J" && !std::isnan(m.get("common_clamp_energy_J"))) v += m.get("common_clamp_energy_J");
  return v;
}

}  // namespace

int cmd_compare(const CommonOptions& o, const std::string& csv_path, const std::string& plot_path, std::ostream& out) {
  const Loaded l = load(o);
  const auto& d = l.scenario.driver;
  const auto rows = drivers::compare_clamps(d, l.parts, scenario::applicable_clamp_kinds(l.scenario));
  if (!csv_path.empty()) {
    std::ofstream f(csv_path);
    if (!f) throw std::invalid_argument("--csv: cannot write '" + csv_path + "'");
    f << csv_caution_comment() << "clamp_kind,parts,overall,error";
    const auto names = drivers::metric_names(drivers::further_channel_names(l.scenario.driver));
    for (const auto& n : names) f << "," << n;
    f << "\n";
    for (const auto& r : rows) {
      f << drivers::to_string(r.kind) << ",\"" << r.parts << "\"," << (r.result ? drivers::to_string(drivers::overall_status(r.result->checks)) : "error")
        << ",\"" << r.error << "\"";
      for (const auto& n : names) f << "," << (r.result ? csv_number(r.result->metrics.get(n)) : "");
      f << "\n";
    }
  }
  if (!plot_path.empty()) {
    std::ofstream f(plot_path);
    if (!f) throw std::invalid_argument("--plot: cannot write '" + plot_path + "'");
    f << comparison_svg(rows, "coilkick compare — " + d.name);
  }
  if (o.json) {
    nlohmann::json a = nlohmann::json::array();
    for (const auto& r : rows) {
      nlohmann::json j{{"clamp_kind", drivers::to_string(r.kind)}, {"parts", r.parts}};
      if (r.result) {
        j["metrics"] = metrics_json(r.result->metrics);
        j["checks"] = checks_json(r.result->checks);
        j["overall"] = drivers::to_string(drivers::overall_status(r.result->checks));
      } else {
        j["error"] = r.error;
      }
      a.push_back(j);
    }
    out << nlohmann::json{{"scenario", d.name}, {"file", o.file}, {"rows", a}, {"caution", kCaution}}.dump(2) << "\n";
    return 0;
  }
  out << "coilkick compare — " << d.name << " (" << o.file << ")\n"
      << drivers::to_string(d.switch_.topology) << " with " << d.switch_.part << ", " << devices::to_string(d.analysis.model_level)
      << " models; fastest release first; times from the start of the switch-off edge\n\n";
  out << std::left << std::setw(18) << "clamp" << std::setw(34) << "parts" << std::right << std::setw(11) << "peak"
      << std::setw(8) << "margin" << std::setw(11) << "release" << std::setw(11) << "to 10 %" << std::setw(11) << "clamp E"
      << std::setw(11) << "switch E";
  const bool contacts = d.relay.armature_model, hold = d.has_periodic_drive(), cable = d.cable.present();
  const auto further = drivers::further_channel_names(d);
  if (cable) out << std::setw(11) << "coil end";
  if (contacts) out << std::setw(11) << "opens" << std::setw(11) << "speed";
  if (hold) out << std::setw(11) << "hold I" << std::setw(9) << "I/I_rel" << std::setw(11) << "clamp P" << std::setw(11) << "switch P";
  out << "  checks\n";
  for (const auto& r : rows) {
    out << std::left << std::setw(18) << drivers::to_string(r.kind) << std::setw(34) << r.parts << std::right;
    if (!r.result) {
      out << "  " << r.error << "\n";
      continue;
    }
    const auto& m = r.result->metrics;
    auto board = [&](const char* name, Across how) { return board_value(m, further, name, how); };
    std::string flags;
    for (const auto& c : r.result->checks) {
      if (c.status != drivers::CheckStatus::pass) flags += (flags.empty() ? "" : ", ") + c.name + " " + drivers::to_string(c.status);
    }
    const double margin = board("switch_voltage_margin", Across::highest);
    out << std::setw(11) << metric_text("x_V", board("switch_voltage_peak_V", Across::highest)) << std::setw(8)
        << (std::isnan(margin) ? std::string("-") : std::to_string(static_cast<int>(std::lround(100 * margin))) + "%")
        << std::setw(11) << metric_text("x_s", board("release_time_s", Across::highest)) << std::setw(11)
        << metric_text("x_s", board("current_decay_time_10pct_s", Across::highest)) << std::setw(11)
        << metric_text("x_J", board("clamp_energy_J", Across::sum)) << std::setw(11) << metric_text("x_J", board("switch_energy_J", Across::sum));
    if (cable) out << std::setw(11) << metric_text("x_V", m.get("coil_end_peak_V"));
    if (contacts) {
      out << std::setw(11) << metric_text("x_s", m.get("contact_open_time_s")) << std::setw(11)
          << metric_text("x_m_per_s", m.get("armature_speed_at_contact_open_m_per_s"));
    }
    if (hold) {
      const double margin_hold = m.get("hold_current_margin");
      out << std::setw(11) << metric_text("x_A", m.get("hold_average_current_A")) << std::setw(9)
          << (std::isnan(margin_hold) ? std::string("-") : metric_text("x", margin_hold)) << std::setw(11)
          << metric_text("x_W", m.get("hold_clamp_average_power_W")) << std::setw(11)
          << metric_text("x_W", m.get("hold_switch_average_power_W"));
    }
    out << "  " << (flags.empty() ? "all pass" : flags) << "\n";
  }
  if (!further.empty()) {
    out << "\nA board of " << further.size() + 1 << " channels, each with the row's clamp: peak and margin the highest of any channel, "
           "release and to 10 % the slowest, energies summed over the channels (clamp E with the common pin's Zener).";
  }
  if (cable) {
    out << "\ncoil end: peak across the coil's own terminals at the cable's far end (a fast front doubles there; "
           "the clamp holds only the board's terminals).";
  }
  if (contacts) {
    out << "\nopens: the make contact separates (armature model); speed: armature speed there. "
           "Slow, late opening means longer arcing and more contact wear.";
  }
  if (hold) {
    out << "\nhold I: average coil current in the PWM hold; I/I_rel: its lowest value over the release current "
           "(below 1 the relay drops out); clamp P, switch P: average power in hold. The switch-off starts from the hold.";
  }
  out << "\nmargin: peak switch voltage over the switch's rating; keep below "
      << static_cast<int>(100 * d.analysis.switch_voltage_derating) << " % (common practice).\n\n"
      << kCaution << "\n";
  return 0;
}

}  // namespace coilkick::cli
