#include "coilkick/engine/interrupt.hpp"

#include <atomic>

namespace coilkick::engine {
namespace {
std::atomic<bool> g_requested{false};
static_assert(std::atomic<bool>::is_always_lock_free, "a signal handler may only store lock-free atomics");
}  // namespace

void request_interrupt() noexcept { g_requested.store(true); }
void clear_interrupt() noexcept { g_requested.store(false); }
bool interrupt_requested() noexcept { return g_requested.load(std::memory_order_relaxed); }
void throw_if_interrupted() {
  if (interrupt_requested()) throw Interrupted();
}

}  // namespace coilkick::engine
