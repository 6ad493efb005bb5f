#include "coilkick/engine/circuit.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <sstream>
#include <stdexcept>

#include "coilkick/engine/closest_name.hpp"

namespace coilkick::engine {

// Writes one element's local contributions into the workspace's extended arrays.
class GlobalStamper final : public Stamper {
 public:
  // Without `slopes` (rates only: the Rosenbrock stages) the derivatives are not kept.
  GlobalStamper(Workspace& w, const int* map, int channel_offset, bool slopes = true)
      : w_(w), map_(map), ch_(channel_offset), slopes_(slopes) {}
  void add_flow(int row, double v) override {
    if (map_[row] >= 0) w_.flow[map_[row]] += v;
  }
  void add_flow_slope(int row, int col, double v) override {
    if (slopes_ && map_[row] >= 0 && map_[col] >= 0) w_.flow_slope(map_[row], map_[col]) += v;
  }
  void add_flow_time_rate(int row, double v) override {
    if (slopes_ && map_[row] >= 0) w_.flow_time_rate[map_[row]] += v;
  }
  void add_mass(int row, int col, double v) override {
    if (map_[row] >= 0 && map_[col] >= 0) w_.mass(map_[row], map_[col]) += v;
  }
  void add_mass_slope(int row, int col, double v) override {
    if (map_[row] >= 0 && map_[col] >= 0) w_.mass_slope(map_[row], map_[col]) += v;
  }
  void add_power(int channel, double v) override { w_.power[ch_ + channel] += v; }
  void add_power_slope(int channel, int col, double v) override {
    if (slopes_ && map_[col] >= 0) w_.power_slope(ch_ + channel, map_[col]) += v;
  }
  void add_power_time_rate(int channel, double v) override {
    if (slopes_) w_.power_time_rate[ch_ + channel] += v;
  }
  bool wants_slopes() const override { return slopes_; }

 private:
  Workspace& w_;
  const int* map_;
  int ch_;
  bool slopes_;
};

namespace {
// Collects one element's flow and mass rows in local numbering (for terminal currents).
// Writes into the workspace's local scratch (sized for the largest element), so a probe of one
// element's current allocates nothing.
class LocalStamper final : public Stamper {
 public:
  LocalStamper(Eigen::VectorXd& flow, Eigen::MatrixXd& mass, int n) : flow_(flow), mass_(mass) {
    flow_.head(n).setZero();
    mass_.topLeftCorner(n, n).setZero();
  }
  void add_flow(int row, double v) override { flow_[row] += v; }
  void add_flow_slope(int, int, double) override {}
  void add_flow_time_rate(int, double) override {}
  void add_mass(int row, int col, double v) override { mass_(row, col) += v; }
  void add_mass_slope(int, int, double) override {}
  void add_power(int, double) override {}
  void add_power_slope(int, int, double) override {}
  void add_power_time_rate(int, double) override {}
  // A terminal current needs the flows and the mass only: a model without charges then
  // evaluates its currents in plain doubles (the same values as its dual numbers' value parts).
  bool wants_slopes() const override { return false; }

