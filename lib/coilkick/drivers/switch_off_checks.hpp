#pragma once
// Stage 5 of a switch-off: the rating checks (rating_checks.hpp) of a measured run. Each check
// compares one result with the limit it tests and says which part it blames; energy checks count
// only the energy of the mode they rate (a switch's avalanche rating: the heat of its breakdown
// branch alone, not its linear-region heat during a slow edge). With a hold drive the coil's
// operate check reads the current at the end of the pull-in, and the hold adds its own checks:
// the hold margin over the release current, the pull-in, each clamp part's and the switch's
// average power in hold against their power ratings, and how the steady state was found.
#include <vector>

#include "coilkick/drivers/driver_network.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/drivers/hold.hpp"
#include "coilkick/drivers/off_state.hpp"
#include "coilkick/drivers/rating_checks.hpp"
#include "coilkick/drivers/switch_off_metrics.hpp"

namespace coilkick::drivers {

std::vector<RatingCheck> switch_off_checks(const DriverSpec& spec, const BuiltDriver& b, const SwitchOffMeasures& measures,
                                           const OffState& off, bool decay_observed, double gate_source_on_V,
                                           const HoldResult* hold = nullptr);

// The board's common clamp Zener (BuiltDriver::common_clamp_part) against its pulse ratings; its
// conduction taken as the slowest channel's decay to 10 %. Empty without one.
std::vector<RatingCheck> common_clamp_checks(const BuiltDriver& board, const Metrics& m, double conduction_s);

}  // namespace coilkick::drivers
