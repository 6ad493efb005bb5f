#include "coilkick/analyses/coil_record.hpp"

#include <algorithm>
#include <cctype>
#include <charconv>
#include <filesystem>
#include <cmath>
#include <iomanip>
#include <limits>
#include <sstream>
#include <stdexcept>

#include "coilkick/drivers/driver_spec.hpp"

namespace coilkick::analyses {
namespace {

std::string quoted(const std::string& s) {
  std::string out = "\"";
  for (char ch : s) {
    if (ch == '"' || ch == '\\') out += '\\';
    if (ch == '\n') {
      out += "\\n";
      continue;
    }
    out += ch;
  }
  return out + "\"";
}

std::string number(double v) {
  char buf[64];
  const auto r = std::to_chars(buf, buf + sizeof buf, v);  // the shortest text that reads back the same double
  std::string s(buf, r.ptr);
  if (s.find_first_of(".eEn") == std::string::npos) s += ".0";  // a TOML float, not an integer
  return s;
}

std::string short_number(double v) {
  std::ostringstream o;
  o << std::setprecision(3) << v;
  return o.str();
}

}  // namespace

std::string coil_record_toml(const scenario::Scenario& fitted, const CaptureFit& fit, const std::string& name,
                             const std::string& capture_file, const std::string& date) {
  if (name.empty() || !std::all_of(name.begin(), name.end(), [](char ch) { return std::isalnum(static_cast<unsigned char>(ch)) || ch == '_' || ch == '-'; })) {
    throw std::invalid_argument("coil record: the name '" + name + "' must be letters, digits, '_' or '-'");
  }
  const auto& coil = fitted.driver.coil;
  const auto& relay = fitted.driver.relay;
  const std::string fitted_to = "fitted to " + capture_file + ", " + date;
  const std::string scenario_name = std::filesystem::path(fitted.file).filename().string();
  const std::string not_fitted = "as in the scenario " + (scenario_name.empty() ? std::string("given") : scenario_name) + " (not fitted)";
  auto source_of = [&](const std::string& key, const char* unit, const std::string& fitted_note = "") {
    const auto it = std::find(fit.keys.begin(), fit.keys.end(), key);
    if (it == fit.keys.end()) return not_fitted;
    const auto k = static_cast<Eigen::Index>(it - fit.keys.begin());
    std::string s = fitted_to + fitted_note + " (standard error " + short_number(fit.result.standard_errors[k]) + " " + unit;
    if (std::find(fit.undetermined.begin(), fit.undetermined.end(), key) != fit.undetermined.end()) s += "; undetermined by the capture";
    return s + ")";
  };
  std::ostringstream o;
  o << "# Coil record from a fit to a bench capture (coilkick fit). Values in SI units; each\n"
    << "# source says which were fitted and which were carried over from the scenario.\n\n"
    << "[[part]]\nname = " << quoted(name) << "\nfamily = \"coil\"\n"
    << "description = " << quoted("coil of '" + fitted.driver.name + "', " + fitted_to) << "\n[part.parameters]\n";
  auto line = [&](const char* field, double value, const char* unit, const std::string& source) {
    if (!std::isfinite(value) || !(value > 0.0)) return;  // the catalogue takes positive values only
    o << field << " = { value = " << number(value) << ", unit = \"" << unit << "\", source = " << quoted(source) << " }\n";
  };
  const double nominal = std::isfinite(relay.nominal_voltage_V) ? relay.nominal_voltage_V : fitted.driver.supply.voltage_V;
  line("nominal_voltage", nominal, "V", not_fitted);
  line("resistance_at_20C", coil.resistance_at_20C_ohm, "ohm", source_of("coil.resistance", "ohm", ", referred to 20 degC by the copper temperature coefficient (IEC 60028)"));
  line("inductance", coil.inductance_H, "H", source_of("coil.inductance", "H"));
  line("winding_capacitance", coil.winding_capacitance_F, "F", source_of("coil.winding_capacitance", "F"));
  line("core_loss_resistance", coil.core_loss_resistance_ohm, "ohm", source_of("coil.core_loss_resistance", "ohm"));
  double release_v = coil.release_voltage_V;
  std::string release_source = source_of("coil.release_voltage", "V");
  if (std::isfinite(fit.measured_release_current_A)) {
    release_v = fit.measured_release_current_A * coil.resistance_at_20C_ohm;
    release_source = "measured release current " + short_number(fit.measured_release_current_A) + " A at the contact channel's change in " +
                     capture_file + ", " + date + ", times the resistance at 20 degC";
  } else if (!std::isfinite(release_v) && std::isfinite(coil.release_current_A)) {
    release_v = coil.release_current_A * coil.resistance_at_20C_ohm;
    release_source = not_fitted + ": release current times the resistance at 20 degC";
  }
  line("release_voltage", release_v, "V", release_source);
  double operate_v = coil.operate_voltage_V;
  if (!std::isfinite(operate_v) && std::isfinite(coil.operate_current_A)) operate_v = coil.operate_current_A * coil.resistance_at_20C_ohm;
  line("operate_voltage", operate_v, "V", not_fitted);
  line("operate_time", relay.operate_time_s, "s", source_of("relay.operate_time", "s"));
  line("release_time", relay.release_time_s, "s", source_of("relay.release_time", "s"));
  if (relay.armature_model) {
    line("contact_gap", relay.contact_gap_m, "m", source_of("relay.contact_gap", "m"));
    line("over_travel", relay.over_travel_m, "m", source_of("relay.over_travel", "m"));
  }
  return o.str();
}

}  // namespace coilkick::analyses