 private:
  Eigen::VectorXd& flow_;
  Eigen::MatrixXd& mass_;
};
}  // namespace

Circuit::Circuit(const Network& network)
    : elements_(network.elements()), sources_(network.voltage_sources()),
      stray_F_(network.stray_capacitance_F()) {
  if (elements_.empty()) throw std::invalid_argument("network: it has no elements");
  // Nodes: free nodes in order of first appearance, then fixed nodes in source order.
  std::map<std::string, int> fixed;
  for (std::size_t j = 0; j < sources_.size(); ++j) fixed[sources_[j].node] = static_cast<int>(j);
  std::map<std::string, int> free_index;
  for (const auto& e : elements_) {
    for (const auto& t : e->terminals()) {
      if (t == Network::ground || fixed.count(t) || free_index.count(t)) continue;
      free_index[t] = static_cast<int>(node_names_.size());
      node_names_.push_back(t);
    }
  }
  n_nodes_ = static_cast<int>(node_names_.size());
  for (const auto& s : sources_) {
    bool used = false;
    for (const auto& e : elements_) {
      for (const auto& t : e->terminals()) used = used || t == s.node;
    }
    if (!used) {
      throw std::invalid_argument("voltage source '" + s.name + "': node '" + s.node +
                                  "' is not connected to any element");
    }
  }
  for (const auto& n : node_names_) states_.push_back({"node:" + n, "V", StateKind::node_voltage, false, 0.0});
  // Element internal states.
  int next = n_nodes_;
  std::vector<int> first_internal;
  for (const auto& e : elements_) {
    first_internal.push_back(next);
    for (const auto& s : e->internal_states()) {
      if (s.name.empty()) throw std::invalid_argument("element '" + e->name() + "': unnamed internal state");
      if (s.kind == StateKind::internal && !(s.absolute_tolerance > 0.0)) {
        throw std::invalid_argument("element '" + e->name() + "': internal state '" + s.name +
                                    "' needs an absolute_tolerance > 0");
      }
      if (s.kind == StateKind::node_voltage) {
        throw std::invalid_argument("element '" + e->name() + "': internal state '" + s.name +
                                    "' cannot be a node voltage");
      }
      states_.push_back({e->name() + "." + s.name, s.unit, s.kind, false, s.absolute_tolerance, s.operating_point_guess, s.node_scale});
      ++next;
    }
  }
  n_circuit_ = next;
  n_fixed_ = static_cast<int>(sources_.size());
  for (const auto& s : sources_) node_names_.push_back(s.node);
  // Local maps.
  for (std::size_t k = 0; k < elements_.size(); ++k) {
    const auto& e = elements_[k];
    std::vector<int> map;
    for (const auto& t : e->terminals()) {
      if (t == Network::ground) map.push_back(-1);
      else if (fixed.count(t)) map.push_back(n_circuit_ + fixed[t]);
      else map.push_back(free_index[t]);
    }
    const int ni = static_cast<int>(e->internal_states().size());
    for (int i = 0; i < ni; ++i) map.push_back(first_internal[k] + i);
    maps_.push_back(std::move(map));
    if (e->has_mass_slope()) mass_slope_elements_.push_back(k);
    if (e->has_junctions()) junction_elements_.push_back(k);
  }
  // Power channels: element channels, then one per voltage source.
  for (const auto& e : elements_) {
    channel_offset_.push_back(static_cast<int>(channels_.size()));
    for (const auto& c : e->power_channels()) channels_.push_back({e->name() + "." + c.name, e->name(), c.kind});
  }
  n_element_channels_ = static_cast<int>(channels_.size());
  for (const auto& s : sources_) channels_.push_back({s.name + ".delivered", s.name, PowerChannelSpec::Kind::supplied});
  for (const auto& c : channels_) states_.push_back({"energy:" + c.name, "J", StateKind::internal, true, 0.0});
  // History channels of the elements that read their past.
  int history_channels = 0;
  for (const auto& e : elements_) {
    history_offset_.push_back(history_channels);
    const int n = e->history_channel_count();
    if (n > 0) {
      const double d = e->shortest_delay_s();
      if (!(d > 0.0) || !std::isfinite(d)) {
        throw std::invalid_argument("element '" + e->name() + "': reads its past but has no positive delay");
      }
      shortest_delay_s_ = std::min(shortest_delay_s_, d);
      longest_delay_s_ = std::max(longest_delay_s_, d);
    }
    history_channels += n;
  }
  if (history_channels > 0) history_.p = std::make_shared<DelayHistory>(history_channels);
  for (std::size_t k = 0; k < elements_.size(); ++k) {
    piece_offset_.push_back(piece_slots_);
    const int n = elements_[k]->piece_slot_count();
    if (n > 0) piece_elements_.push_back(k);
    piece_slots_ += n;
  }
  // M moves only with a state-dependent charge (the elements of mass_slope_elements_) or with a
  // line's form (its quasi-static lag).
  mass_constant_ = mass_slope_elements_.empty() && !history_;
  check_every_node_has_capacitance();
}

void Circuit::check_every_node_has_capacitance() {
  if (stray_F_ > 0.0) return;
  Workspace w = make_workspace();
  Eigen::VectorXd x = Eigen::VectorXd::Zero(state_count());
  assemble(0.0, 0.0, x.data(), w);
  for (int k = 0; k < n_circuit_; ++k) {
    if (w.mass(k, k) == 0.0) {
      throw std::invalid_argument("network: '" + states_[k].name +
                                  "' has no capacitance (or inductance); connect a capacitor or "
                                  "set a stray capacitance > 0");
    }
  }
}

Workspace Circuit::make_workspace() const {
  Workspace w;
  const int ne = n_circuit_ + n_fixed_;
  const int nch = static_cast<int>(channels_.size());
  const int n = state_count();
  w.ext_value = Eigen::VectorXd::Zero(ne);
  w.ext_rate = Eigen::VectorXd::Zero(ne);
  w.flow = Eigen::VectorXd::Zero(ne);
  w.flow_time_rate = Eigen::VectorXd::Zero(ne);
  w.flow_slope = Eigen::MatrixXd::Zero(ne, ne);
  w.mass = Eigen::MatrixXd::Zero(ne, ne);
  w.mass_slope = Eigen::MatrixXd::Zero(ne, ne);
  w.power = Eigen::VectorXd::Zero(nch);
  w.power_time_rate = Eigen::VectorXd::Zero(nch);
  w.power_slope = Eigen::MatrixXd::Zero(nch, ne);
  w.rate = Eigen::VectorXd::Zero(n);
  w.jacobian = Eigen::MatrixXd::Zero(n, n);
  w.time_rate = Eigen::VectorXd::Zero(n);
  w.source_current_A = Eigen::VectorXd::Zero(n_fixed_);
  w.scratch_rhs = Eigen::VectorXd::Zero(n_circuit_);
  w.scratch_time_rhs = Eigen::VectorXd::Zero(n_circuit_);
  w.scratch_slope = Eigen::MatrixXd::Zero(ne, ne);
  w.scratch_row = Eigen::RowVectorXd::Zero(n_circuit_);
  std::size_t locals = 0;
  for (const auto& m : maps_) locals = std::max(locals, m.size());
  w.local_flow = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(locals));
  w.local_mass = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(locals), static_cast<Eigen::Index>(locals));
  w.pieces.assign(static_cast<std::size_t>(piece_slots_), 0);
  w.free_pieces.assign(static_cast<std::size_t>(piece_slots_), 0);
  return w;
}

