#pragma once
// The element interface. Every part of a network — resistor, coil, diode, transistor, relay
// armature — is an Element. The engine describes the whole network as
//
//     d/dt q(x, t) = f(x, t)
//
// where each row is either Kirchhoff's current law at a node (q: charge held at the node,
// f: current flowing into the node from the resistive parts of the elements) or the equation of
// an element's own state (coil current: q = L·i, f = v_L; armature position, velocity ...).
// An element adds its share of f, of ∂f/∂x (conductances), of ∂f/∂t, and of ∂q/∂x (capacitances,
// inductances, masses), plus the power it turns into heat (or supplies), with its gradient.
//
// Local indices: an element with T terminals and S internal states addresses its unknowns as
// 0..T-1 (the terminal node voltages, V) and T..T+S-1 (its internal states, in their units).
// Rows use the same numbering: row k < T is the KCL row of terminal k.
#include <limits>
#include <string>
#include <vector>

#include "coilkick/engine/delay_history.hpp"

namespace coilkick::engine {

enum class StateKind { node_voltage, branch_current, internal };

// An internal state that an element declares (e.g. a coil's current, an armature's position).
struct InternalStateSpec {
  std::string name;                 // short, e.g. "current"; the network prefixes the element name
  std::string unit;                 // SI unit symbol, e.g. "A", "m", "m/s"
  double absolute_tolerance = 0.0;  // error tolerance in that unit (> 0)
  StateKind kind = StateKind::internal;
  double operating_point_guess = 0.0;  // where the DC Newton iteration starts (e.g. a closed armature's gap)
  // A voltage that is a sum of node-scale parts which may cancel (a line's wave, v + Z0·i): its
  // error is judged against the circuit's largest node voltage too, not only its own size.
  bool node_scale = false;
};

// Energy channel: power an element turns into heat (`dissipated`) or delivers into the network
// (`supplied`, e.g. a current source). The engine integrates each channel into joules.
struct PowerChannelSpec {
  enum class Kind { dissipated, supplied };
  std::string name;  // e.g. "heat", "winding", "core"
  Kind kind = Kind::dissipated;
};

// A junction of an element at one point, for the operating-point Newton (operating_point.cpp):
// its current grows as exp(v/log_slope_V) with the voltage v from terminal `anode` to terminal
// `cathode` (local indices). `exponential`: the point lies on the exponential part (far above
// the saturation current, below the limited exponential's straight continuation), where one
// Newton step moves v by at most ~log_slope_V towards a current it should fall to.
struct JunctionState {
  int anode = 0, cathode = 1;
  double log_slope_V = 0.0;  // dv/d(ln I) at the point: n·V_T, plus the series resistance's I·R
  bool exponential = false;
};

// Which piece of its curves a piecewise-linear element is on (the straight segment past a knee,
// the saturated or the active line ...): one yes/no per corner, at slots the element numbers
// 0..piece_slot_count()−1. Each corner has a margin, a function of the unknowns that crosses zero
// there (> 0: the piece past the corner). To `decide` is to choose by the margin's sign and write
// the choice; to `hold` is to read the choice written earlier, whatever the margin says — a run
// holds the pieces of a step's start over that step, so the step integrates one smooth
// right-hand side, and looks for a changed choice along the step afterwards (a switching
// function, Hairer, Nørsett & Wanner, Solving Ordinary Differential Equations I, 2nd ed., §II.6).
// A corner the run has set `free` (the state slides along it) is decided even while holding.
class PieceChoices {
 public:
  // The piece a margin decides: past the corner above 0; `at_zero` at 0.
  static bool decide(double margin, bool at_zero) { return margin > 0.0 || (at_zero && margin == 0.0); }
  PieceChoices(unsigned char* choices, bool hold, const unsigned char* free = nullptr)
      : choices_(choices), free_(free), hold_(hold) {}
  // The choice at `slot` for a corner with this margin; `at_zero`: the choice when it is 0.
  bool past(int slot, double margin, bool at_zero = false) {
    if (!hold_ || (free_ && free_[slot])) choices_[slot] = decide(margin, at_zero);
    return choices_[slot] != 0;
  }
  // Whether the choice at `slot` is held.
  bool holds(int slot) const { return hold_ && !(free_ && free_[slot]); }

