#pragma once
// Runs independent jobs 0..n-1 on a fixed number of threads. Each job writes only its own
// result slot, so the outcome does not depend on the thread count or scheduling. `progress`
// (optional) is called from the worker threads, serialised, with the number of jobs done.
// An interrupt request (engine/interrupt.hpp) stops it starting jobs; it then throws Interrupted
// (a job's own exception first, if one was thrown).
#include <functional>

namespace coilkick::analyses {

int default_thread_count();  // hardware concurrency, at least 1

void parallel_for(int n, int threads, const std::function<void(int)>& job,
                  const std::function<void(int done, int total)>& progress = {});

}  // namespace coilkick::analyses
