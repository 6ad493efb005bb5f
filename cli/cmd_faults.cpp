// coilkick faults FILE: what each node reads on a healthy and on a failed driver, by symptom.
#include <cmath>
#include <fstream>
#include <iomanip>
#include <stdexcept>

#include "coilkick/drivers/faults.hpp"
#include "commands.hpp"
#include "progress.hpp"
#include "report_format.hpp"

namespace coilkick::cli {
namespace {

double reading(const drivers::FaultCase& c, const std::string& node, bool on) {
  for (const auto& r : c.readings) {
    if (r.node == node) return on ? r.on_V : r.off_V;
  }
  return std::nan("");
}

nlohmann::json case_json(const drivers::FaultCase& c) {
  nlohmann::json readings = nlohmann::json::object();
  for (const auto& r : c.readings) readings[r.node] = {{"on_V", number_json(r.on_V)}, {"off_V", number_json(r.off_V)}};
  nlohmann::json heat = nlohmann::json::object();
  for (const auto& [el, p] : c.on_state_heat_W) heat[el] = number_json(p);
  nlohmann::json j{{"part", c.part}, {"fault", c.fault}, {"channel", drivers::channel_label(c.channel)}, {"readings", readings},
                   {"coil_current_on_A", number_json(c.coil_current_on_A)}, {"coil_current_off_A", number_json(c.coil_current_off_A)},
                   {"supply_current_on_A", number_json(c.supply_current_on_A)}, {"on_state_heat_W", heat},
                   {"symptoms", c.symptoms}, {"reasons", c.reasons}, {"error", c.error}};
  if (c.switch_off_run) j["switch_off"] = metrics_json(c.switch_off);
  return j;
}

}  // namespace

int cmd_faults(const CommonOptions& o, const std::string& csv_path, std::ostream& out) {
  const Loaded l = load(o);
  const auto rep = drivers::analyse_faults(l.scenario.driver, l.parts, progress_bar(o.quiet, "faults"));
  if (!csv_path.empty()) {
    std::ofstream f(csv_path);
    if (!f) throw std::invalid_argument("--csv: cannot write '" + csv_path + "'");
    f << csv_caution_comment() << "part,fault,symptoms,node,healthy_on_V,faulty_on_V,healthy_off_V,faulty_off_V\n";
    for (const auto& c : rep.faults) {
      std::string sym;
      for (const auto& s : c.symptoms) sym += (sym.empty() ? "" : "; ") + s;
      for (const auto& r : rep.healthy.readings) {
        f << c.part << ",\"" << c.fault << "\",\"" << sym << "\"," << r.node << "," << csv_number(r.on_V) << ","
          << csv_number(reading(c, r.node, true)) << "," << csv_number(r.off_V) << "," << csv_number(reading(c, r.node, false)) << "\n";
      }
    }
  }
  if (o.json) {
    nlohmann::json faults = nlohmann::json::array(), groups = nlohmann::json::object();
    for (const auto& c : rep.faults) faults.push_back(case_json(c));
    for (const auto& [sym, idx] : rep.by_symptom) {
      nlohmann::json names = nlohmann::json::array();
      for (int i : idx) names.push_back(rep.faults[static_cast<std::size_t>(i)].label());
      groups[sym] = names;
    }
    out << nlohmann::json{{"scenario", l.scenario.driver.name}, {"file", o.file}, {"healthy", case_json(rep.healthy)},
                          {"faults", faults}, {"by_symptom", groups}, {"caution", kCaution}}.dump(2)
        << "\n";
    return 0;
  }
  out << "coilkick faults — " << l.scenario.driver.name << " (" << o.file << ")\n"
      << "node voltages against ground, DC, with the drive on / off; open = 1 Tohm, shorted = 10 mohm, leaky = 100 kohm\n";
  auto nodes = [&](const drivers::FaultCase& c) {
    out << "    " << std::left << std::setw(22) << "node" << std::right << std::setw(12) << "healthy on" << std::setw(12) << "faulty on"
        << std::setw(13) << "healthy off" << std::setw(12) << "faulty off" << "\n";
    for (const auto& r : rep.healthy.readings) {
      const double fon = reading(c, r.node, true), foff = reading(c, r.node, false);
      const bool differs = std::abs(fon - r.on_V) > 0.05 + 0.05 * std::abs(r.on_V) || std::abs(foff - r.off_V) > 0.05 + 0.05 * std::abs(r.off_V);
      out << "  " << (differs ? "* " : "  ") << std::left << std::setw(22) << r.node << std::right << std::setw(12)
          << metric_text("x_V", r.on_V) << std::setw(12) << metric_text("x_V", fon) << std::setw(13) << metric_text("x_V", r.off_V)
          << std::setw(12) << metric_text("x_V", foff) << "\n";
    }
    const auto& h = rep.healthy_for(c.channel);
    out << "    " << (c.channel.empty() ? "" : c.channel + " ") << "coil current: " << metric_text("x_A", c.coil_current_on_A) << " on, "
        << metric_text("x_A", c.coil_current_off_A) << " off (healthy " << metric_text("x_A", h.coil_current_on_A) << " / "
        << metric_text("x_A", h.coil_current_off_A) << ")\n";
  };
  for (const auto& sym : drivers::symptom_names()) {
    auto it = rep.by_symptom.find(sym);
    if (it == rep.by_symptom.end()) continue;
    out << "\n== " << sym << " ==\n";
    for (int i : it->second) {
      const auto& c = rep.faults[static_cast<std::size_t>(i)];
      out << "\n  " << c.label() << "\n";
      for (std::size_t k = 0; k < c.symptoms.size(); ++k) {
        if (c.symptoms[k] == sym) out << "    why: " << c.reasons[k] << "\n";
      }
      nodes(c);
    }
  }
  if (auto it = rep.by_symptom.find("simulation failed"); it != rep.by_symptom.end()) {
    out << "\n== could not be simulated ==\n";
    for (int i : it->second) out << "  " << rep.faults[static_cast<std::size_t>(i)].label() << ": " << rep.faults[static_cast<std::size_t>(i)].error << "\n";
  }
  out << "\n* marks readings that differ from the healthy board by more than 50 mV + 5 %.\n\n" << kCaution << "\n";
  return 0;
}

}  // namespace coilkick::cli