DelayedValues Circuit::past_of(std::size_t element, const Workspace& w, bool before) const {
  if (!history_ || w.operating_point || history_->empty()) return {};
  return {history_.get(), history_offset_[element], before, w.quasi_static};
}

bool Circuit::history_quiet(double absolute, double relative) const {
  if (!history_ || history_->empty()) return true;
  const int n = history_->channel_count();
  const double t1 = history_->last_time_s();
  const double t0 = history_->previous_time_s();
  if (!(t0 < t1)) return false;
  const double tau = longest_delay_s_;
  for (int k = 0; k < n; ++k) {
    const double v = history_->value(k, t1), tolerance = absolute + relative * std::abs(v);
    // The first-order form reads w(t − τ) as w(t) − τ·ẇ(t): the recorded past over the last
    // delay must lie on that line (a front still in transit does not) ...
    if (!history_->follows_tangent(k, t1 - tau, tolerance)) return false;
    // ... and stay near it over the step ahead: its error is ~τ²·ẅ/2, ẅ from the last two points.
    const double curvature = (history_->rate(k, t1, true) - history_->rate(k, t0, false)) / (t1 - t0);
    if (0.5 * std::abs(curvature) * tau * tau > tolerance) return false;
  }
  return true;
}

void Circuit::start_history(double t_s, const double* x, Workspace& w) const {
  if (!history_) return;
  history_->clear();
  Eigen::VectorXd zero = Eigen::VectorXd::Zero(n_circuit_);
  history_point(t_s, x, zero.data(), t_s, w, w.history_rates_after);
  history_->append(t_s, w.history_values.data(), w.history_rates_after.data(), w.history_rates_after.data());
}

