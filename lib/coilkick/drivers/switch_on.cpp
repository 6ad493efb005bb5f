#include "coilkick/drivers/switch_on.hpp"

#include <cmath>
#include <stdexcept>

#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/operating_point.hpp"
#include "coilkick/engine/state.hpp"
#include "coilkick/engine/transient.hpp"

namespace coilkick::drivers {

double simulate_operate_time_s(const DriverSpec& spec, const BuiltDriver& built) {
  if (!built.armature) throw std::invalid_argument("operate time: the driver has no armature model (relay.armature_model)");
  const auto& arm = *built.armature;
  const double t_on = spec.drive.switch_off_at_s;
  engine::Network net = built.network;
  net.set_source_waveform("logic", engine::Waveform::edge(0.0, spec.drive.high_level_V, t_on, spec.drive.rise_time_s));
  const engine::Circuit c(net);
  engine::CircuitState guess = engine::guess_state(c, 0.0);
  engine::set_state(c, guess, "coil.gap", arm.mechanics.open_gap_m);
  const engine::CircuitState off = engine::solve_operating_point(c, guess);

  const double i_full = spec.supply.voltage_V / built.coil_resistance_ohm;
  engine::TransientOptions o;
  o.stop_time_s = t_on + spec.drive.rise_time_s + 20.0 * relay_datasheet(spec).operate_time_s;
  o.relative_tolerance = spec.analysis.relative_tolerance;
  o.voltage_tolerance_V = spec.analysis.voltage_tolerance_V;
  o.current_tolerance_A = spec.analysis.current_tolerance_A;
  o.energy_tolerance_J = std::max(1e-15, 1e-9 * 0.5 * spec.coil.inductance_H * i_full * i_full);
  o.maximum_wall_time_s = spec.analysis.maximum_wall_time_s;
  o.record_waveforms = false;
  o.maximum_step_s = 0.05 * relay_datasheet(spec).operate_time_s;  // see switch_off.cpp
  const auto make = engine::EventSpec::crossing("make", engine::Probe::state(c, "coil.gap"), arm.mechanics.make_gap_m,
                                                engine::Direction::falling, t_on, true);
  const auto r = engine::simulate(c, off, o, {make});
  const auto& e = r.event("make");
  return e.time_s ? *e.time_s - t_on : std::nan("");
}

}  // namespace coilkick::drivers
