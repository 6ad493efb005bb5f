#pragma once
// Clamp suggestions: searches preferred values for the driver's clamp — every Zener of the
// catalogue (E24 voltages, IEC 60063) for diode+Zener and for the active clamp, every TVS for
// the clamp across the switch, E12 resistors (10 ohm … 10 kohm) for diode+resistor, and E3
// resistor × capacitor pairs (10 ohm … 1 kohm × 10 nF … 10 µF) for an RC across the coil —
// and ranks those that meet both limits by release time (fastest first), with the margins. The
// release time is the coil current falling below the release current, or, with the armature
// model, the contact opening (time_metric = "contact_open_time_s"). With a PWM hold the ranking
// puts first the candidates on the trade-off front of clamp power in hold against release time.
#include <functional>
#include <string>
#include <vector>

#include "coilkick/analyses/run_summary.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace coilkick::analyses {

struct SuggestLimits {
  double max_release_time_s = 0.0;
  double max_switch_voltage_V = 0.0;
  // The metric the time limit applies to and the ranking uses: "release_time_s" or, with the
  // armature model, "contact_open_time_s".
  std::string time_metric = "release_time_s";
  // Only these clamp kinds (empty: every kind the search knows).
  std::vector<drivers::ClampKind> kinds;
};

struct Suggestion {
  drivers::ClampSpec clamp;
  std::string parts;            // description for reports
  RunSummary run;
  bool meets = false;           // both limits met and no rating check failed
  double release_margin = 0.0;  // (limit − release time)/limit
  double voltage_margin = 0.0;  // (limit − peak)/limit
  // With a PWM hold: how many other candidates that meet the limits have both a lower clamp power
  // in hold and a release no slower (0: on the trade-off front). Ranked on this first.
  int dominated_by = 0;
};

// All candidates, those that meet the limits first (fastest release first), then the others.
std::vector<Suggestion> suggest_clamps(const scenario::Scenario& s, const catalogue::Catalogue& parts,
                                       const SuggestLimits& limits, int threads,
                                       const std::function<void(int, int)>& progress = {});

}  // namespace coilkick::analyses
