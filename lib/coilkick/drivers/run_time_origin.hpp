#pragma once
// Where on the time axis a switch-off is run. A scenario may switch off late (drive.switch_off_at
// of a second or more); a double resolves t = 1 s to 2.2e-16 s, the stages' times round by that,
// and a drive edge of a few nanoseconds (volts per nanosecond) is then read with an error of
// ~1e-7 V at every stage — more than a tight run allows — while steps shorter than 64 ulps of t
// (1.4e-14 s at 1 s) cannot be made at all. Where the run before the edges is stationary (it
// starts in a DC on-state: no hold, no repetition), its length says nothing, and the run is made
// with the earliest edge at kEarliestEdgeInRun_s instead; the result is moved back to the
// scenario's times (metrics are measured from their edges anyway; the waveforms' and the
// transient's points, and its events, are moved, and the transient is read through the
// scenario's own circuit).
#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/driver_spec.hpp"
#include "coilkick/drivers/switch_off.hpp"

namespace coilkick::drivers {

// The earliest edge's time in a moved run: the default drive.switch_off_at.
inline constexpr double kEarliestEdgeInRun_s = 1e-3;

// How far the run's time axis lies before the scenario's (0: run as described): the earliest
// edge's time less kEarliestEdgeInRun_s where that is positive and nothing before the edges moves.
double run_time_shift_s(const DriverSpec& spec);
// The driver with every time on the scenario's axis (the edges, a stop time) moved by −shift_s.
DriverSpec moved_in_time(const DriverSpec& spec, double shift_s);
// A result of `moved_in_time(spec, shift_s)` on the scenario's axis: the description `spec`, the
// waveforms' and the transient's times + shift_s, the transient read through `spec`'s circuit.
SwitchOffResult in_scenario_time(SwitchOffResult moved, const DriverSpec& spec, const catalogue::Catalogue& parts,
                                 double shift_s);

}  // namespace coilkick::drivers