void Circuit::record_history(const DenseStep& step, KinkTolerance kink_tolerance, Workspace& w) const {
  if (!history_) return;
  w.history_x.resize(step.x0.size());
  w.history_rate.resize(step.x0.size());
  // After the previous point: this step's polynomial at its start.
  step.at(step.t0, w.history_x.data(), w.history_rate.data());
  history_point(step.t0, step.x0.data(), w.history_rate.data(), step.t0, w, w.history_rates_after);
  const double* before = history_->last_rates_before();
  bool kink = false;
  // The rates of two neighbouring steps' polynomials differ by ~tolerance/step even where the
  // solution is smooth: a kink must also stand out of that noise (else every short step makes
  // one, and each kink's arrival makes short steps: a self-sustaining train, measured).
  const double before_piece = step.t0 - history_->previous_time_s();
  const double shorter = before_piece > 0.0 ? std::min(before_piece, step.t1 - step.t0) : step.t1 - step.t0;
  constexpr double kNoise = 10.0;  // measured on the 60 m demo: 1 → 10 halves its steps, 30 no better
  for (std::size_t k = 0; k < w.history_values.size(); ++k) {
    const double tolerance = kink_tolerance.absolute + kink_tolerance.relative * std::abs(w.history_values[k]);
    const double jump = std::abs(w.history_rates_after[k] - before[k]);
    kink = kink || jump > tolerance * (1.0 / shortest_delay_s_ + kNoise / shorter);
  }
  if (kink) {
    history_->set_last_rates_after(w.history_rates_after.data());
    history_->mark_kink();
  } else {
    // No kink: one rate on both sides. A rate that jumps by noise at every point is a kink to a
    // line's high-frequency low-pass, whose error from it (~τ_hf·jump) does not shrink with the
    // step (measured: rejections at every step). The shorter piece takes the longer one's rate:
    // it moves by ~jump·(its length)/8, about the tolerance at most by the kink test above.
    if (before_piece >= step.t1 - step.t0) std::copy(before, before + w.history_values.size(), w.history_rates_after.begin());
    history_->set_last_rates(w.history_rates_after.data(), w.history_rates_after.data());
  }
  // The step's end, its rates before it (and, until the next step, after it).
  step.at(step.t1, w.history_x.data(), w.history_rate.data());
  history_point(step.t1, step.x1.data(), w.history_rate.data(), 0.5 * (step.t0 + step.t1), w, w.history_rates_before);
  history_->append(step.t1, w.history_values.data(), w.history_rates_before.data(), w.history_rates_before.data());
}

