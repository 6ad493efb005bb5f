#pragma once
// Fault signatures: what each node reads on a healthy and on a failed driver.
//
// Single faults of every part: a resistor open; a clamp diode, Zener or TVS open or shorted; a
// snubber capacitor open or shorted; a transistor with collector–emitter (drain–source) shorted,
// its base (gate) connection open, or its collector–base junction leaky; the coil open or with
// 30 % of its turns shorted; with a cable, one core broken at the coil or the cores shorted
// there; the supply low (75 %). On a board of several channels each fault is judged on the
// channel whose part failed (a board part's on the first channel). DC readings take a cable as its two cores (half the loop each). For each: the DC node voltages with the
// drive on and off, the coil current, the on-state heat in each part, and — if the coil carries
// current — the switch-off metrics and rating checks. Faults are grouped by what a user sees:
// "relay never operates", "relay never releases", "relay releases slowly", "driver part
// overheats", or "no visible symptom".
// Modelling: open = 1 Tohm, shorted = 10 mohm, leaky junction = 100 kohm, as stated in the report.
#include <functional>
#include <map>
#include <string>
#include <vector>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/drivers/metrics.hpp"
#include "coilkick/drivers/rating_checks.hpp"

namespace coilkick::drivers {

struct NodeReading {
  std::string node;
  double on_V = 0.0, off_V = 0.0;  // DC with the drive on / off, against ground
};

struct FaultCase {
  std::string part;     // element, e.g. "base_resistor", "clamp_diode", "switch", "coil", "supply"
  std::string fault;    // "open", "shorted", "collector-emitter shorted", "base open", ...
  std::string label() const { return part + " " + fault; }
  // The channel whose coil the currents, metrics, checks and symptoms are about: "" the first
  // (and the board's parts), else a further channel's name (DriverSpec::channels).
  std::string channel;
  std::vector<NodeReading> readings;
  double coil_current_on_A = 0.0, coil_current_off_A = 0.0;
  double supply_current_on_A = 0.0;
  std::vector<std::pair<std::string, double>> on_state_heat_W;  // per element
  bool switch_off_run = false;
  Metrics switch_off;          // when switch_off_run
  std::vector<RatingCheck> checks;
  std::vector<std::string> symptoms;
  std::vector<std::string> reasons;  // one sentence per symptom: the numbers behind it
  std::string error;           // a solver failure of this fault's runs
};

struct FaultReport {
  FaultCase healthy;
  std::vector<FaultCase> healthy_channels;  // the further channels' healthy readings, in order
  const FaultCase& healthy_for(const std::string& channel) const;
  std::vector<FaultCase> faults;
  std::map<std::string, std::vector<int>> by_symptom;  // symptom -> indices into faults
};

const std::vector<std::string>& symptom_names();

// Throws like simulate_switch_off for a bad description; a fault whose runs fail keeps its error.
// `progress(done, total)` after each fault case (the healthy board first).
FaultReport analyse_faults(const DriverSpec& spec, const catalogue::Catalogue& parts,
                           const std::function<void(int, int)>& progress = {});

}  // namespace coilkick::drivers
