#pragma once
// Grid sweep over numeric scenario keys: each axis "KEY=START:STOP:COUNT" (linear spacing,
// values in SI base units or with a unit, e.g. "clamp.zener.overrides.breakdown_voltage=5:40:36"
// or "coil.inductance=100mH:1H:10"); the grid is the product of the axes, first axis slowest.
#include <functional>
#include <string>
#include <vector>

#include "coilkick/analyses/run_summary.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::analyses {

struct SweepAxis {
  std::string key;
  double start = 0.0, stop = 0.0;
  int count = 1;
  std::vector<double> values() const;
};

// Parses "KEY=START:STOP:COUNT"; throws std::invalid_argument saying what is wrong.
SweepAxis parse_sweep_axis(const std::string& text, const scenario::Scenario& s, const catalogue::Catalogue& parts);

struct SweepPoint {
  std::vector<double> values;  // one per axis
  RunSummary run;
};

std::vector<SweepPoint> run_sweep(const scenario::Scenario& s, const std::vector<SweepAxis>& axes,
                                  const catalogue::Catalogue& parts, int threads,
                                  const std::function<void(int, int)>& progress = {});

}  // namespace coilkick::analyses
