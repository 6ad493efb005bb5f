#pragma once
// Stage 3 of a switch-off: the transient from the on-state through the drive's falling edge (every
// channel's, on a board of several) — what it watches (events) and when it stops.
//
// Stop rule. With analysis.stop_when_decayed the run ends once the energy left in the coil and
// at the switch node is a small fraction of ½·L·I0² (never before the drive's edge is over, and
// with the armature model never before the contact has opened). The run also has a horizon: the
// scenario's analysis.stop_time, or automatically the edge plus 8·L/R plus 20 data-sheet release
// times (armature model). A switch that turns off slower than the coil's L/R (a small coil, a
// slow gate) outlasts that first horizon; an automatic horizon is then lengthened 16-fold, up to
// six times and to at most 1 s after the edge, until the decay has been observed (the coil current
// below 10 % and below the release current; the contact's opening has its own check). A run whose
// decay was not observed (given stop time too short, the off-state does not block) is reported
// as such — `decay_observed` — never as a quiet result.
#include <memory>
#include <vector>

#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/drivers/off_state.hpp"
#include "coilkick/drivers/on_state.hpp"
#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/transient_result.hpp"

namespace coilkick::drivers {

struct SwitchOffTransient {
  std::shared_ptr<const engine::TransientResult> result;
  bool decay_observed = false;  // the coil current fell below 10 % (and the release current) in the run
};

// One channel of a board (DriverSpec::channels): its own view of the spec (channel_driver_spec),
// of the built network (BuiltDriver::channels), its on- and off-state readings.
struct ChannelRun {
  DriverSpec spec;
  const BuiltDriver* built;
  OnState on;
  OffState off;
};
// The board's switch-off from `start`: every channel's events (named built->local(...)), the
// board's (rail, common clamp); the run ends once every channel has decayed. The first channel's
// analysis settings apply. decay_observed: in every channel. `board_spec` is the board's own
// (with its channels; one channel: the driver's). An automatic horizon (no analysis stop time)
// grows while the decay is not seen, unless `grow_horizon` is false (a run before the off point
// is known). Throws engine::SimulationError if the integration fails.
SwitchOffTransient run_switch_off_transient(const DriverSpec& board_spec, const std::vector<ChannelRun>& channels,
                                            const engine::Circuit& c, const engine::CircuitState& start,
                                            bool grow_horizon = true);

}  // namespace coilkick::drivers
