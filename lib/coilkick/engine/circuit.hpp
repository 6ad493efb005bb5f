#pragma once
// Circuit: a Network compiled into the ODE the integrator solves.
//
// Unknowns ("states"), in this order:
//   1. the voltage (V) of every node that is neither ground nor fixed by a voltage source;
//   2. the internal states of the elements (coil currents in A, armature position ...);
//   3. energy accumulators (J): one per element power channel, then one per voltage source
//      (energy it delivered). They are integrated with the rest so that energies carry the same
//      error control as the waveforms.
// The circuit part obeys M(x)·ẋ = f(x, t) − M_fixed·V̇_fixed, with M the capacitance/inductance
// matrix (never singular: every node has a capacitance to ground), solved by LU at each
// evaluation; the energy rows are the channel powers. The Jacobian is analytic: assembled from
// the element conductances, J = M⁻¹·(∂f/∂x − ∂(M·ẋ)/∂x).
#include <Eigen/Dense>
#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "coilkick/engine/dense_step.hpp"
#include "coilkick/engine/element.hpp"
#include "coilkick/engine/network.hpp"
#include "coilkick/engine/small_lu.hpp"

namespace coilkick::engine {

struct StateInfo {
  std::string name;   // "node:sw", "valve.current", "energy:valve.winding", "energy:supply.delivered"
  std::string unit;   // "V", "A", "J", ...
  StateKind kind = StateKind::internal;
  bool is_energy = false;
  double absolute_tolerance = 0.0;  // only for element internal states that declare one
  double operating_point_guess = 0.0;
  bool node_scale = false;          // InternalStateSpec::node_scale
};

struct PowerChannelInfo {
  std::string name;     // "<element>.<channel>" or "<source>.delivered"
  std::string element;  // owning element or voltage source
  PowerChannelSpec::Kind kind = PowerChannelSpec::Kind::dissipated;
};

// A junction (JunctionState) in the circuit's states: anode and cathode are state indices, or
// -1 for ground or a node a source fixes (it does not move in a Newton step).
struct CircuitJunction {
  int anode = -1, cathode = -1;
  double log_slope_V = 0.0;
  bool exponential = false;
};

// Scratch storage for evaluations. One per thread; sized by Circuit::make_workspace().
struct Workspace {
  Eigen::VectorXd ext_value, ext_rate;  // circuit states then fixed-node voltages
  Eigen::VectorXd flow, flow_time_rate;
  Eigen::MatrixXd flow_slope, mass, mass_slope;
  Eigen::VectorXd power, power_time_rate;
  Eigen::MatrixXd power_slope;
  SmallLu lu;              // of the circuit block of M ...
  Eigen::MatrixXd lu_of;   // ... as it was when factored
  // Outputs of Circuit::evaluate:
  Eigen::VectorXd rate;        // ẋ for all states
  Eigen::MatrixXd jacobian;    // ∂ẋ/∂x (only when requested)
  Eigen::VectorXd time_rate;   // ∂ẋ/∂t (only when requested)
  Eigen::VectorXd source_current_A;  // current each voltage source delivers into its node
  // Intermediates of Circuit::evaluate, kept here so an evaluation allocates nothing.
  Eigen::VectorXd scratch_rhs, scratch_time_rhs;
  Eigen::MatrixXd scratch_slope;       // ∂f/∂x − ∂(M·ẋ)/∂x
  Eigen::RowVectorXd scratch_row;
  Eigen::VectorXd local_flow;  // one element's own rows (terminal_current_A)
  Eigen::MatrixXd local_mass;
  std::vector<double> history_values, history_rates_before, history_rates_after;  // one point of the delay history
  std::vector<JunctionState> junction_scratch;
  Eigen::VectorXd history_x, history_rate;  // a point of a step's dense output
  // The operating-point solve: elements that read their past see none (their DC model).
  bool operating_point = false;
  bool quasi_static = false;  // lines couple their ends without delay (steps longer than it)
  // The pieces of the piecewise-linear elements (PieceChoices; Circuit::piece_slot_count slots):
  // evaluations decide them into `pieces`, or, with hold_pieces, read them from there.
  std::vector<unsigned char> pieces;
  std::vector<unsigned char> free_pieces;  // corners decided even while holding (a run sets them)
  bool hold_pieces = false;
};

class Circuit {
 public:
  explicit Circuit(const Network& network);

