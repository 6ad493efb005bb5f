// Long calls that Ctrl-C can stop: the work runs on a helper thread with the GIL released while
// the calling thread polls Python's signal handlers every 20 ms. A KeyboardInterrupt there asks
// the work to stop (engine/interrupt.hpp: no new point starts, a running transient stops at its
// next step) and is raised once the work has ended, leaving the interpreter usable. The calling
// thread waits on a condition the work signals when it ends, so a call returns as soon as its
// work is done: a plain 20 ms sleep between polls had made every call last at least 20 ms (a
// 1 ms pwl switch-off took 20 ms from Python).
#include <pybind11/pybind11.h>

#include <chrono>
#include <condition_variable>
#include <exception>
#include <mutex>
#include <thread>

#include "bindings.hpp"
#include "coilkick/engine/interrupt.hpp"

namespace py = pybind11;

namespace coilkick::python {

void run_interruptibly(const std::function<void()>& work) {
  engine::clear_interrupt();
  std::exception_ptr error;
  std::mutex m;
  std::condition_variable ended;
  bool done = false;
  bool signalled = false;
  {
    py::gil_scoped_release release;
    std::thread worker([&] {
      try {
        work();
      } catch (...) {
        error = std::current_exception();
      }
      {
        std::lock_guard<std::mutex> lock(m);
        done = true;
      }
      ended.notify_one();
    });
    for (;;) {
      {
        std::unique_lock<std::mutex> lock(m);
        if (ended.wait_for(lock, std::chrono::milliseconds(20), [&] { return done; })) break;
      }
      if (signalled) continue;
      py::gil_scoped_acquire acquire;
      if (PyErr_CheckSignals() != 0) {  // the handler raised (KeyboardInterrupt): it stays set
        signalled = true;
        engine::request_interrupt();
      }
    }
    worker.join();
  }
  engine::clear_interrupt();
  if (signalled) throw py::error_already_set();
  if (error) std::rethrow_exception(error);
}

void DefineInterrupt(py::module_& m) {
  // An interrupt requested outside a poll (another thread's Ctrl-C) still reads as one.
  py::register_exception_translator([](std::exception_ptr p) {
    try {
      if (p) std::rethrow_exception(p);
    } catch (const engine::Interrupted& e) {
      PyErr_SetString(PyExc_KeyboardInterrupt, e.what());
    }
  });
  (void)m;
}

}  // namespace coilkick::python
