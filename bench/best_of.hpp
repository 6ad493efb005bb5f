#pragma once
// The shortest wall time of n runs of f (s): the benchmarks' timing, least disturbed by load.
#include <algorithm>
#include <chrono>
#include <cmath>

template <class F>
double best_of(int n, F&& f) {
  double best = INFINITY;
  for (int k = 0; k < n; ++k) {
    const auto t0 = std::chrono::steady_clock::now();
    f();
    best = std::min(best, std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count());
  }
  return best;
}