  int circuit_state_count() const { return n_circuit_; }
  int state_count() const { return static_cast<int>(states_.size()); }
  const std::vector<StateInfo>& states() const { return states_; }
  const std::vector<PowerChannelInfo>& power_channels() const { return channels_; }
  const std::vector<std::shared_ptr<const Element>>& elements() const { return elements_; }
  const std::vector<VoltageSource>& voltage_sources() const { return sources_; }
  double stray_capacitance_F() const { return stray_F_; }

  // Index of a state by name; throws std::invalid_argument listing the closest names.
  int state_index(const std::string& name) const;
  int element_index(const std::string& name) const;
  // Node voltage (V) at (t, x): free node from x, fixed node from its source, ground 0.
  double node_voltage_V(const std::string& node, double t_s, const double* x) const;
  // The same with the node resolved once (probes read it at every step; a name lookup there
  // was 3 % of a pwl run). node_slot throws std::invalid_argument with the closest node name if
  // `node` does not exist; ground is −1.
  int node_slot(const std::string& node) const { return ext_node_index(node); }
  double node_voltage_at(int slot, double t_s, const double* x) const;
  bool has_node(const std::string& node) const;
  std::vector<std::string> node_names() const;  // every node except ground

  Workspace make_workspace() const;
  // Fills the raw assembly (flow, flow_slope, mass ...) at (t, x). `slope_time_s` selects the
  // segment of the source waveforms used for their slopes (see Waveform::slope): the integrator
  // passes the middle of the current step so that a step ending on a corner uses the slope
  // before the corner.
  // Without slopes only f, M and the powers are assembled (∂f/∂x, ∂f/∂t and the power slopes
  // keep stale values): what the Rosenbrock stages need.
  void assemble(double t_s, double slope_time_s, const double* x, Workspace& w, bool with_slopes = true) const;
  // ẋ (and, if asked, ∂ẋ/∂x and ∂ẋ/∂t) into w.rate / w.jacobian / w.time_rate.
  void evaluate(double t_s, double slope_time_s, const double* x, Workspace& w,
                bool with_jacobian) const;
  // Current (A) flowing into the element at each of its terminals at (t, x): one full
  // evaluation for the rates its charges need.
  std::vector<double> terminal_currents_A(int element, double t_s, const double* x,
                                          Workspace& w) const;
  // The same with the rates ẋ known (a recorded point): only the element is loaded.
  std::vector<double> terminal_currents_A(int element, double t_s, const double* x,
                                          const double* rates, Workspace& w) const;
  // One terminal's current, allocating nothing.
  double terminal_current_A(int element, int terminal, double t_s, const double* x,
                            const double* rates, Workspace& w) const;
  // Index of the element after checking that it has that terminal; throws
  // std::invalid_argument "<who>: element 'e' has terminals 0..n, not k".
  int element_with_terminal(const std::string& element, int terminal, const std::string& who) const;
  // Energy stored in fields (J): element `e`, or the whole circuit (elements + stray) for e = -1.
  double stored_energy_J(int element, double t_s, const double* x, Workspace& w) const;
  // First corner of any source waveform or element time dependence strictly after t_s, or a
  // kink of the history arriving at a line's other end.
  double next_corner_after_s(double t_s) const;
  // Elements that read their past (transmission lines). Such a circuit keeps the history of its
  // latest run, which every evaluation then reads: one run at a time per circuit (every analysis
  // builds its own circuit per run). Before a run, and in the operating-point solve
  // (Workspace::operating_point), those elements are at their DC point.
  bool has_history() const { return static_cast<bool>(history_); }
  // Slots of the piecewise-linear elements' corners (Element::piece_slot_count), all elements.
  int piece_slot_count() const { return piece_slots_; }
  // Decides the pieces at (t, x) into w.pieces, evaluating nothing else.
  void choose_pieces(double t_s, const double* x, Workspace& w) const;
  // The longest step a run may take: the shortest delay at which an element reads its past.
  double shortest_delay_s() const { return shortest_delay_s_; }
  // The longest step from t_s that reads at most `pieces` pieces of any line's past: a step over
  // a stretch the run resolved finely would sample its detail at only a few stages, unseen by
  // the error estimate. (The pieces may grow by that factor at each passage.)
  double longest_step_reading_past_s(double t_s, int pieces) const;
  // The lines may take their quasi-static form: every history channel's recorded past over the
  // last (longest) delay lies within the tolerance of the tangent at the last point, and its
  // curvature there keeps τ²·ẅ/2 within the tolerance.
  bool history_quiet(double absolute, double relative) const;
  // Forgets the history and records the initial point (a DC point: its own constant past).
  void start_history(double t_s, const double* x, Workspace& w) const;
  // Records an accepted step from its dense output: the point at its end, with the rates of the
  // step's own polynomial there, and the rates after the previous point (this step's polynomial
  // at its start). Rates of the dense polynomial, not f(x) at the points: a stiff state's rate
  // f(x) carries its error times the stiffness, which the interpolated past would feed back into
  // the line at every passage (measured: a wave ringing up from the tolerance's noise). Where the
  // rates on the two sides of the previous point differ by more than a channel may drift over one
  // delay (absolute + relative·|value|) and by more than ten times the tolerance over the shorter
  // neighbouring step (the polynomials' own noise), that point is a kink, which
  // next_corner_after_s reports one delay later; elsewhere both sides take one rate (the past is C¹).
  struct KinkTolerance {
    double absolute = 0.0, relative = 0.0;
  };
  void record_history(const DenseStep& step, KinkTolerance kink_tolerance, Workspace& w) const;
  // The junctions of every element that has them, at (t, x) (a DC point: no history), into `out`.
  void junctions_at(double t_s, const double* x, Workspace& w, std::vector<CircuitJunction>& out) const;
  bool has_junctions() const { return !junction_elements_.empty(); }
  // Rows of the circuit part that are node KCL rows (true) or element states (false).
  bool is_node_row(int state) const { return state < n_nodes_; }

