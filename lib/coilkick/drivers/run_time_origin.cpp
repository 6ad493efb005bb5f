#include "coilkick/drivers/run_time_origin.hpp"

#include <memory>
#include <utility>

#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/engine/circuit.hpp"

namespace coilkick::drivers {

double run_time_shift_s(const DriverSpec& spec) {
  if (spec.has_periodic_drive()) return 0.0;  // a hold or repetition moves before the final edge
  const double shift = first_edge_s(spec) - kEarliestEdgeInRun_s;
  return shift > 0.0 ? shift : 0.0;
}

DriverSpec moved_in_time(const DriverSpec& spec, double shift_s) {
  DriverSpec s = spec;
  s.drive.switch_off_at_s -= shift_s;
  for (auto& ch : s.channels) ch.drive.switch_off_at_s -= shift_s;
  if (s.analysis.stop_time_s > 0.0) s.analysis.stop_time_s -= shift_s;
  return s;
}

namespace {
void move_waveforms(SwitchOffWaveforms& w, double shift_s) { w.time_s.array() += shift_s; }
}  // namespace

SwitchOffResult in_scenario_time(SwitchOffResult moved, const DriverSpec& spec, const catalogue::Catalogue& parts,
                                 double shift_s) {
  SwitchOffResult r = std::move(moved);
  r.spec = spec;
  move_waveforms(r.waveforms, shift_s);
  for (auto& ch : r.channels) move_waveforms(ch.waveforms, shift_s);
  if (r.transient) {
    r.transient = std::make_shared<const engine::TransientResult>(
        r.transient->moved_in_time(shift_s, engine::Circuit(build_driver_network(spec, parts).network)));
  }
  return r;
}

}  // namespace coilkick::drivers
