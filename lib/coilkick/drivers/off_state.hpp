#pragma once
// Stage 2 of a switch-off: the off-state the transient heads for (drive low, DC operating point,
// relays released). A driver whose off-state still carries the coil current does not block the
// supply — the switch or a clamp part conducts it (breakdown below the supply, a clamp part
// forward-biased by the supply): the coil never de-energises, and energies summed over the run
// would only measure how long it was simulated.
#include <string>

#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/engine/state.hpp"
#include "coilkick/engine/circuit.hpp"

namespace coilkick::drivers {

// The off-state blocks when its coil current is below this fraction of the on-state current.
inline constexpr double kBlockingCurrentFraction = 0.01;

struct OffState {
  bool blocks = true;
  double coil_current_A = 0.0;  // DC coil current with the drive off
  std::string reason;           // why it does not block (empty when it blocks)
};

// Throws engine::SimulationError if the operating point cannot be solved.
// The board's off-state: the DC point once every channel's drive is low (relays released).
// `start`: a solved off point of a driver of the same shape to start Newton from
// (operating_point_start.hpp).
engine::CircuitState solve_off_point(const DriverSpec& spec, const BuiltDriver& b, const engine::Circuit& c,
                                     const engine::CircuitState* start = nullptr);
// One channel's reading of it (`b` may be a further channel's view; `board` the whole network).
OffState read_off_state(const DriverSpec& spec, const BuiltDriver& b, const engine::Network& board, const engine::Circuit& c,
                        const engine::CircuitState& off, double on_coil_current_A);

}  // namespace coilkick::drivers