 private:
  friend class GlobalStamper;
  std::vector<std::shared_ptr<const Element>> elements_;
  std::vector<VoltageSource> sources_;
  double stray_F_ = 0.0;
  std::vector<std::string> node_names_;   // free nodes, then fixed nodes
  std::vector<std::vector<int>> maps_;    // per element: local index -> ext index (-1 ground)
  std::vector<int> channel_offset_;       // per element: first global channel
  std::vector<std::size_t> mass_slope_elements_;  // the elements whose ∂q/∂x depends on the state
  std::vector<std::size_t> junction_elements_;    // the elements with junctions (has_junctions)
  bool mass_constant_ = false;                    // M the same at every evaluation
  std::vector<StateInfo> states_;
  std::vector<PowerChannelInfo> channels_;
  int n_nodes_ = 0, n_circuit_ = 0, n_fixed_ = 0, n_element_channels_ = 0;
  std::vector<int> history_offset_;          // per element: its first history channel
  // The unknowns of a point (t, x) into w.ext_value: the states, the sources' values.
  void set_point_values(double t_s, const double* x, Workspace& w) const;
  std::vector<int> piece_offset_;            // per element: its first piece slot
  std::vector<std::size_t> piece_elements_;  // the elements with pieces
  int piece_slots_ = 0;
  // Null: no element reads its past. A copy of the circuit (a TransientResult keeps one) copies
  // the history, so that the result keeps its own run's past when the circuit runs again.
  struct OwnHistory {
    std::shared_ptr<DelayHistory> p;
    OwnHistory() = default;
    OwnHistory(const OwnHistory& o) : p(o.p ? std::make_shared<DelayHistory>(*o.p) : nullptr) {}
    OwnHistory(OwnHistory&&) noexcept = default;
    OwnHistory& operator=(const OwnHistory& o) {
      if (this != &o) p = o.p ? std::make_shared<DelayHistory>(*o.p) : nullptr;
      return *this;
    }
    OwnHistory& operator=(OwnHistory&&) noexcept = default;
    DelayHistory* operator->() const { return p.get(); }
    DelayHistory* get() const { return p.get(); }
    explicit operator bool() const { return p != nullptr; }
  } history_;
  double shortest_delay_s_ = std::numeric_limits<double>::infinity(), longest_delay_s_ = 0.0;
  DelayedValues past_of(std::size_t element, const Workspace& w, bool before = false) const;
  // The history channels' values and rates at (t, x, ẋ) into w.history_values and `rates_out`.
  void history_point(double t_s, const double* x, const double* rates, double slope_time_s, Workspace& w,
                     std::vector<double>& rates_out) const;

  int ext_node_index(const std::string& node) const;  // -1 ground, throws if unknown
  // Loads one element alone at (t, x, ẋ) into w.local_flow / w.local_mass, and reads one
  // terminal's current from them.
  void load_element_alone(int element, double t_s, const double* x, const double* rates, Workspace& w) const;
  double loaded_terminal_current_A(int element, int terminal, const Workspace& w) const;
  void check_every_node_has_capacitance();
};

}  // namespace coilkick::engine
