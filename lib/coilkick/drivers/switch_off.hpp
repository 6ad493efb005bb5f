#pragma once
// The main job: one driver from its on-state through one switch-off.
//  1. the DC operating point of the on-state is solved (not guessed);
//  2. the logic output switches off at drive.switch_off_at_s over drive.fall_time_s;
//  3. the transient runs until the coil's energy is spent (or analysis.stop_time_s);
//  4. metrics (metrics.hpp) and rating checks (rating_checks.hpp) are computed.
// Every time metric is measured from the start of the drive's switch-off edge.
#include <memory>
#include <vector>

#include <Eigen/Dense>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/drivers/metrics.hpp"
#include "coilkick/drivers/rating_checks.hpp"
#include "coilkick/engine/transient_result.hpp"

namespace coilkick::drivers {

struct SwitchOffWaveforms {
  Eigen::VectorXd time_s;            // accepted time points, from 0 (on-state) to the end
  Eigen::VectorXd switch_voltage_V;  // across the switch (collector–emitter / drain–source magnitude)
  Eigen::VectorXd coil_current_A;
  Eigen::VectorXd clamp_current_A;   // through the first clamp part (0 if there is none)
  Eigen::VectorXd armature_gap_m;    // armature model only (empty otherwise)
};

struct SwitchOffResult {
  DriverSpec spec;
  Metrics metrics;
  std::vector<RatingCheck> checks;
  SwitchOffWaveforms waveforms;
  std::shared_ptr<const engine::TransientResult> transient;  // everything else (all nodes, energies)
};

// Throws std::invalid_argument for a bad description (naming the field) and
// engine::SimulationError if the operating point or the transient cannot be solved.
SwitchOffResult simulate_switch_off(const DriverSpec& spec, const catalogue::Catalogue& parts);
// The same on a network built already (e.g. with a fault injected); `spec` must be the one it
// was built from (parts are taken from `built`).
SwitchOffResult simulate_switch_off(const DriverSpec& spec, const BuiltDriver& built);

}  // namespace coilkick::drivers