void Circuit::history_point(double t_s, const double* x, const double* rates, double slope_time_s, Workspace& w,
                            std::vector<double>& rates_out) const {
  const bool dc = history_->empty();  // the initial DC point: its past is constant
  for (int i = 0; i < n_circuit_; ++i) {
    w.ext_value[i] = x[i];
    w.ext_rate[i] = rates[i];
  }
  for (int j = 0; j < n_fixed_; ++j) {
    w.ext_value[n_circuit_ + j] = sources_[j].voltage_V.value(t_s);
    w.ext_rate[n_circuit_ + j] = dc ? 0.0 : sources_[j].voltage_V.slope(slope_time_s);
  }
  const auto n = static_cast<std::size_t>(history_->channel_count());
  w.history_values.resize(n);
  rates_out.resize(n);
  for (std::size_t k = 0; k < elements_.size(); ++k) {
    if (elements_[k]->history_channel_count() == 0) continue;
    ElementContext ctx(t_s, w.ext_value.data(), w.ext_rate.data(), maps_[k].data(), past_of(k, w, slope_time_s < t_s));
    const auto off = static_cast<std::size_t>(history_offset_[k]);
    elements_[k]->history_values(ctx, w.history_values.data() + off, rates_out.data() + off);
  }
}

void Circuit::assemble(double t_s, double slope_time_s, const double* x, Workspace& w, bool with_slopes) const {
  for (int i = 0; i < n_circuit_; ++i) w.ext_value[i] = x[i];
  for (int j = 0; j < n_fixed_; ++j) {
    w.ext_value[n_circuit_ + j] = sources_[j].voltage_V.value(t_s);
    w.ext_rate[n_circuit_ + j] = sources_[j].voltage_V.slope(slope_time_s);
  }
  w.flow.setZero();
  w.mass.setZero();
  w.power.setZero();
  if (with_slopes) {
    w.flow_time_rate.setZero();
    w.flow_slope.setZero();
    w.power_time_rate.setZero();
    w.power_slope.setZero();
  }
  auto load = [&](std::size_t k, PieceChoices* pieces) {
    ElementContext ctx(t_s, w.ext_value.data(), w.ext_rate.data(), maps_[k].data(), past_of(k, w, slope_time_s < t_s), pieces);
    GlobalStamper st(w, maps_[k].data(), channel_offset_[k], with_slopes);
    elements_[k]->load(ctx, st);
  };
  // (Without piecewise-linear elements no record is made: a smooth circuit pays nothing for it.)
  if (piece_slots_ == 0) {
    for (std::size_t k = 0; k < elements_.size(); ++k) load(k, nullptr);
  } else {
    for (std::size_t k = 0; k < elements_.size(); ++k) {
      PieceChoices pieces(w.pieces.data() + piece_offset_[k], w.hold_pieces, w.free_pieces.data() + piece_offset_[k]);
      load(k, &pieces);
    }
  }
  for (int i = 0; i < n_nodes_; ++i) w.mass(i, i) += stray_F_;
}

