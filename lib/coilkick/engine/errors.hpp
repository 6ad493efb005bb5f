#pragma once
// Error types of the engine.
//  - Bad parameters or a malformed network throw std::invalid_argument naming the element and
//    the field (Python sees ValueError).
//  - SimulationError: the numerical solution could not be obtained (step size collapse, step
//    budget, wall-time budget, non-finite state, Newton failure). A failed run never returns a
//    result.
#include <stdexcept>
#include <string>

namespace coilkick::engine {

class SimulationError : public std::runtime_error {
 public:
  explicit SimulationError(const std::string& what) : std::runtime_error(what) {}
};

// A step shorter than the time itself resolves (64 ulps of t): the tolerances ask, late in a
// run, for finer steps than a double's time can make there.
class TimeResolutionError : public SimulationError {
 public:
  explicit TimeResolutionError(const std::string& what) : SimulationError(what) {}
};

// A DC operating point that Newton and the pseudo-transient continuation did not find.
class OperatingPointError : public SimulationError {
 public:
  explicit OperatingPointError(const std::string& what) : SimulationError(what) {}
};

}  // namespace coilkick::engine
