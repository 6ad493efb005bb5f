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
  const SwitchOffTransient run = run_switch_off_transient(spec, b, circuit, on, off);
  const SwitchOffMeasures measures = measure_switch_off(spec, b, on, off, *run.result);

  SwitchOffResult out;
  out.spec = spec;
  out.transient = run.result;
  out.metrics = measures.metrics;
  out.waveforms = switch_off_waveforms(b, *run.result);
  out.checks = switch_off_checks(spec, b, measures, off, run.decay_observed, on.control_voltage_V);
  return out;
}

}  // namespace coilkick::drivers
