#include "coilkick/drivers/switch_on.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "coilkick/drivers/run_options.hpp"
#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/transient.hpp"
#include "coilkick/relay/armature_operating_point.hpp"

namespace coilkick::drivers {
namespace {

// The operate time is one instant, the armature's make, milliseconds after the edge: its run
// takes tolerances (relative, voltage, current) this many times the scenario's (relative 1e-3
// at the default 1e-6, at most 1e-3). Measured
// against runs at relative tolerance 1e-8 (1 nV, 1 pA): at 1e-3 the fan relay's and the
// greenhouse valve's operate times move 3.6e-6 of themselves (at 1e-4 4e-7 and 1.4e-6; at the
// scenario's 1e-6 3e-9 and 4e-7), with 30 % and 23 % fewer instructions than at 1e-4 — most of
// the run's steps had resolved the transistors' turn-on, nanoseconds long, which moves the make
// by picoseconds. The voltage and current tolerances by the same factor, and the energy
// accumulators (unread here) out of the error control: the fan relay's operate run 136 → 99
// attempts, its operate time within 9.7e-7 of a tight run (valve 2.9e-6, held valve 2.2e-6).
constexpr double kOperateRunToleranceFactor = 1000.0;

struct SwitchOnSetup {
  engine::Circuit circuit;
  engine::CircuitState off;
};

// The driver's network with the drive rising at drive.switch_off_at_s, and its off state.
SwitchOnSetup switch_on_setup(const DriverSpec& spec, const BuiltDriver& built) {
  engine::Network net = built.network;
  net.set_source_waveform("logic", engine::Waveform::edge(0.0, spec.drive.high_level_V, spec.drive.switch_off_at_s, spec.drive.rise_time_s));
  engine::Circuit c(net);
  engine::CircuitState off = relay::operating_point_with_armatures_open(net, c, 0.0);
  return {std::move(c), std::move(off)};
}

engine::EventSpec make_event(const DriverSpec& spec, const BuiltDriver& built, const engine::Circuit& c, bool stop) {
  return engine::EventSpec::crossing("make", engine::Probe::state(c, "coil.gap"), built.armature->mechanics.make_gap_m,
                                     engine::Direction::falling, spec.drive.switch_off_at_s, stop);
}

}  // namespace

double simulate_operate_time_s(const DriverSpec& spec, const BuiltDriver& built) {
  if (!built.armature) throw std::invalid_argument("operate time: the driver has no armature model (relay.armature_model)");
  const SwitchOnSetup s = switch_on_setup(spec, built);
  const double t_on = spec.drive.switch_off_at_s;
  const double operate_s = relay_datasheet(spec).operate_time_s;
  auto o = driver_transient_options(spec, t_on + spec.drive.rise_time_s + 20.0 * operate_s,
                                    spec.supply.voltage_V / built.coil_resistance_ohm);
  o.record_waveforms = false;
  const double factor = std::min(kOperateRunToleranceFactor * o.relative_tolerance, 1e-3) / o.relative_tolerance;
  o.relative_tolerance *= factor;
  o.voltage_tolerance_V *= factor;
  o.current_tolerance_A *= factor;
  // Only the make instant is read: the energy accumulators, whose values this run throws away,
  // are left out of its error control.
  o.energy_tolerance_J = std::numeric_limits<double>::max();
  o.maximum_step_s = 0.05 * operate_s;  // see switch_off.cpp
  const auto r = engine::simulate(s.circuit, s.off, o, {make_event(spec, built, s.circuit, true)});
  const auto& e = r.event("make");
  return e.time_s ? *e.time_s - t_on : std::nan("");
}

SwitchOnRun simulate_switch_on(const DriverSpec& spec, const BuiltDriver& built, double span_s) {
  if (!(span_s > 0.0) || !std::isfinite(span_s)) throw std::invalid_argument("switch-on: the span must be > 0 s");
  const SwitchOnSetup s = switch_on_setup(spec, built);
  const double t_on = spec.drive.switch_off_at_s;
  auto o = driver_transient_options(spec, t_on + span_s, spec.supply.voltage_V / built.coil_resistance_ohm);
  // The armature's flight is a small part of the span: steps no longer than a fiftieth of it.
  if (built.armature) o.maximum_step_s = 0.05 * std::min(span_s, relay_datasheet(spec).operate_time_s);
  std::vector<engine::EventSpec> events;
  if (built.armature) events.push_back(make_event(spec, built, s.circuit, false));
  SwitchOnRun out;
  out.edge_time_s = t_on;
  auto r = std::make_shared<engine::TransientResult>(engine::simulate(s.circuit, s.off, o, events));
  out.make_time_s = std::nan("");
  if (built.armature) {
    const auto& e = r->event("make");
    if (e.time_s) out.make_time_s = *e.time_s - t_on;
  }
  out.transient = std::move(r);
  return out;
}

}  // namespace coilkick::drivers
