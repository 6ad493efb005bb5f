#pragma once
// Rating checks: each compares one result with a limit and says pass / warn / fail, with the
// numbers behind the verdict.
#include <limits>
#include <string>
#include <vector>

namespace coilkick::drivers {

enum class CheckStatus { pass, warn, fail };
std::string to_string(CheckStatus s);

struct RatingCheck {
  std::string name;      // e.g. "switch_voltage"
  CheckStatus status = CheckStatus::pass;
  double value = 0.0;    // the result checked
  double limit = 0.0;    // the limit the verdict tested: beyond it the check warns or fails
  std::string unit;      // of value and limit
  std::string detail;    // one sentence: what was compared and why
  // Checks with a warning band: beyond `limit` they warn, beyond this they fail (NaN: no band,
  // beyond `limit` is a failure).
  double fail_limit = std::numeric_limits<double>::quiet_NaN();
};

// Worst status of a list (fail > warn > pass).
CheckStatus overall_status(const std::vector<RatingCheck>& checks);

}  // namespace coilkick::drivers