void Circuit::evaluate(double t_s, double slope_time_s, const double* x, Workspace& w,
                       bool with_jacobian) const {
  assemble(t_s, slope_time_s, x, w, with_jacobian);
  const int nc = n_circuit_, nf = n_fixed_, nch = n_element_channels_;
  const auto vdot_f = w.ext_rate.segment(nc, nf);
  // M is often the same as at the last evaluation (pwl devices, fixed capacitors and coils):
  // factor it only when it changed — never again once factored where it cannot change.
  if (!(w.lu_of.rows() == nc && (mass_constant_ || w.lu_of == w.mass.topLeftCorner(nc, nc)))) {
    w.lu_of = w.mass.topLeftCorner(nc, nc);
    w.lu.compute(w.lu_of);
  }
  // The fixed nodes' slopes are zero but on the sources' edges: their terms are skipped then
  // (adding exact zeros; the small products cost more in call overhead than in arithmetic).
  const bool sources_move = !vdot_f.isZero(0.0);
  w.scratch_rhs = w.flow.head(nc);
  if (sources_move) w.scratch_rhs.noalias() -= w.mass.block(0, nc, nc, nf) * vdot_f;
  w.lu.solve_in_place(w.scratch_rhs);
  w.rate.head(nc) = w.scratch_rhs;
  w.ext_rate.head(nc) = w.rate.head(nc);
  // Current each voltage source delivers into its node: what the node's elements draw.
  for (int j = 0; j < nf; ++j) {
    const int p = nc + j;
    w.source_current_A[j] = w.mass.row(p).dot(w.ext_rate) - w.flow[p];
  }
  for (int c = 0; c < nch; ++c) w.rate[nc + c] = w.power[c];
  for (int j = 0; j < nf; ++j) w.rate[nc + nch + j] = w.ext_value[nc + j] * w.source_current_A[j];
  if (!with_jacobian) return;

  // Only the elements with a state-dependent ∂q/∂x stamp here; without any, mass_slope keeps the
  // zeros it was made with.
  if (!mass_slope_elements_.empty()) w.mass_slope.setZero();
  for (const std::size_t k : mass_slope_elements_) {
    ElementContext ctx(t_s, w.ext_value.data(), w.ext_rate.data(), maps_[k].data(), past_of(k, w, slope_time_s < t_s));
    GlobalStamper st(w, maps_[k].data(), channel_offset_[k]);
    elements_[k]->load_mass_slope(ctx, st);
  }
  Eigen::MatrixXd& g_minus_k = w.scratch_slope;
  g_minus_k = w.flow_slope - w.mass_slope;
  // Every row's first nc columns are written below, at every call; the energy columns stay the
  // zeros make_workspace put there (no rate depends on an energy).
  auto jcc = w.jacobian.topLeftCorner(nc, nc);
  jcc = g_minus_k.topLeftCorner(nc, nc);
  w.lu.solve_columns_in_place(jcc);
  w.scratch_time_rhs = w.flow_time_rate.head(nc);
  if (sources_move) w.scratch_time_rhs.noalias() += g_minus_k.block(0, nc, nc, nf) * vdot_f;
  w.lu.solve_in_place(w.scratch_time_rhs);
  w.time_rate.head(nc) = w.scratch_time_rhs;
  for (int c = 0; c < nch; ++c) {
    w.jacobian.row(nc + c).head(nc) = w.power_slope.row(c).head(nc);
    w.time_rate[nc + c] = w.power_time_rate[c];
    if (sources_move) w.time_rate[nc + c] += w.power_slope.row(c).segment(nc, nf).dot(vdot_f);
  }
  for (int j = 0; j < nf; ++j) {
    const int p = nc + j;
    const double v = w.ext_value[p];
    // i_s = M_p·ẋ − f_p;  ∂i_s/∂x = M_pc·J_cc + K_pc − G_pc
    // A source node with no capacitance to the free nodes (the usual case) has M_pc = 0: its
    // products are skipped (they would add exact zeros).
    const bool coupled = !w.mass.row(p).head(nc).isZero(0.0);
    Eigen::RowVectorXd& di_dx = w.scratch_row;
    if (coupled) {
      di_dx.noalias() = w.mass.row(p).head(nc) * jcc;
      di_dx -= g_minus_k.row(p).head(nc);
    } else {
      di_dx = -g_minus_k.row(p).head(nc);
    }
    w.jacobian.row(nc + nch + j).head(nc) = v * di_dx;
    double di_dt = coupled ? w.mass.row(p).head(nc).dot(w.time_rate.head(nc)) : 0.0;
    if (sources_move) di_dt += (-g_minus_k.row(p).segment(nc, nf)).dot(vdot_f);
    di_dt -= w.flow_time_rate[p];
    w.time_rate[nc + nch + j] = vdot_f[j] * w.source_current_A[j] + v * di_dt;
  }
}

void Circuit::set_point_values(double t_s, const double* x, Workspace& w) const {
  for (int i = 0; i < n_circuit_; ++i) w.ext_value[i] = x[i];
  for (int j = 0; j < n_fixed_; ++j) w.ext_value[n_circuit_ + j] = sources_[j].voltage_V.value(t_s);
}

