#include "coilkick/engine/closest_name.hpp"

#include <algorithm>

namespace coilkick::engine {
namespace {
std::size_t edit_distance(const std::string& a, const std::string& b) {
  std::vector<std::size_t> prev(b.size() + 1), cur(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) prev[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    cur[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t sub = prev[j - 1] + (a[i - 1] == b[j - 1] ? 0 : 1);
      cur[j] = std::min({prev[j] + 1, cur[j - 1] + 1, sub});
    }
    std::swap(prev, cur);
  }
  return prev[b.size()];
}
}  // namespace

std::string closest_name(const std::string& name, const std::vector<std::string>& candidates) {
  std::string best;
  std::size_t best_d = static_cast<std::size_t>(-1);
  for (const auto& c : candidates) {
    const std::size_t d = edit_distance(name, c);
    if (d < best_d) {
      best_d = d;
      best = c;
    }
  }
  const std::size_t limit = std::max<std::size_t>(2, (std::max(name.size(), best.size()) + 2) / 3);
  return best_d <= limit ? best : std::string();
}

std::string did_you_mean(const std::string& name, const std::vector<std::string>& candidates) {
  const std::string c = closest_name(name, candidates);
  return c.empty() ? std::string() : " (did you mean '" + c + "'?)";
}

}  // namespace coilkick::engine
