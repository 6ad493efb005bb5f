#include "coilkick/drivers/rating_checks.hpp"

namespace coilkick::drivers {

std::string to_string(CheckStatus s) {
  switch (s) {
    case CheckStatus::pass: return "pass";
    case CheckStatus::warn: return "warn";
    case CheckStatus::fail: return "fail";
  }
  return "?";
}

CheckStatus overall_status(const std::vector<RatingCheck>& checks) {
  CheckStatus worst = CheckStatus::pass;
  for (const auto& c : checks) {
    if (c.status == CheckStatus::fail) return CheckStatus::fail;
    if (c.status == CheckStatus::warn) worst = CheckStatus::warn;
  }
  return worst;
}

}  // namespace coilkick::drivers
