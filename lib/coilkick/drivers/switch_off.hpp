#pragma once
// The main job: one driver from its on-state through one switch-off, in stages that read top
// to bottom, each in the file that owns it:
//  1. on-state: the DC operating point with the drive high (on_state.hpp); with a peak-and-hold
//     drive, the pull-in and the PWM's periodic steady state (hold.hpp), which the switch-off
//     then starts from;
//  2. off-state: the DC point the switch-off heads for, and whether it blocks the supply
//     (off_state.hpp) — solved after the transient from its last point where nothing needs it
//     first (switch_off.cpp says when; the transient then assumes it blocks and runs again where
//     it does not);
//  3. transient: the drive's falling edge at drive.switch_off_at_s, events, stop rule (switch_off_transient.hpp);
//  4. metrics and waveforms (switch_off_metrics.hpp);
//  5. rating checks (switch_off_checks.hpp).
// Every time metric is measured from the start of the drive's switch-off edge (each channel's own).
// A board of several channels (DriverSpec::channels) runs as one circuit: one on-state, one
// off-state, one transient in which every channel's edge falls; each channel is measured on it.
#include <memory>
#include <string>
#include <vector>

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/drivers/hold.hpp"
#include "coilkick/drivers/metrics.hpp"
#include "coilkick/drivers/operating_point_start.hpp"
#include "coilkick/drivers/rating_checks.hpp"
#include "coilkick/drivers/switch_off_metrics.hpp"
#include "coilkick/engine/transient_result.hpp"

namespace coilkick::drivers {

// One channel of a board of several (DriverSpec::channels).
struct ChannelResult {
  std::string name;  // "" for the first (top-level) channel
  Metrics metrics;   // the channel's own, and the board's (rail, common clamp) as in every channel
  std::vector<RatingCheck> checks;
  SwitchOffWaveforms waveforms;
};

struct SwitchOffResult {
  DriverSpec spec;
  // The first channel's metrics (with one channel: the driver's) with the board's, then every
  // further channel's behind its name ("pump.release_time_s"; metric_names(further channels)).
  Metrics metrics;
  // Every check: the first channel's, the board's, and a further channel's behind its name
  // ("pump: switch_voltage").
  std::vector<RatingCheck> checks;
  SwitchOffWaveforms waveforms;
  // With further channels: every channel, the first one first (empty with one channel).
  std::vector<ChannelResult> channels;
  std::shared_ptr<const engine::TransientResult> transient;  // everything else (all nodes, energies)
  std::shared_ptr<const HoldResult> hold;                    // with a hold drive (null otherwise)
};

// Throws std::invalid_argument for a bad description (naming the field) and
// engine::SimulationError if the operating point or the transient cannot be solved.
// `starts`: the DC points of a driver of the same shape to start Newton from (a tolerance
// analysis's nominal points, solve_operating_points; operating_point_start.hpp).
SwitchOffResult simulate_switch_off(const DriverSpec& spec, const catalogue::Catalogue& parts,
                                    const OperatingPoints* starts = nullptr);
// The same on a network built already (e.g. with a fault injected); `spec` must be the one it
// was built from (parts are taken from `built`).
SwitchOffResult simulate_switch_off(const DriverSpec& spec, const BuiltDriver& built, const OperatingPoints* starts = nullptr);
// The on-state and the off point alone, without the transient. Throws like simulate_switch_off.
OperatingPoints solve_operating_points(const DriverSpec& spec, const catalogue::Catalogue& parts);

}  // namespace coilkick::drivers
