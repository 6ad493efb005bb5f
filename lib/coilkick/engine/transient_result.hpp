#pragma once
// The outcome of one transient run: accepted time points with every state and its rate,
// located events, the energy account and solver statistics.
#include <Eigen/Dense>
#include <string>
#include <vector>

#include "coilkick/engine/circuit.hpp"
#include "coilkick/engine/probe.hpp"

namespace coilkick::engine {

using RowMatrix = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>;

struct SolverStatistics {
  long accepted_steps = 0;
  long rejected_steps = 0;
  long rate_evaluations = 0;      // circuit evaluations of the rates alone (Rosenbrock stages)
  long jacobian_evaluations = 0;  // full evaluations: rates, Jacobian and ∂ẋ/∂t (one per point)
};

struct EnergyChannelTotal {
  std::string name;  // "<element>.<channel>" or "<source>.delivered"
  PowerChannelSpec::Kind kind = PowerChannelSpec::Kind::dissipated;
  double energy_J = 0.0;
};

// Energy account over the run. Balance: supplied + stored_initial = dissipated + stored_final.
struct EnergyReport {
  std::vector<EnergyChannelTotal> channels;
  double supplied_J = 0.0;
  double dissipated_J = 0.0;
  double stored_initial_J = 0.0;
  double stored_final_J = 0.0;
  // (supplied + stored_initial − dissipated − stored_final) / max(both sides); 0 if both are 0.
  double balance_error = 0.0;
  double channel_J(const std::string& name) const;  // throws for unknown names
};

struct UniformSamples {
  std::vector<double> times_s;
  RowMatrix states;  // rows: times, columns: Circuit::states()
};

class TransientResult {
 public:
  TransientResult(Circuit circuit, std::vector<double> times_s, RowMatrix states, RowMatrix rates,
                  std::vector<EventOutcome> events, EnergyReport energy, SolverStatistics stats);

  const Circuit& circuit() const { return circuit_; }
  const std::vector<double>& times_s() const { return times_; }
  const RowMatrix& states() const { return states_; }
  const RowMatrix& rates() const { return rates_; }
  const std::vector<EventOutcome>& events() const { return events_; }
  const EventOutcome& event(const std::string& name) const;
  const EnergyReport& energy() const { return energy_; }
  const SolverStatistics& statistics() const { return stats_; }
  double start_time_s() const { return times_.front(); }
  double end_time_s() const { return times_.back(); }

  // Waveforms on the accepted points.
  Eigen::VectorXd state(const std::string& name) const;
  Eigen::VectorXd node_voltage_V(const std::string& node) const;
  // Current flowing into `element` at its terminal number `terminal` (A).
  Eigen::VectorXd element_current_A(const std::string& element, int terminal = 0) const;
  // Energy held in the element's fields (J) at every accepted point.
  Eigen::VectorXd stored_energy_J(const std::string& element) const;
  // States at any instant inside the run, by cubic Hermite interpolation of the accepted points
  // (uses the stored rates, third-order accurate like the integrator's dense output).
  Eigen::VectorXd sample(double t_s) const;
  // The same into `out` (state_count values): no allocation, for sampling many instants.
  void sample(double t_s, double* out) const;
  // The run resampled on a uniform grid with the given step (first and last point included).
  UniformSamples resample(double step_s) const;
  // The same run on a time axis moved by shift_s (every point and event at t + shift_s), read
  // through `circuit`: the circuit of the same states whose sources are those of the moved axis.
  TransientResult moved_in_time(double shift_s, Circuit circuit) const;

 private:
  Circuit circuit_;
  std::vector<double> times_;
  RowMatrix states_, rates_;
  std::vector<EventOutcome> events_;
  EnergyReport energy_;
  SolverStatistics stats_;
};

}  // namespace coilkick::engine
