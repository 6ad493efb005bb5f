#pragma once
// The armature's moving interval read from a switch-on current: while the armature pulls in, its
// motion's back-EMF (the coil's flux grows with the shrinking gap) makes the current fall
// although the drive is on, and the current rises again once the armature rests on its stop —
// the dip every relay and solenoid capture shows (e.g. Fitzgerald, Kingsley & Umans, Electric
// Machinery, 6th ed., ch. 3 (chapter from memory), the force and back-EMF of a moving armature; common practice at
// the bench to read the operate time there). The interval runs from the current's maximum before
// the dip (motion under way) to its minimum (armature on its stop).
#include <limits>
#include <vector>

namespace coilkick::analyses {

struct ArmatureMotion {
  double start_s = std::numeric_limits<double>::quiet_NaN();  // current's maximum before the dip
  double end_s = std::numeric_limits<double>::quiet_NaN();    // current's minimum: armature on its stop
  double current_at_start_A = std::numeric_limits<double>::quiet_NaN();
  double current_at_end_A = std::numeric_limits<double>::quiet_NaN();
  bool found() const { return end_s == end_s; }
};

// time_s increasing; noise_A the current's noise (0 for a model's current). The current is first
// smoothed by a centred moving average (a window of about a two-hundredth of the samples); a dip
// counts when the smoothed current falls and rises again by more than five times the smoothed
// noise and a thousandth of the largest current. Nothing found: start_s and end_s are NaN.
ArmatureMotion find_armature_motion(const std::vector<double>& time_s, const std::vector<double>& current_A, double noise_A);

}  // namespace coilkick::analyses