void Circuit::choose_pieces(double t_s, const double* x, Workspace& w) const {
  set_point_values(t_s, x, w);
  for (const std::size_t k : piece_elements_) {
    PieceChoices pieces(w.pieces.data() + piece_offset_[k], false);
    ElementContext ctx(t_s, w.ext_value.data(), w.ext_rate.data(), maps_[k].data(), {}, &pieces);
    elements_[k]->choose_pieces(ctx);
  }
}

void Circuit::junctions_at(double t_s, const double* x, Workspace& w, std::vector<CircuitJunction>& out) const {
  out.clear();
  set_point_values(t_s, x, w);
  for (const std::size_t k : junction_elements_) {
    const auto& map = maps_[k];
    ElementContext ctx(t_s, w.ext_value.data(), w.ext_rate.data(), map.data());
    w.junction_scratch.clear();
    elements_[k]->junction_states(ctx, w.junction_scratch);
    auto state = [&](int local) { return map[static_cast<std::size_t>(local)] < n_circuit_ ? map[static_cast<std::size_t>(local)] : -1; };
    for (const auto& j : w.junction_scratch) out.push_back({state(j.anode), state(j.cathode), j.log_slope_V, j.exponential});
  }
}

std::vector<double> Circuit::terminal_currents_A(int element, double t_s, const double* x,
                                                 Workspace& w) const {
  evaluate(t_s, t_s, x, w, false);
  return terminal_currents_A(element, t_s, x, w.rate.data(), w);
}

std::vector<double> Circuit::terminal_currents_A(int element, double t_s, const double* x,
                                                 const double* rates, Workspace& w) const {
  load_element_alone(element, t_s, x, rates, w);
  std::vector<double> out;
  const int nt = elements_.at(static_cast<std::size_t>(element))->terminal_count();
  for (int k = 0; k < nt; ++k) out.push_back(loaded_terminal_current_A(element, k, w));
  return out;
}

double Circuit::terminal_current_A(int element, int terminal, double t_s, const double* x,
                                   const double* rates, Workspace& w) const {
  load_element_alone(element, t_s, x, rates, w);
  return loaded_terminal_current_A(element, terminal, w);
}

void Circuit::load_element_alone(int element, double t_s, const double* x, const double* rates,
                                 Workspace& w) const {
  const auto& map = maps_[static_cast<std::size_t>(element)];
  // Only the unknowns this element reads (a probe calls this at every sample).
  for (const int i : map) {
    if (i < 0) continue;
    if (i < n_circuit_) {
      w.ext_value[i] = x[i];
      w.ext_rate[i] = rates[i];
    } else {
      const auto& v = sources_[static_cast<std::size_t>(i - n_circuit_)].voltage_V;
      w.ext_value[i] = v.value(t_s);
      w.ext_rate[i] = v.slope(t_s);
    }
  }
  LocalStamper st(w.local_flow, w.local_mass, static_cast<int>(map.size()));
  ElementContext ctx(t_s, w.ext_value.data(), w.ext_rate.data(), map.data(),
                     past_of(static_cast<std::size_t>(element), w));
  elements_.at(static_cast<std::size_t>(element))->load(ctx, st);
}

double Circuit::loaded_terminal_current_A(int element, int terminal, const Workspace& w) const {
  const auto& map = maps_[static_cast<std::size_t>(element)];
  double i = -w.local_flow[terminal];
  for (std::size_t c = 0; c < map.size(); ++c) {
    i += w.local_mass(terminal, static_cast<Eigen::Index>(c)) * (map[c] < 0 ? 0.0 : w.ext_rate[map[c]]);
  }
  return i;
}

int Circuit::element_with_terminal(const std::string& element, int terminal, const std::string& who) const {
  const int e = element_index(element);
  const int nt = elements_[static_cast<std::size_t>(e)]->terminal_count();
  if (terminal < 0 || terminal >= nt) {
    std::ostringstream m;
    m << who << ": element '" << element << "' has terminals 0.." << nt - 1 << ", not " << terminal;
    throw std::invalid_argument(m.str());
  }
  return e;
}

