#include "coilkick/drivers/switch_off.hpp"

#include "coilkick/drivers/off_state.hpp"
#include "coilkick/drivers/on_state.hpp"
#include "coilkick/drivers/switch_off_checks.hpp"
#include "coilkick/drivers/switch_off_transient.hpp"
#include "coilkick/engine/circuit.hpp"

namespace coilkick::drivers {

SwitchOffResult simulate_switch_off(const DriverSpec& spec, const catalogue::Catalogue& parts) {
  return simulate_switch_off(spec, build_driver_network(spec, parts));
}

SwitchOffResult simulate_switch_off(const DriverSpec& spec, const BuiltDriver& b) {
  const engine::Circuit circuit(b.network);
  const OnState on = solve_on_state(spec, b, circuit);
  const OffState off = solve_off_state(spec, b, circuit, on.coil_current_A);
  SwitchOffResult out;
  // With a hold the switch-off starts from the PWM's steady state instead of the DC on-state —
  // where the driver blocks at all (otherwise off_state_blocks fails and says why; a hold of a
  // coil that never de-energises has no steady period to speak of).
  OnState start = on;
  if (spec.has_periodic_drive() && off.blocks) {
    out.hold = std::make_shared<const HoldResult>(solve_hold(spec, b));
    start.state = out.hold->final_start;
    start.coil_current_A = start.state.values[circuit.state_index("coil.current")];
  }
  const SwitchOffTransient run = run_switch_off_transient(spec, b, circuit, start, off);
  SwitchOffMeasures measures = measure_switch_off(spec, b, start, off, *run.result);
  set_hold_metrics(spec, out.hold.get(), measures.metrics);

  out.spec = spec;
  out.transient = run.result;
  out.metrics = measures.metrics;
  out.waveforms = switch_off_waveforms(b, *run.result);
  out.checks = switch_off_checks(spec, b, measures, off, run.decay_observed, on.control_voltage_V, out.hold.get());
  return out;
}

}  // namespace coilkick::drivers
