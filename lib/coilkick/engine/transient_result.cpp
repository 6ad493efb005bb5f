#include "coilkick/engine/transient_result.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>
#include <stdexcept>

#include "coilkick/engine/closest_name.hpp"

namespace coilkick::engine {

double EnergyReport::channel_J(const std::string& name) const {
  for (const auto& c : channels) {
    if (c.name == name) return c.energy_J;
  }
  std::vector<std::string> names;  // only to say what is close
  for (const auto& c : channels) names.push_back(c.name);
  throw std::invalid_argument("energy report: no channel named '" + name + "'" + did_you_mean(name, names));
}

TransientResult::TransientResult(Circuit circuit, std::vector<double> times_s, RowMatrix states,
                                 RowMatrix rates, std::vector<EventOutcome> events,
                                 EnergyReport energy, SolverStatistics stats)
    : circuit_(std::move(circuit)), times_(std::move(times_s)), states_(std::move(states)),
      rates_(std::move(rates)), events_(std::move(events)), energy_(std::move(energy)), stats_(stats) {}

const EventOutcome& TransientResult::event(const std::string& name) const {
  for (const auto& e : events_) {
    if (e.name == name) return e;
  }
  std::vector<std::string> names;  // only to say what is close
  for (const auto& e : events_) names.push_back(e.name);
  throw std::invalid_argument("transient result: no event named '" + name + "'" + did_you_mean(name, names));
}

Eigen::VectorXd TransientResult::state(const std::string& name) const {
  return states_.col(circuit_.state_index(name));
}

Eigen::VectorXd TransientResult::node_voltage_V(const std::string& node) const {
  const int slot = circuit_.node_slot(node);
  Eigen::VectorXd v(static_cast<Eigen::Index>(times_.size()));
  for (std::size_t k = 0; k < times_.size(); ++k) {
    v[static_cast<Eigen::Index>(k)] = circuit_.node_voltage_at(slot, times_[k], states_.row(static_cast<Eigen::Index>(k)).data());
  }
  return v;
}

Eigen::VectorXd TransientResult::element_current_A(const std::string& element, int terminal) const {
  const int e = circuit_.element_with_terminal(element, terminal, "transient result");
  Workspace w = circuit_.make_workspace();
  Eigen::VectorXd out(static_cast<Eigen::Index>(times_.size()));
  for (std::size_t k = 0; k < times_.size(); ++k) {
    const auto row = static_cast<Eigen::Index>(k);
    out[row] = circuit_.terminal_current_A(e, terminal, times_[k], states_.row(row).data(), rates_.row(row).data(), w);
  }
  return out;
}

Eigen::VectorXd TransientResult::stored_energy_J(const std::string& element) const {
  const int e = circuit_.element_index(element);
  Workspace w = circuit_.make_workspace();
  Eigen::VectorXd out(static_cast<Eigen::Index>(times_.size()));
  for (std::size_t k = 0; k < times_.size(); ++k) {
    out[static_cast<Eigen::Index>(k)] =
        circuit_.stored_energy_J(e, times_[k], states_.row(static_cast<Eigen::Index>(k)).data(), w);
  }
  return out;
}

Eigen::VectorXd TransientResult::sample(double t_s) const {
  Eigen::VectorXd x(states_.cols());
  sample(t_s, x.data());
  return x;
}

void TransientResult::sample(double t_s, double* out) const {
  if (!(t_s >= times_.front() && t_s <= times_.back())) {
    std::ostringstream m;
    m << "transient result: t = " << t_s << " s lies outside the run [" << times_.front() << ", "
      << times_.back() << "] s";
    throw std::invalid_argument(m.str());
  }
  auto it = std::upper_bound(times_.begin(), times_.end(), t_s);
  std::size_t k1 = static_cast<std::size_t>(it - times_.begin());
  if (k1 >= times_.size()) k1 = times_.size() - 1;
  const std::size_t k0 = k1 == 0 ? 0 : k1 - 1;
  const double t0 = times_[k0], t1 = times_[k1];
  const auto i0 = static_cast<Eigen::Index>(k0), i1 = static_cast<Eigen::Index>(k1);
  Eigen::Map<Eigen::RowVectorXd> x(out, states_.cols());
  if (t1 <= t0) {
    x = states_.row(i1);
    return;
  }
  const double h = t1 - t0, s = (t_s - t0) / h;
  const double h00 = (1 + 2 * s) * (1 - s) * (1 - s), h10 = s * (1 - s) * (1 - s);
  const double h01 = s * s * (3 - 2 * s), h11 = s * s * (s - 1);
  x = h00 * states_.row(i0) + h10 * h * rates_.row(i0) + h01 * states_.row(i1) + h11 * h * rates_.row(i1);
}

TransientResult TransientResult::moved_in_time(double shift_s, Circuit circuit) const {
  if (circuit.state_count() != circuit_.state_count()) {
    throw std::invalid_argument("transient result: a circuit of other states cannot read this run");
  }
  std::vector<double> times = times_;
  for (double& t : times) t += shift_s;
  std::vector<EventOutcome> events = events_;
  for (auto& e : events) {
    if (e.time_s) *e.time_s += shift_s;
  }
  return TransientResult(std::move(circuit), std::move(times), states_, rates_, std::move(events), energy_, stats_);
}

UniformSamples TransientResult::resample(double step_s) const {
  if (!(step_s > 0.0) || !std::isfinite(step_s)) {
    throw std::invalid_argument("transient result: resample step_s must be finite and > 0");
  }
  const double span = times_.back() - times_.front();
  const double count_d = std::floor(span / step_s + 1e-9) + 1.0;
  if (count_d > 5e7) throw std::invalid_argument("transient result: resample step_s gives more than 5e7 points");
  const auto count = static_cast<std::size_t>(count_d);
  UniformSamples u;
  u.states.resize(static_cast<Eigen::Index>(count), states_.cols());
  for (std::size_t k = 0; k < count; ++k) {
    const double t = std::min(times_.front() + static_cast<double>(k) * step_s, times_.back());
    u.times_s.push_back(t);
    u.states.row(static_cast<Eigen::Index>(k)) = sample(t).transpose();
  }
  return u;
}

}  // namespace coilkick::engine
