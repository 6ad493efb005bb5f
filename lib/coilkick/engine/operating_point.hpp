#pragma once
// DC operating point: the state where every derivative vanishes with the sources held at their
// values at `time_s` (capacitors open, coils conducting through their resistance). Solved by
// Newton's method on the analytic conductance matrix with backtracking. A minimum conductance
// from every node to ground (default 1e-12 S) keeps nodes without a DC path (between two
// capacitors, or behind an off device) well defined; it exists only in this solve, and at the
// point found it is taken out again except on the nodes that have no DC path without it (the
// conductance matrix's null space), so a node held only by leakage reads its own value.
#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/state.hpp"

namespace coilkick::engine {

struct OperatingPointOptions {
  int maximum_iterations = 200;
  double minimum_conductance_S = 1e-12;
  double voltage_tolerance_V = 1e-9;   // Newton update below this for node voltages ...
  double current_tolerance_A = 1e-12;  // ... and coil currents
  double relative_tolerance = 1e-10;
};

// Starts from guess_state (zeros, internal states at their declared guesses). Throws
// SimulationError naming the worst row if Newton does not converge.
CircuitState solve_operating_point(const Circuit& circuit, double time_s,
                                   const OperatingPointOptions& options = {});
// Same, starting from a guess (e.g. the previous operating point in a sweep).
CircuitState solve_operating_point(const Circuit& circuit, const CircuitState& guess,
                                   const OperatingPointOptions& options = {});
// Newton alone from the guess, with exactly the options' minimum conductance (none taken out
// after, no continuation when it fails): for a guess that is a solved point of a circuit of the
// same shape. Throws SimulationError if it does not converge.
CircuitState solve_by_newton(const Circuit& circuit, const CircuitState& guess, const OperatingPointOptions& options);

}  // namespace coilkick::engine