 private:
  unsigned char* choices_;
  const unsigned char* free_;
  bool hold_;
};

// The choice of a corner when there is no record (a device evaluated outside a circuit).
inline bool piece_past(PieceChoices* pieces, int slot, double margin, bool at_zero = false) {
  return pieces ? pieces->past(slot, margin, at_zero) : PieceChoices::decide(margin, at_zero);
}

// Read-only view of the unknowns one element sees at one instant.
class ElementContext {
 public:
  ElementContext(double time_s, const double* values, const double* rates, const int* map,
                 DelayedValues past = {}, PieceChoices* pieces = nullptr)
      : time_s_(time_s), values_(values), rates_(rates), map_(map), past_(past), pieces_(pieces) {}
  double time_s() const { return time_s_; }
  // Terminal voltage (V) or internal state value for a local index (ground reads 0).
  double value(int local) const { return map_[local] < 0 ? 0.0 : values_[map_[local]]; }
  // Time derivative of a local unknown; only valid inside Element::load_mass_slope.
  double rate(int local) const { return map_[local] < 0 ? 0.0 : rates_[map_[local]]; }
  // The element's recorded past (Element::history_channel_count), or null at a DC operating
  // point (the operating-point solve, or before a run).
  const DelayedValues* past() const { return past_.history ? &past_ : nullptr; }
  // The record of a piecewise-linear element's pieces (Element::piece_slot_count), or null.
  PieceChoices* pieces() const { return pieces_; }

 private:
  double time_s_;
  const double* values_;
  const double* rates_;
  const int* map_;
  DelayedValues past_;
  PieceChoices* pieces_;
};

// Where elements write their contributions (local indices, see above).
class Stamper {
 public:
  virtual ~Stamper() = default;
  virtual void add_flow(int row, double value) = 0;                      // f_row += value
  virtual void add_flow_slope(int row, int col, double value) = 0;       // ∂f_row/∂x_col
  virtual void add_flow_time_rate(int row, double value) = 0;            // ∂f_row/∂t (explicit)
  virtual void add_mass(int row, int col, double value) = 0;             // ∂q_row/∂x_col
  // ∂(Σ_j ∂q_row/∂x_j · ẋ_j)/∂x_col, for state-dependent capacitances (load_mass_slope only).
  virtual void add_mass_slope(int row, int col, double value) = 0;
  virtual void add_power(int channel, double value_W) = 0;
  virtual void add_power_slope(int channel, int col, double value) = 0;  // ∂P/∂x_col
  virtual void add_power_time_rate(int channel, double value) = 0;       // ∂P/∂t (explicit)
  // False when the slopes (flow, power, time rates; not the mass) are dropped — the Rosenbrock
  // stages need only the rates: an element may then skip computing them.
  virtual bool wants_slopes() const { return true; }
};

class Element {
 public:
  Element(std::string name, std::vector<std::string> terminal_nodes);
  virtual ~Element() = default;
  Element(const Element&) = delete;
  Element& operator=(const Element&) = delete;

  const std::string& name() const { return name_; }
  const std::vector<std::string>& terminals() const { return terminals_; }
  int terminal_count() const { return static_cast<int>(terminals_.size()); }

  // A word for messages and listings, e.g. "resistor".
  virtual std::string kind() const = 0;
  virtual std::vector<InternalStateSpec> internal_states() const { return {}; }
  virtual std::vector<PowerChannelSpec> power_channels() const { return {}; }
  // Adds f, ∂f/∂x, ∂f/∂t, ∂q/∂x and the channel powers at the context's instant.
  virtual void load(const ElementContext& ctx, Stamper& out) const = 0;
  // Only elements with state-dependent ∂q/∂x override this (see Stamper::add_mass_slope), and
  // they say so in has_mass_slope: the circuit calls load_mass_slope on those elements alone.
  virtual void load_mass_slope(const ElementContext& /*ctx*/, Stamper& /*out*/) const {}
  virtual bool has_mass_slope() const { return false; }
  // The element's junctions at the context's point (appended to `out`), for elements whose
  // has_junctions is true; see JunctionState.
  virtual bool has_junctions() const { return false; }
  virtual void junction_states(const ElementContext& /*ctx*/, std::vector<JunctionState>& /*out*/) const {}
  // A piecewise-linear element: how many corners it numbers in PieceChoices (0: a smooth one).
  virtual int piece_slot_count() const { return 0; }
  // Chooses its pieces at the context's point into ctx.pieces() (deciding), nothing else.
  virtual void choose_pieces(const ElementContext& /*ctx*/) const {}
  // Energy held in the element's fields (J): ½·C·v², ½·L·i², ½·m·v² ...
  virtual double stored_energy_J(const ElementContext& /*ctx*/) const { return 0.0; }
  // First instant strictly after t_s where the element's explicit time dependence has a corner.
  virtual double next_corner_after_s(double /*t_s*/) const;

  // Elements that read their own past (a transmission line): how many history channels they
  // record, the shortest delay at which they read them back (a run's steps never exceed it, so a
  // step reads only recorded points), and the channels' values and time rates at a point of a
  // run (ctx.rate valid there). Without a past (ctx.past() null) such an element is at its DC
  // operating point, and history_values gives the constant past of that point.
  virtual int history_channel_count() const { return 0; }
  virtual double shortest_delay_s() const { return std::numeric_limits<double>::infinity(); }
  virtual void history_values(const ElementContext& /*ctx*/, double* /*values*/, double* /*rates*/) const {}

 private:
  std::string name_;
  std::vector<std::string> terminals_;
};

}  // namespace coilkick::engine
