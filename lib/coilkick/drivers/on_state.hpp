#pragma once
// Stage 1 of a switch-off: the driver's on-state (drive high, DC operating point at t = 0, every
// relay operated) and what a designer reads from it.
#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/state.hpp"

namespace coilkick::drivers {

struct OnState {
  engine::CircuitState state;
  double coil_current_A = 0.0;
  double switch_voltage_V = 0.0;      // across the switch (saturation / on-resistance drop)
  double drive_current_A = 0.0;       // base current, or the gate path's current
  double logic_pin_current_A = 0.0;   // what the logic output sources
  double coil_voltage_V = 0.0;
  double control_voltage_V = 0.0;     // |v_GS| or |v_BE| of the switch
};

// Voltage across the switch (positive when it blocks) at time t for states x.
double switch_voltage_V(const BuiltDriver& b, const engine::Circuit& c, double t_s, const double* x);
// The same with the switch's nodes resolved once, for probes and waveforms (read at every step).
class SwitchVoltage {
 public:
  SwitchVoltage(const BuiltDriver& b, const engine::Circuit& c)
      : c_(&c), high_(c.node_slot(b.switch_high_node)), low_(c.node_slot(b.switch_low_node)) {}
  double operator()(double t_s, const double* x) const { return c_->node_voltage_at(high_, t_s, x) - c_->node_voltage_at(low_, t_s, x); }

 private:
  const engine::Circuit* c_;
  int high_, low_;
};

// Throws engine::SimulationError if the operating point cannot be solved. `start`: a solved
// on-state of a driver of the same shape to start Newton from (operating_point_start.hpp).
OnState solve_on_state(const DriverSpec& spec, const BuiltDriver& b, const engine::Circuit& c,
                       const engine::CircuitState* start = nullptr);
// One channel's reading of the board's on-state (`b` may be a further channel's view).
OnState read_on_state(const DriverSpec& spec, const BuiltDriver& b, const engine::Circuit& c, const engine::CircuitState& state);

}  // namespace coilkick::drivers
