#include "coilkick/drivers/switch_on.hpp"

#include <cmath>
#include <stdexcept>

#include "coilkick/drivers/run_options.hpp"
#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/transient.hpp"
#include "coilkick/relay/armature_operating_point.hpp"

namespace coilkick::drivers {

double simulate_operate_time_s(const DriverSpec& spec, const BuiltDriver& built) {
  if (!built.armature) throw std::invalid_argument("operate time: the driver has no armature model (relay.armature_model)");
  const auto& arm = *built.armature;
  const double t_on = spec.drive.switch_off_at_s;
  engine::Network net = built.network;
  net.set_source_waveform("logic", engine::Waveform::edge(0.0, spec.drive.high_level_V, t_on, spec.drive.rise_time_s));
  const engine::Circuit c(net);
  const engine::CircuitState off = relay::operating_point_with_armatures_open(net, c, 0.0);

  const double operate_s = relay_datasheet(spec).operate_time_s;
  auto o = driver_transient_options(spec, t_on + spec.drive.rise_time_s + 20.0 * operate_s,
                                    spec.supply.voltage_V / built.coil_resistance_ohm);
  o.record_waveforms = false;
  o.maximum_step_s = 0.05 * operate_s;  // see switch_off.cpp
  const auto make = engine::EventSpec::crossing("make", engine::Probe::state(c, "coil.gap"), arm.mechanics.make_gap_m,
                                                engine::Direction::falling, t_on, true);
  const auto r = engine::simulate(c, off, o, {make});
  const auto& e = r.event("make");
  return e.time_s ? *e.time_s - t_on : std::nan("");
}

}  // namespace coilkick::drivers
