#pragma once
// What sweeps, tolerance runs and suggestions keep of each switch-off: the metrics and rating
// checks (not the waveforms), or the error that stopped the run. A failed point is reported,
// never dropped or replaced.
#include <string>
#include <vector>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/drivers/metrics.hpp"
#include "coilkick/drivers/operating_point_start.hpp"
#include "coilkick/drivers/rating_checks.hpp"

namespace coilkick::analyses {

struct RunSummary {
  drivers::Metrics metrics;
  std::vector<drivers::RatingCheck> checks;
  drivers::CheckStatus status = drivers::CheckStatus::pass;
  std::string error;  // non-empty: the run failed (bad value at this point, or solver failure)
  bool invalid_input = false;  // the error is a bad value at this point (not a solver failure)
  bool ok() const { return error.empty(); }
};

// `starts`: DC points to start Newton from (drivers::simulate_switch_off).
RunSummary summarize_run(const drivers::DriverSpec& spec, const catalogue::Catalogue& parts,
                         const drivers::OperatingPoints* starts = nullptr);

}  // namespace coilkick::analyses
