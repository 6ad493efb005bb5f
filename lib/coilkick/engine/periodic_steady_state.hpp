#pragma once
// Periodic steady state of a circuit whose sources repeat with a period T (a PWM drive): the
// state x* at the period's start that one period maps onto itself, Φ_T(x*) = x*.
//
// Shooting (Aprille and Trick's method, "Steady-state analysis of nonlinear circuits with
// periodic inputs", Proc. IEEE 60(1), 1972): Newton on r(x) = Φ_T(x) − x, with the period's
// sensitivity matrix ∂Φ_T/∂x taken by finite differences of whole periods of the same integrator
// (one period per state), a halving line search on the scaled residual. A slowly decaying coil
// (L/R of thousands of periods) needs two or three Newton steps instead of thousands of periods.
// Where Newton does not converge, the periods are simulated one by one until the state stops
// moving (the remaining distance estimated from the contraction between periods), and the result
// says so. Energy accumulators are not part of the state here (they only grow).
//
// Newton finds any periodic state, also one the circuit never settles in: a plunger balanced
// off its stop where the coil's pull just equals the spring's (a saddle: nudged closer it
// snaps shut, nudged away it falls open), the middle state of a bistable pair. A periodic state
// attracts only if every multiplier of one period — the eigenvalues of the sensitivity matrix
// ∂Φ_T/∂x there — lies inside the unit circle (Floquet theory; e.g. T. S. Parker and
// L. O. Chua, Practical Numerical Algorithms for Chaotic Systems, Springer 1989, on periodic
// solutions and their Poincaré maps — from memory). A converged shooting whose largest
// multiplier exceeds 1 by more than the finite differences' noise is not a result: the periods
// are then simulated one by one from the guess, where the circuit itself goes, and the note says
// why.
#include <functional>
#include <limits>
#include <string>

#include "coilkick/engine/state.hpp"
#include "coilkick/engine/transient.hpp"

namespace coilkick::engine {

struct PeriodicOptions {
  double period_s = 0.0;
  int maximum_newton_iterations = 12;
  long maximum_direct_periods = 200'000;
  // Converged when the last correction (shooting) or the estimated remaining distance (direct)
  // is within this many error scales of every state (absolute + relative tolerance of the runs).
  double tolerance_in_error_scales = 10.0;
  double maximum_wall_time_s = 120.0;  // for the whole search (each period run has its own budget too)
  bool allow_shooting = true;  // false: direct periods only (the reference the tests compare with)
  std::function<void(double)> progress;  // fraction done (direct periods), optional
};

enum class PeriodicMethod { shooting, direct };

struct PeriodicSteadyState {
  CircuitState state;             // at the period's start (the guess's time)
  PeriodicMethod method = PeriodicMethod::shooting;
  int newton_iterations = 0;
  long period_runs = 0;           // one-period simulations, sensitivity columns included
  double distance_in_error_scales = 0.0;  // the convergence measure at the end
  // Shooting: the largest magnitude among the multipliers of one period at the last Newton
  // step (< 1: the periodic state attracts). NaN where no sensitivity matrix was taken.
  double largest_multiplier = std::numeric_limits<double>::quiet_NaN();
  std::string note;               // why shooting gave way to direct periods (empty otherwise)
};

// Throws SimulationError if neither shooting nor the direct periods converge, and
// std::invalid_argument for a non-positive period.
PeriodicSteadyState periodic_steady_state(const Circuit& c, const CircuitState& guess, const TransientOptions& step_options,
                                          const PeriodicOptions& options);

}  // namespace coilkick::engine
