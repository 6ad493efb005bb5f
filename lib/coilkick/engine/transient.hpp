#pragma once
// Transient analysis: integrates a Circuit from an initial state with the fourth-order
// L-stable Rosenbrock method of Boost.Odeint's rosenbrock4 (embedded third-order error
// estimate, dense output; rosenbrock_step.hpp), under our own step controller:
//  - per-state error scale: |err_i| <= absolute_i + relative_tolerance·(|x_i| + dt·|ẋ_i|), with absolute_i
//    from the state's kind (volts, amperes, joules, or the element's own unit);
//  - never steps over a corner of a source waveform or an element's time dependence;
//  - guards: minimum step size, step budget, wall-time budget, non-finite states. Each ends the
//    run with SimulationError saying when, which state and why; no partial result is returned.
#include <functional>
#include <vector>

#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/probe.hpp"
#include "coilkick/engine/rosenbrock_step.hpp"
#include "coilkick/engine/state.hpp"
#include "coilkick/engine/transient_result.hpp"

namespace coilkick::engine {

struct TransientOptions {
  double stop_time_s = 0.0;              // must be > the initial state's time
  double relative_tolerance = 1e-6;
  double voltage_tolerance_V = 1e-6;     // absolute error allowed on node voltages
  double current_tolerance_A = 1e-9;     // ... on coil currents and other branch currents
  double energy_tolerance_J = 1e-12;     // ... on the energy accumulators
  double initial_step_s = 1e-12;
  double minimum_step_s = 1e-18;         // a step below this (or 64 ulp of t) is a failure
  double maximum_step_s = 0.0;           // 0: no limit
  long maximum_steps = 2'000'000;        // accepted + rejected attempts
  double maximum_wall_time_s = 120.0;
  int maximum_consecutive_rejections = 60;
  double event_time_tolerance_s = 1e-13; // events located to this width
  bool record_waveforms = true;          // false: keep only the first and last point
  // The same method either way; blockwise is several times cheaper per step (rosenbrock_step.hpp).
  StepMethod step_method = StepMethod::rosenbrock4_blockwise;
  // Non-empty: step exactly to each of these times after the initial one, the last being the
  // stop time, with no error control (a non-finite state still fails). The finite-difference
  // sensitivities of a periodic steady state replay the step sequence of the unperturbed run, so
  // that they differentiate one discrete map rather than the noise between two step sequences
  // ("internal numerical differentiation", Bock 1981).
  std::vector<double> replay_step_times_s;
  // Called about every 1 % of simulated time with the fraction done (0..1). Optional.
  std::function<void(double)> progress;
};

// The absolute error allowed on each state (Circuit::states() order) under these options. With
// the run's initial state x0, a node-scale state (InternalStateSpec::node_scale) is allowed
// voltage_tolerance + relative_tolerance·(largest node voltage in x0) at least.
std::vector<double> absolute_tolerances(const Circuit& c, const TransientOptions& o, const double* x0 = nullptr);

// Throws std::invalid_argument for bad options or state, SimulationError for solver failures.
TransientResult simulate(const Circuit& circuit, const CircuitState& initial,
                         const TransientOptions& options,
                         const std::vector<EventSpec>& events = {});

}  // namespace coilkick::engine
