#include "coilkick/drivers/metrics.hpp"

#include <cmath>
#include <stdexcept>

#include "coilkick/engine/closest_name.hpp"

namespace coilkick::drivers {

void Metrics::set(const std::string& name, double value) {
  for (auto& [n, v] : items_) {
    if (n == name) {
      v = value;
      return;
    }
  }
  items_.emplace_back(name, value);
}

bool Metrics::has(const std::string& name) const {
  for (const auto& [n, v] : items_) {
    if (n == name) return true;
  }
  return false;
}

double Metrics::get(const std::string& name) const {
  for (const auto& [n, v] : items_) {
    if (n == name) return v;
  }
  std::vector<std::string> names;  // only to say what is close
  for (const auto& item : items_) names.push_back(item.first);
  throw std::invalid_argument("no metric named '" + name + "'" + engine::did_you_mean(name, names));
}

const std::vector<std::string>& metric_names() {
  static const std::vector<std::string> n{
      // on-state
      "coil_current_at_switch_off_A", "drive_current_A", "forced_beta", "switch_saturation_voltage_V",
      "coil_voltage_on_V", "logic_pin_current_A",
      // switch-off
      "switch_voltage_peak_V", "switch_voltage_peak_time_s", "switch_voltage_rating_V", "switch_voltage_margin",
      "coil_end_peak_V",
      "clamp_current_peak_A", "clamp_energy_J", "coil_resistance_energy_J", "switch_energy_J", "switch_breakdown_energy_J", "extra_parts_energy_J", "cable_energy_J",
      "energy_balance_error", "release_time_s", "current_decay_time_10pct_s", "switch_off_delay_s",
      "ringing_frequency_Hz", "clamp_average_power_W",
      // the supply rail (0 for an ideal supply)
      "supply_rail_peak_rise_V", "supply_rail_dip_V", "supply_energy_returned_J",
      // the board's common clamp pin (NaN without its Zener)
      "common_clamp_energy_J", "common_clamp_current_peak_A", "cable_common_core_energy_J",
      // peak-and-hold drive (NaN without it)
      "hold_pull_in_time_s", "hold_pull_in_current_A", "hold_duty", "hold_average_current_A", "hold_ripple_A",
      "hold_minimum_current_A", "hold_current_margin", "hold_clamp_average_power_W", "hold_switch_average_power_W",
      "hold_supply_energy_per_period_J", "hold_clamp_energy_per_period_J",
      // armature model (NaN without it)
      "contact_open_time_s", "armature_speed_at_contact_open_m_per_s", "operate_time_s"};
  return n;
}

bool is_board_metric(const std::string& name) {
  for (const char* b : {"supply_rail_peak_rise_V", "supply_rail_dip_V", "supply_energy_returned_J", "common_clamp_energy_J",
                        "common_clamp_current_peak_A", "cable_common_core_energy_J", "energy_balance_error"}) {
    if (name == b) return true;
  }
  return false;
}

double highest_over_channels(const Metrics& m, const std::vector<std::string>& further_channels, const std::string& name) {
  double v = m.get(name);
  for (const auto& ch : further_channels) {
    const double x = m.get(ch + "." + name);
    if (std::isnan(v) || x > v) v = x;
  }
  return v;
}

std::vector<std::string> metric_names(const std::vector<std::string>& further_channels) {
  std::vector<std::string> out = metric_names();
  for (const auto& ch : further_channels) {
    for (const auto& n : metric_names()) {
      if (is_board_metric(n) || n.rfind("hold_", 0) == 0 || n == "contact_open_time_s" ||
          n == "armature_speed_at_contact_open_m_per_s" || n == "operate_time_s") {
        continue;
      }
      out.push_back(ch + "." + n);
    }
  }
  return out;
}

}  // namespace coilkick::drivers
