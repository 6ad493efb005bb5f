#include "coilkick/analyses/parallel.hpp"

#include <algorithm>
#include <atomic>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

#include "coilkick/engine/interrupt.hpp"

namespace coilkick::analyses {

int default_thread_count() { return std::max(1u, std::thread::hardware_concurrency()); }

void parallel_for(int n, int threads, const std::function<void(int)>& job,
                  const std::function<void(int, int)>& progress) {
  std::atomic<int> next{0};
  std::atomic<int> done{0};
  std::mutex progress_mutex;
  std::exception_ptr first_error;
  std::mutex error_mutex;
  auto worker = [&] {
    for (int i = next++; i < n; i = next++) {
      if (engine::interrupt_requested()) break;  // the jobs left are not started
      try {
        job(i);
      } catch (...) {
        std::lock_guard<std::mutex> lock(error_mutex);
        if (!first_error) first_error = std::current_exception();
      }
      const int d = ++done;
      if (progress) {
        std::lock_guard<std::mutex> lock(progress_mutex);
        progress(d, n);
      }
    }
  };
  const int t = std::max(1, std::min(threads, n));
  std::vector<std::thread> pool;
  for (int k = 1; k < t; ++k) pool.emplace_back(worker);
  worker();
  for (auto& th : pool) th.join();
  if (first_error) std::rethrow_exception(first_error);
  engine::throw_if_interrupted();
}

}  // namespace coilkick::analyses
