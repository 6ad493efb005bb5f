// coilkick fit FILE --capture CAPTURE.csv: the scenario's keys fitted to a bench capture of the
// switch-off or switch-on (analyses/fit.hpp), with standard errors, what the capture cannot
// determine, the armature's flight (switch-on) or the measured release current (contact
// channel); optionally the overlay chart, the coil record for models/coils, the samples as CSV.
#include <chrono>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <iomanip>
#include <iostream>

#include "coilkick/analyses/coil_record.hpp"
#include "coilkick/analyses/fit.hpp"
#include "coilkick/drivers/si_format.hpp"
#include "coilkick/engine/closest_name.hpp"
#include "coilkick/scenario/quantity.hpp"
#include "commands.hpp"
#include "report_format.hpp"
#include "svg_plot.hpp"

namespace coilkick::cli {
namespace {

// "role=column" items of --channels, "column=unit" items of --units.
std::map<std::string, std::string> pairs(const std::vector<std::string>& items, const char* option, const std::vector<std::string>& roles) {
  std::map<std::string, std::string> out;
  for (const auto& item : items) {
    const auto eq = item.find('=');
    if (eq == std::string::npos || eq == 0 || eq + 1 == item.size()) {
      throw std::invalid_argument(std::string(option) + ": '" + item + "' is not NAME=VALUE");
    }
    const std::string name = item.substr(0, eq);
    if (!roles.empty() && std::find(roles.begin(), roles.end(), name) == roles.end()) {
      throw std::invalid_argument(std::string(option) + ": unknown channel role '" + name + "'" + engine::did_you_mean(name, roles) +
                                  " (the roles are time, current, voltage, contact, drive)");
    }
    out[name] = item.substr(eq + 1);
  }
  return out;
}

double option_quantity(const char* option, const std::string& text, scenario::Dimension d) {
  double v = 0.0;
  try {
    v = scenario::parse_quantity(text, d);
  } catch (const std::invalid_argument& e) {
    throw std::invalid_argument(std::string(option) + ": " + e.what());
  }
  if (!(v > 0.0)) throw std::invalid_argument(std::string(option) + ": must be > 0, not '" + text + "'");
  return v;
}

std::string key_unit(const std::string& key) {
  for (const auto& [k, unit] : scenario::numeric_keys()) {
    if (k == key) return unit;
  }
  return "";
}

std::string today() {
  const std::time_t now = std::time(nullptr);
  char buf[16];
  std::strftime(buf, sizeof buf, "%Y-%m-%d", std::gmtime(&now));
  return buf;
}

void write_file(const std::string& path, const std::string& text, const char* what) {
  std::ofstream f(path, std::ios::binary);
  if (!f || !(f << text) || !f.flush()) throw std::invalid_argument(std::string(what) + ": cannot write '" + path + "'");
}

std::string value_text(double v, const std::string& unit) {
  if (std::isnan(v)) return "-";
  return unit.empty() || unit == "1" ? metric_text("", v) : drivers::format_si(v, unit, 4);
}

}  // namespace

int cmd_fit(const CommonOptions& o, const FitCommand& f, std::ostream& out) {
  const Loaded l = load(o);
  scenario::CaptureOptions co;
  co.channels = pairs(f.channels, "--channels", {"time", "current", "voltage", "contact", "drive"});
  co.units = pairs(f.units, "--units", {});
  if (!f.shunt.empty()) co.shunt_resistance_ohm = option_quantity("--shunt", f.shunt, scenario::Dimension::resistance);
  if (!co.channels.count("current")) co.channels["current"] = "2";
  // The default third column is the switch voltage, unless a drive channel was named and no voltage.
  if (!co.channels.count("voltage") && !co.channels.count("drive")) co.channels["voltage"] = "3";
  const auto capture = scenario::read_capture_file(f.capture, co);
  analyses::FitOptions fo;
  if (!f.noise.empty()) fo.current_noise_A = option_quantity("--noise", f.noise, scenario::Dimension::current);
  const auto edge = analyses::capture_edge(capture);
  const auto keys = f.parameters.empty() ? analyses::default_fit_keys(l.scenario, edge) : f.parameters;
  if (!o.quiet) {
    fo.on_iteration = [](int it, double ss) {
      std::cerr << "\rfit: iteration " << it << ", weighted sum of squares " << std::setprecision(6) << ss << "      " << std::flush;
    };
  }
  const auto fit = analyses::fit_capture(l.scenario, l.parts, capture, keys, fo);
  if (!o.quiet) std::cerr << "\n";
  const auto fitted = analyses::fitted_scenario(l.scenario, l.parts, fit);
  const auto n = fit.keys.size();
  const bool off = fit.edge == analyses::CaptureEdge::switch_off;
  const std::string edge_words = fit.alignment == analyses::EdgeAlignment::drive ? (off ? "falling" : "rising") + std::string(" edge of the drive")
                                                                                : (off ? "rising" : "falling") + std::string(" edge of the switch voltage");

  if (!f.plot.empty()) {
    write_file(f.plot,
               overlay_svg(fit.time_after_edge_s, capture.current_A, fit.model_current_A, fit.current_noise_A,
                           l.scenario.driver.name + ": " + analyses::to_string(fit.edge) + " fitted to " +
                               std::filesystem::path(f.capture).filename().string(),
                           edge_words),
               "--plot");
  }
  if (!f.coil_record.empty()) {
    const std::string name = f.record_name.empty() ? std::filesystem::path(f.coil_record).stem().string() : f.record_name;
    write_file(f.coil_record, analyses::coil_record_toml(fitted, fit, name, std::filesystem::path(f.capture).filename().string(), today()),
               "--coil-record");
  }
  if (!f.csv.empty()) {
    std::ostringstream c;
    c << csv_caution_comment() << "time_after_edge_s,measured_current_A,model_current_A,residual_in_noise_units\n";
    for (std::size_t k = 0; k < capture.current_A.size(); ++k) {
      c << csv_number(fit.time_after_edge_s[k]) << "," << csv_number(capture.current_A[k]) << "," << csv_number(fit.model_current_A[k])
        << "," << csv_number((capture.current_A[k] - fit.model_current_A[k]) / fit.current_noise_A) << "\n";
    }
    write_file(f.csv, c.str(), "--csv");
  }

  const auto& r = fit.result;
  if (o.json) {
    nlohmann::json params = nlohmann::json::array();
    for (std::size_t k = 0; k < n; ++k) {
      const auto i = static_cast<Eigen::Index>(k);
      params.push_back({{"key", fit.keys[k]}, {"unit", key_unit(fit.keys[k])}, {"start", number_json(fit.start_values[k])},
                        {"value", number_json(r.parameters[i])}, {"standard_error", number_json(r.standard_errors[i])},
                        {"determined", std::find(fit.undetermined.begin(), fit.undetermined.end(), fit.keys[k]) == fit.undetermined.end()}});
    }
    auto motion = [](const analyses::ArmatureMotion& m) {
      return nlohmann::json{{"start_s", number_json(m.start_s)}, {"end_s", number_json(m.end_s)}};
    };
    out << nlohmann::json{{"scenario", l.scenario.driver.name}, {"file", o.file}, {"capture", f.capture},
                          {"edge", analyses::to_string(fit.edge)}, {"time_zero", std::string(analyses::to_string(fit.alignment)) + " edge"},
                          {"samples", capture.time_s.size()},
                          {"current_noise_A", fit.current_noise_A}, {"noise_given", fo.current_noise_A > 0.0},
                          {"parameters", params}, {"time_shift_s", number_json(fit.time_shift_s)},
                          {"time_shift_error_s", number_json(fit.time_shift_error_s)}, {"residual_rms", r.residual_rms},
                          {"iterations", r.iterations}, {"engine_runs", r.evaluations}, {"undetermined", fit.undetermined},
                          {"measured_armature_motion", motion(fit.measured_motion)}, {"model_armature_motion", motion(fit.model_motion)},
                          {"model_operate_time_s", number_json(fit.model_make_time_s)},
                          {"measured_release_current_A", number_json(fit.measured_release_current_A)},
                          {"measured_contact_time_s", number_json(fit.measured_contact_time_s)}, {"caution", kCaution}}
               .dump(2)
        << "\n";
    return 0;
  }
  out << "coilkick fit — " << l.scenario.driver.name << " (" << o.file << ")\n"
      << "Capture: " << f.capture << " — " << analyses::to_string(fit.edge) << ", " << capture.time_s.size() << " samples over "
      << drivers::format_si(capture.time_s.back() - capture.time_s.front(), "s") << "; current noise "
      << drivers::format_si(fit.current_noise_A, "A") << (fo.current_noise_A > 0.0 ? " (given)" : " (from the steady current before the edge)")
      << "; time zero at the " << analyses::to_string(fit.alignment) << " edge"
      << "\n\nFitted by weighted least squares (Levenberg–Marquardt, " << r.iterations << " iterations, " << r.evaluations
      << " runs of the engine)\n  " << std::left << std::setw(32) << "key" << std::right << std::setw(14) << "start" << std::setw(14)
      << "fitted" << std::setw(24) << "standard error" << "\n";
  for (std::size_t k = 0; k < n; ++k) {
    const auto i = static_cast<Eigen::Index>(k);
    const std::string unit = key_unit(fit.keys[k]);
    const double rel = r.standard_errors[i] / std::abs(r.parameters[i]);
    std::ostringstream se;
    se << value_text(r.standard_errors[i], unit);
    if (std::isfinite(rel)) se << " (" << std::setprecision(2) << 100.0 * rel << " %)";
    out << "  " << std::left << std::setw(32) << fit.keys[k] << std::right << std::setw(14) << value_text(fit.start_values[k], unit)
        << std::setw(14) << value_text(r.parameters[i], unit) << std::setw(24) << se.str() << "\n";
  }
  out << "  " << std::left << std::setw(32) << "clock shift of the capture" << std::right << std::setw(14) << "0 s" << std::setw(14)
      << value_text(fit.time_shift_s, "s") << std::setw(24) << value_text(fit.time_shift_error_s, "s") << "\n"
      << "\nResidual RMS in units of the noise: " << std::setprecision(3) << r.residual_rms
      << (r.residual_rms < 1.5 ? " (the model explains the capture to its noise)"
                               : " (above 1: the model leaves a shape in the residuals; see the overlay's lower panel)")
      << "\n";
  if (fit.undetermined.empty()) {
    out << "Every key is determined (each standard error below its value).\n";
  } else {
    out << "Not determined by this capture (standard error not below the value): ";
    for (std::size_t k = 0; k < fit.undetermined.size(); ++k) out << (k ? ", " : "") << fit.undetermined[k];
    out << " — keep the scenario's values for these, or capture an edge that shows them.\n";
  }
  if (fit.edge == analyses::CaptureEdge::switch_on) {
    const auto& mm = fit.measured_motion;
    const auto& mo = fit.model_motion;
    if (mm.found()) {
      out << "Armature's flight (the current's dip): measured " << value_text(mm.start_s, "s") << " to " << value_text(mm.end_s, "s")
          << " after the edge; fitted model " << value_text(mo.start_s, "s") << " to " << value_text(mo.end_s, "s") << "\n";
    } else {
      out << "No dip in the measured current: the armature's flight is not visible in this capture.\n";
    }
    if (!std::isnan(fit.model_make_time_s)) {
      out << "Model's operate time (drive edge to contact make, IEC 61810-1): " << value_text(fit.model_make_time_s, "s") << "\n";
    }
  }
  if (!std::isnan(fit.measured_release_current_A)) {
    out << "Contact channel: changes " << value_text(fit.measured_contact_time_s, "s") << " after the edge, at a coil current of "
        << value_text(fit.measured_release_current_A, "A") << " (the measured release current)\n";
  }
  if (!f.plot.empty()) out << "Overlay chart: " << f.plot << "\n";
  if (!f.coil_record.empty()) out << "Coil record: " << f.coil_record << "\n";
  if (!f.csv.empty()) out << "Samples: " << f.csv << "\n";
  out << "\n" << kCaution << "\n";
  return 0;
}

}  // namespace coilkick::cli
