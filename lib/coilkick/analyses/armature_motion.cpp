#include "coilkick/analyses/armature_motion.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace coilkick::analyses {

ArmatureMotion find_armature_motion(const std::vector<double>& time_s, const std::vector<double>& current_A, double noise_A) {
  if (time_s.size() != current_A.size()) throw std::invalid_argument("armature motion: time and current differ in length");
  const std::size_t n = current_A.size();
  ArmatureMotion out;
  if (n < 8) return out;
  const std::size_t half = n / 400;
  const std::size_t window = 2 * half + 1;
  std::vector<double> s(n);
  double sum = 0.0;
  std::size_t lo = 0, hi = 0;  // running sum over [lo, hi)
  for (std::size_t k = 0; k < n; ++k) {
    const std::size_t a = k >= half ? k - half : 0, b = std::min(n, k + half + 1);
    while (hi < b) sum += current_A[hi++];
    while (lo < a) sum -= current_A[lo++];
    s[k] = sum / static_cast<double>(hi - lo);
  }
  double largest = 0.0;
  for (double i : current_A) largest = std::max(largest, std::abs(i));
  const double threshold = std::max(5.0 * noise_A / std::sqrt(static_cast<double>(window)), 1e-3 * largest);
  if (!(threshold > 0.0)) return out;
  std::size_t k_max = 0, k_min = 0;
  bool in_dip = false;
  for (std::size_t k = 0; k < n; ++k) {
    if (!in_dip) {
      if (s[k] > s[k_max]) k_max = k;
      if (s[k_max] - s[k] > threshold) {
        in_dip = true;
        k_min = k;
      }
    } else {
      if (s[k] < s[k_min]) k_min = k;
      if (s[k] - s[k_min] > threshold) {
        out.start_s = time_s[k_max];
        out.end_s = time_s[k_min];
        out.current_at_start_A = s[k_max];
        out.current_at_end_A = s[k_min];
        return out;
      }
    }
  }
  return out;
}

}  // namespace coilkick::analyses
