#pragma once
// A request to stop work (Ctrl-C): process-wide, as the signal is. The command line's SIGINT
// handler and the Python bindings' signal poll set it; every transient step, every Newton
// iteration of an operating point and every job of parallel_for look at it and throw
// Interrupted, which no analysis turns into a failed point — the work stops and says so.
#include <stdexcept>

namespace coilkick::engine {

class Interrupted : public std::runtime_error {
 public:
  Interrupted() : std::runtime_error("interrupted") {}
};

void request_interrupt() noexcept;  // async-signal-safe (a lock-free atomic store)
void clear_interrupt() noexcept;
bool interrupt_requested() noexcept;
// Throws Interrupted when a stop has been requested.
void throw_if_interrupted();

}  // namespace coilkick::engine
