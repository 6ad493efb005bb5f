// coilkick run FILE: one driver — on-state check, switch-off metrics, rating checks.
#include <cmath>
#include <fstream>
#include <iomanip>
#include <stdexcept>

#include "coilkick/analyses/parallel.hpp"
#include "coilkick/drivers/cable_loss.hpp"
#include "coilkick/drivers/compare.hpp"
#include "coilkick/drivers/si_format.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/relay/relay_calibration.hpp"
#include "commands.hpp"
#include "report_format.hpp"

namespace coilkick::cli {

Loaded load(const CommonOptions& o) {
  Loaded l;
  l.parts.load_directory(o.models_dir.empty() ? catalogue::default_models_directory() : o.models_dir);
  l.scenario = scenario::read_scenario_file(o.file, l.parts);
  return l;
}

int thread_count(const CommonOptions& o) { return o.threads > 0 ? o.threads : analyses::default_thread_count(); }

namespace {

struct Line {
  const char* label;
  const char* metric;
};

void section(std::ostream& out, const char* title, const std::vector<Line>& lines, const drivers::Metrics& m) {
  out << title << "\n";
  for (const auto& l : lines) {
    out << "  " << std::left << std::setw(34) << l.label << std::setw(14) << metric_text(l.metric, m.get(l.metric)) << "  "
        << l.metric << "\n";
  }
}

void write_waveforms(const drivers::SwitchOffResult& r, const std::string& path) {
  std::ofstream f(path);
  if (!f) throw std::invalid_argument("--waveforms: cannot write '" + path + "'");
  const auto& t = *r.transient;
  const auto& c = t.circuit();
  f << csv_caution_comment() << "time_s,switch_voltage_V,coil_current_A,clamp_current_A";
  // Further channels: their own switch voltage and coil current (every node's voltage follows).
  std::vector<const drivers::ChannelResult*> more;
  for (std::size_t k = 1; k < r.channels.size(); ++k) {
    more.push_back(&r.channels[k]);
    f << "," << r.channels[k].name << ".switch_voltage_V," << r.channels[k].name << ".coil_current_A";
  }
  std::vector<std::string> nodes = c.node_names();
  for (const auto& n : nodes) f << ",node_" << n << "_V";
  f << "\n";
  const auto& w = r.waveforms;
  for (Eigen::Index i = 0; i < w.time_s.size(); ++i) {
    f << csv_number(w.time_s[i]) << "," << csv_number(w.switch_voltage_V[i]) << "," << csv_number(w.coil_current_A[i]) << ","
      << csv_number(w.clamp_current_A[i]);
    for (const auto* ch : more) f << "," << csv_number(ch->waveforms.switch_voltage_V[i]) << "," << csv_number(ch->waveforms.coil_current_A[i]);
    const double* x = t.states().row(i).data();
    for (const auto& n : nodes) f << "," << csv_number(c.node_voltage_V(n, w.time_s[i], x));
    f << "\n";
  }
}

// A board of several channels: one line per channel, then the common clamp pin.
void channel_table(std::ostream& out, const drivers::SwitchOffResult& r) {
  out << "Channels (each from its own switch-off edge; the first channel is the top-level tables)\n";
  const std::vector<std::pair<const char*, const char*>> cols{{"coil current", "coil_current_at_switch_off_A"},
                                                              {"switch peak", "switch_voltage_peak_V"},
                                                              {"coil peak", "coil_end_peak_V"},
                                                              {"clamp energy", "clamp_energy_J"},
                                                              {"release", "release_time_s"},
                                                              {"to 10 %", "current_decay_time_10pct_s"}};
  out << "  " << std::left << std::setw(14) << "channel";
  for (const auto& [label, metric] : cols) out << std::setw(14) << label;
  out << "checks\n";
  for (const auto& ch : r.channels) {
    out << "  " << std::setw(14) << drivers::channel_label(ch.name);
    for (const auto& [label, metric] : cols) out << std::setw(14) << metric_text(metric, ch.metrics.get(metric));
    out << status_word(drivers::overall_status(ch.checks)) << "\n";
  }
  if (!std::isnan(r.metrics.get("common_clamp_current_peak_A"))) {
    out << "  the common clamp pin's Zener: " << metric_text("common_clamp_energy_J", r.metrics.get("common_clamp_energy_J"))
        << " (common_clamp_energy_J), peak " << metric_text("common_clamp_current_peak_A", r.metrics.get("common_clamp_current_peak_A"))
        << " (common_clamp_current_peak_A)\n";
  }
  if (r.metrics.get("cable_common_core_energy_J") > 0.0) {
    out << "  the cable's shared common core: " << metric_text("cable_common_core_energy_J", r.metrics.get("cable_common_core_energy_J"))
        << " (cable_common_core_energy_J)\n";
  }
}

}  // namespace

int cmd_run(const CommonOptions& o, const std::string& waveforms_csv, bool fail_on_check, std::ostream& out) {
  const Loaded l = load(o);
  const auto& d = l.scenario.driver;
  const auto r = drivers::simulate_switch_off(d, l.parts);
  if (!waveforms_csv.empty()) write_waveforms(r, waveforms_csv);
  const auto& checks = r.checks;
  const auto status = drivers::overall_status(checks);
  if (o.json) {
    nlohmann::json j{{"scenario", d.name},
                     {"file", o.file},
                     {"topology", drivers::to_string(d.switch_.topology)},
                     {"switch_part", d.switch_.part},
                     {"clamp_kind", drivers::to_string(d.clamp.kind)},
                     {"clamp_parts", drivers::describe_clamp_parts(d.clamp)},
                     {"model_level", devices::to_string(d.analysis.model_level)},
                     {"metrics", metrics_json(r.metrics)},
                     {"checks", checks_json(checks)},
                     {"overall", drivers::to_string(status)},
                     {"solver", {{"accepted_steps", r.transient->statistics().accepted_steps},
                                 {"rejected_steps", r.transient->statistics().rejected_steps}}},
                     {"caution", kCaution}};
    if (!r.channels.empty()) {
      nlohmann::json a = nlohmann::json::array();
      for (const auto& ch : r.channels) {
        a.push_back({{"name", drivers::channel_label(ch.name)}, {"metrics", metrics_json(ch.metrics)}, {"checks", checks_json(ch.checks)},
                     {"overall", drivers::to_string(drivers::overall_status(ch.checks))}});
      }
      j["channels"] = a;
    }
    if (d.relay.armature_model) {
      nlohmann::json a = nlohmann::json::array();
      for (const auto& t : relay::calibrate_relay_cached(drivers::relay_datasheet(d)).targets) {
        a.push_back({{"name", t.name}, {"target", t.target}, {"achieved", t.achieved}, {"relative_error", t.relative_error()}});
      }
      j["relay_calibration"] = a;
    }
    out << j.dump(2) << "\n";
  } else {
    out << "coilkick run — " << d.name << " (" << o.file << ")\n"
        << drivers::to_string(d.switch_.topology) << " with " << d.switch_.part << ", clamp " << drivers::to_string(d.clamp.kind)
        << " (" << drivers::describe_clamp_parts(d.clamp) << "), " << devices::to_string(d.analysis.model_level) << " models\n\n";
    if (!r.channels.empty()) out << "The first channel in full (the others below, under Channels)\n\n";
    section(out, "On-state", {{"coil current", "coil_current_at_switch_off_A"}, {"drive current (base/gate)", "drive_current_A"},
                              {"forced gain", "forced_beta"}, {"switch voltage", "switch_saturation_voltage_V"},
                              {"coil voltage", "coil_voltage_on_V"}, {"logic pin current", "logic_pin_current_A"}}, r.metrics);
    out << "\n";
    section(out, "Switch-off (times from the start of the switch-off edge)",
            {{"peak switch voltage", "switch_voltage_peak_V"}, {"  at", "switch_voltage_peak_time_s"},
             {"switch voltage rating", "switch_voltage_rating_V"}, {"peak over rating", "switch_voltage_margin"},
             {"peak voltage across the coil", "coil_end_peak_V"},
             {"clamp peak current", "clamp_current_peak_A"}, {"energy into the clamp", "clamp_energy_J"},
             {"energy into the coil resistance", "coil_resistance_energy_J"}, {"energy into the switch", "switch_energy_J"},
             {"  of it in breakdown", "switch_breakdown_energy_J"},
             {"release time", "release_time_s"}, {"current down to 10 %", "current_decay_time_10pct_s"},
             {"switch-off delay", "switch_off_delay_s"}, {"ringing frequency", "ringing_frequency_Hz"},
             {"clamp average power", "clamp_average_power_W"}, {"energy balance error", "energy_balance_error"}},
            r.metrics);
    if (d.has_periodic_drive()) {
      out << "\n";
      section(out, d.repeat.present() ? "Repetition (its last cycle; the switch-off above ends it)"
                                      : "PWM hold (steady state; the switch-off above starts from it)",
              {{"pull-in time", "hold_pull_in_time_s"}, {"  current at its end", "hold_pull_in_current_A"},
               {"PWM duty", "hold_duty"}, {"average coil current", "hold_average_current_A"},
               {"ripple (peak to peak)", "hold_ripple_A"}, {"lowest coil current", "hold_minimum_current_A"},
               {"  over the release current", "hold_current_margin"}, {"clamp average power", "hold_clamp_average_power_W"},
               {"switch average power", "hold_switch_average_power_W"}, {"supply energy per period", "hold_supply_energy_per_period_J"},
               {"clamp energy per period", "hold_clamp_energy_per_period_J"}},
              r.metrics);
    }
    if (!r.channels.empty()) {
      out << "\n";
      channel_table(out, r);
    } else if (drivers::uses_common_pin(d) && !d.common_clamp.zener_part.empty()) {
      out << "\n";
      section(out, "The common clamp pin", {{"energy into its Zener", "common_clamp_energy_J"}, {"its peak current", "common_clamp_current_peak_A"}},
              r.metrics);
    }
    if (!d.supply.rail_is_ideal() || !d.extra_parts.empty() || d.cable.present()) {
      out << "\n";
      std::vector<Line> lines;
      if (!d.supply.rail_is_ideal()) {
        lines = {{"rail peak rise", "supply_rail_peak_rise_V"}, {"rail dip", "supply_rail_dip_V"},
                 {"energy returned to the supply", "supply_energy_returned_J"}};
      }
      if (!d.extra_parts.empty()) lines.push_back({"energy into the extra parts", "extra_parts_energy_J"});
      if (d.cable.present()) lines.push_back({"energy into the cable", "cable_energy_J"});
      section(out, "Supply rail, cable and extra parts (against the on-state)", lines, r.metrics);
      if (d.cable.present()) {
        // The line the cable is modelled as (docs/derivations.md, "A cable by its travelling waves").
        const auto& cb = d.cable;
        out << "  the cable as a line: impedance " << drivers::format_si(cb.characteristic_impedance_ohm(), "ohm") << ", delay "
            << drivers::format_si(cb.delay_s(), "s") << ", loop " << drivers::format_si(cb.loop_resistance_ohm(), "ohm")
            << "; it rings at " << drivers::format_si(drivers::quarter_wave_frequency_Hz(cb), "Hz") << " (a quarter wave)\n"
            << "  its high-frequency loss: a low-pass of " << std::setprecision(2) << drivers::high_frequency_loss_fraction(cb)
            << " of the delay";
        if (std::isnan(cb.high_frequency_loss_fraction)) {
          out << " (skin effect and insulation: " << std::setprecision(3) << drivers::cable_excess_loss_per_pass_Np(cb)
              << " Np per pass there)";
        } else {
          out << " (cable.high_frequency_loss_fraction)";
        }
        out << std::setprecision(6) << "\n";
      }
    }
    if (d.relay.armature_model) {
      out << "\n";
      section(out, "Contacts (armature model calibrated from the coil's data; IEC 61810-1 times, bounce excluded)",
              {{"contact opens", "contact_open_time_s"}, {"armature speed there", "armature_speed_at_contact_open_m_per_s"},
               {"operate time (switch-on)", "operate_time_s"}},
              r.metrics);
      out << "  calibration against the data sheet (at its nominal voltage and 20 degC):\n";
      for (const auto& t : relay::calibrate_relay_cached(drivers::relay_datasheet(d)).targets) {
        const std::string unit_metric = "x_" + t.name.substr(t.name.rfind('_') + 1);
        out << "    " << std::left << std::setw(22) << t.name << std::setw(12) << metric_text(unit_metric, t.target) << "model "
            << std::setw(12) << metric_text(unit_metric, t.achieved) << std::showpos << std::fixed << std::setprecision(2)
            << 100.0 * t.relative_error() << " %" << std::noshowpos << std::defaultfloat << std::setprecision(6) << "\n";
      }
    }
    out << "\nRating checks\n";
    for (const auto& c : checks) {
      out << "  " << status_word(c.status) << "  " << std::left << std::setw(36) << c.name << " " << std::setw(12)
          << metric_text("x_" + c.unit, c.value) << " limit " << std::setw(12) << metric_text("x_" + c.unit, c.limit);
      if (!std::isnan(c.fail_limit)) out << "(fails beyond " << metric_text("x_" + c.unit, c.fail_limit) << ") ";
      out << c.detail << "\n";
    }
    out << "  overall: " << status_word(status) << "\n\n" << kCaution << "\n";
  }
  return fail_on_check && status == drivers::CheckStatus::fail ? 1 : 0;
}

}  // namespace coilkick::cli
