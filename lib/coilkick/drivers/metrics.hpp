#pragma once
// Named metrics of a run. Names are stable and end in their SI unit (see README, "Metrics").
#include <string>
#include <utility>
#include <vector>

namespace coilkick::drivers {

class Metrics {
 public:
  void set(const std::string& name, double value);
  double get(const std::string& name) const;  // throws for unknown names (with a suggestion)
  bool has(const std::string& name) const;
  const std::vector<std::pair<std::string, double>>& items() const { return items_; }

 private:
  std::vector<std::pair<std::string, double>> items_;
};

// The metric names, in report order.
const std::vector<std::string>& metric_names();
// A board of several channels (DriverSpec::channels): metric_names(), then for each further
// channel its own metrics behind its name ("pump.release_time_s"; not the board's — supply rail,
// common clamp, energy balance — which the first names carry, nor hold or armature metrics,
// which a board does not have).
std::vector<std::string> metric_names(const std::vector<std::string>& further_channels);
bool is_board_metric(const std::string& name);
// A board's worst channel for a metric: the highest of the first channel's `name` and every
// further channel's "<channel>.<name>" (NaN only where all are NaN).
double highest_over_channels(const Metrics& m, const std::vector<std::string>& further_channels, const std::string& name);

}  // namespace coilkick::drivers