double Circuit::stored_energy_J(int element, double t_s, const double* x, Workspace& w) const {
  set_point_values(t_s, x, w);
  auto one = [&](std::size_t k) {
    ElementContext ctx(t_s, w.ext_value.data(), w.ext_rate.data(), maps_[k].data(), past_of(k, w));
    return elements_[k]->stored_energy_J(ctx);
  };
  if (element >= 0) return one(static_cast<std::size_t>(element));
  double total = 0.0;
  for (std::size_t k = 0; k < elements_.size(); ++k) total += one(k);
  for (int i = 0; i < n_nodes_; ++i) total += 0.5 * stray_F_ * x[i] * x[i];
  return total;
}

double Circuit::longest_step_reading_past_s(double t_s, int pieces) const {
  double longest = shortest_delay_s_;
  if (!history_ || history_->empty()) return longest;
  for (const auto& e : elements_) {
    if (e->history_channel_count() == 0) continue;
    const double back = t_s - e->shortest_delay_s();
    // The rest of the piece holding `back`, then `pieces` − 1 whole pieces.
    longest = std::min(longest, history_->point_after(back, pieces) - back);
  }
  return longest;
}

double Circuit::next_corner_after_s(double t_s) const {
  double next = std::numeric_limits<double>::infinity();
  for (const auto& s : sources_) {
    if (auto c = s.voltage_V.next_corner_after(t_s)) next = std::min(next, *c);
  }
  for (const auto& e : elements_) {
    next = std::min(next, e->next_corner_after_s(t_s));
    if (history_ && e->history_channel_count() > 0 && !history_->empty()) {
      const double d = e->shortest_delay_s();
      double k = history_->next_kink_after(t_s - d);
      while (k + d <= t_s) k = history_->next_kink_after(k);  // rounding of t − d
      next = std::min(next, k + d);
    }
  }
  return next;
}

int Circuit::state_index(const std::string& name) const {
  for (std::size_t k = 0; k < states_.size(); ++k) {
    if (states_[k].name == name) return static_cast<int>(k);
  }
  std::vector<std::string> names;
  for (const auto& s : states_) names.push_back(s.name);
  throw std::invalid_argument("circuit: no state named '" + name + "'" + did_you_mean(name, names));
}

int Circuit::element_index(const std::string& name) const {
  for (std::size_t k = 0; k < elements_.size(); ++k) {
    if (elements_[k]->name() == name) return static_cast<int>(k);
  }
  std::vector<std::string> names;
  for (const auto& e : elements_) names.push_back(e->name());
  throw std::invalid_argument("circuit: no element named '" + name + "'" + did_you_mean(name, names));
}

int Circuit::ext_node_index(const std::string& node) const {
  if (node == Network::ground) return -1;
  for (std::size_t k = 0; k < node_names_.size(); ++k) {
    if (node_names_[k] == node) {
      const int ik = static_cast<int>(k);
      return ik < n_nodes_ ? ik : n_circuit_ + (ik - n_nodes_);
    }
  }
  throw std::invalid_argument("circuit: no node named '" + node + "'" + did_you_mean(node, node_names_));
}

bool Circuit::has_node(const std::string& node) const {
  if (node == Network::ground) return true;
  for (const auto& n : node_names_) {
    if (n == node) return true;
  }
  return false;
}

std::vector<std::string> Circuit::node_names() const { return node_names_; }

double Circuit::node_voltage_V(const std::string& node, double t_s, const double* x) const {
  return node_voltage_at(ext_node_index(node), t_s, x);
}

double Circuit::node_voltage_at(int k, double t_s, const double* x) const {
  if (k < 0) return 0.0;
  if (k < n_circuit_) return x[k];
  return sources_[static_cast<std::size_t>(k - n_circuit_)].voltage_V.value(t_s);
}

}  // namespace coilkick::engine
