#include "coilkick/engine/operating_point.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/interrupt.hpp"
#include "coilkick/engine/small_lu.hpp"

namespace coilkick::engine {
namespace {

// The minimum conductance of every row: `gmin` on node rows, none on the others.
Eigen::VectorXd on_every_node(const Circuit& c, double gmin) {
  Eigen::VectorXd g = Eigen::VectorXd::Zero(c.circuit_state_count());
  for (int i = 0; i < g.size(); ++i) {
    if (c.is_node_row(i)) g[i] = gmin;
  }
  return g;
}

// Residual of the DC equations with each row's minimum conductance to ground.
void residual(const Circuit& c, const Workspace& w, const Eigen::VectorXd& x, const Eigen::VectorXd& gmin,
              Eigen::VectorXd& r) {
  r = w.flow.head(c.circuit_state_count()) - gmin.cwiseProduct(x);
}

// Node rows are currents (A), the others volts or element units: weigh 1 mA like 1 V.
double weighted_norm(const Circuit& c, const Eigen::VectorXd& r) {
  double s = 0.0;
  for (int i = 0; i < r.size(); ++i) {
    const double v = c.is_node_row(i) ? 1e3 * r[i] : r[i];
    s += v * v;
  }
  return std::sqrt(s);
}

// Each state's own tolerance: volts, amperes, or the element's declared unit.
double state_tolerance(const Circuit& c, int i, const OperatingPointOptions& o) {
  const auto& info = c.states()[static_cast<std::size_t>(i)];
  return info.kind == StateKind::node_voltage ? o.voltage_tolerance_V
         : info.kind == StateKind::branch_current ? o.current_tolerance_A
                                                  : info.absolute_tolerance;
}

// Each row's own scale: Σ_j |∂f_i/∂x_j|·max(|x_j|, tol_j), what row i changes by when every
// state moves by its own size — amperes for a node, newtons for an armature's force balance.
// Residuals are judged against it, so a balance of 1e-18 N (a 1 nH, 1 MΩ coil's armature) counts
// as much as a node's milliamperes, and neither hides behind the other's round-off.
Eigen::VectorXd row_scales(const Circuit& c, const Eigen::MatrixXd& g, const Eigen::VectorXd& x, const OperatingPointOptions& o) {
  const int n = static_cast<int>(x.size());
  Eigen::VectorXd s(n);
  for (int i = 0; i < n; ++i) {
    double scale = 0.0;
    for (int j = 0; j < n; ++j) scale += std::abs(g(i, j)) * std::max(std::abs(x[j]), state_tolerance(c, j, o));
    s[i] = std::max(scale, 1e-300);
  }
  return s;
}

double relative_norm(const Eigen::VectorXd& r, const Eigen::VectorXd& scale) { return r.cwiseQuotient(scale).norm(); }

// Every residual at the round-off of its own row (within 1e-11 of its scale): Newton cannot
// improve on that, every evaluation is that noisy.
bool residual_at_round_off(const Eigen::VectorXd& r, const Eigen::VectorXd& scale) {
  return r.cwiseQuotient(scale).cwiseAbs().maxCoeff() <= 1e-11;
}

// A Newton iteration that reduces the residual by less than 1 % ten times in a row has stalled.
constexpr double kStalledReduction = 1e-2;
constexpr int kStalledIterations = 10;

// How far along a Newton step its pieces are probed when the step finds no descent (a pwl corner).
constexpr double kCornerProbe = 1e-6;

// Nothing left to balance: node rows within a thousandth of the current tolerance (femtoamperes
// by default) or 1e-8 of their row's scale (what the row changes by when its states move by 1e-8
// of their size), every other row at its round-off.
bool negligible_residual(const Circuit& c, const Eigen::VectorXd& r, const Eigen::VectorXd& scale, const OperatingPointOptions& o) {
  for (int i = 0; i < r.size(); ++i) {
    const bool ok = c.is_node_row(i) ? std::abs(r[i]) <= std::max(1e-3 * o.current_tolerance_A, 1e-8 * scale[i])
                                     : std::abs(r[i]) <= 1e-11 * scale[i];
    if (!ok) return false;
  }
  return true;
}

// The Newton step −G⁻¹·r by partial pivoting (small_lu: a third of full pivoting's work at these
// sizes); where that meets an exactly zero pivot, full pivoting decides. Only an exactly zero
// pivot is singular: the minimum conductances (1e-12 S) of floating nodes sit many decades below
// the largest conductances and must still count.
Eigen::VectorXd newton_step(const Eigen::MatrixXd& g, const Eigen::VectorXd& r, double t) {
  SmallLu lu;
  lu.compute(g);
  Eigen::VectorXd dx = -r;
  lu.solve_in_place(dx);
  if (dx.allFinite()) return dx;
  Eigen::FullPivLU<Eigen::MatrixXd> full(g);
  full.setThreshold(1e-300);
  if (!full.isInvertible()) {
    throw OperatingPointError("operating point at t = " + std::to_string(t) + " s: the conductance matrix is singular (a state has no DC path)");
  }
  return full.solve(-r);
}

// How far along the Newton step dx the junctions ask to go: a forward junction high on its
// exponential (a node between a reverse diode and a Zener from a cold guess, the Zener's forward
// voltage a volt too high) is walked down by Newton one log-slope s per iteration (the step
// predicts the current I·(1 + Δv/s) and lands where the exponential has I/e), while the voltage
// that carries the predicted current lies s·ln(1 + Δv/s) away — the junction-voltage limiting
// of the circuit-simulation literature (from memory), here taken downwards. The factor is the
// smallest such ratio over the junctions the step moves down by at least s/2; 1 when a
// junction on its exponential would rise (the backtracking then guards it), when none moves down
// so far, or when any state those junctions do not join still moves by more than its tolerance
// (`moving`): the extension is for the last stretch, where only such a node is left to settle.
// At most kLongestExtension. Derivation: docs/derivations.md, "A junction walked down".
constexpr double kLongestExtension = 64.0;
double junction_extension(const std::vector<CircuitJunction>& junctions, const Eigen::VectorXd& dx,
                          std::vector<char>& moving) {
  double factor = kLongestExtension;
  bool any = false;
  for (const auto& j : junctions) {
    if (!j.exponential) continue;
    const double dv = (j.anode >= 0 ? dx[j.anode] : 0.0) - (j.cathode >= 0 ? dx[j.cathode] : 0.0);
    const double s = j.log_slope_V;
    if (dv > -0.5 * s) {
      if (dv > 1e-3 * s) return 1.0;
      continue;
    }
    // The current the step predicts, over the present one; at or below zero (the linear model
    // reverses the junction, or its ratio is below the rounding of 1 + Δv/s) no target voltage.
    const double predicted = 1.0 + dv / s;
    if (!(predicted > 0.0)) return 1.0;
    factor = std::min(factor, s * std::log(predicted) / dv);
    any = true;
    if (j.anode >= 0) moving[static_cast<std::size_t>(j.anode)] = 0;
    if (j.cathode >= 0) moving[static_cast<std::size_t>(j.cathode)] = 0;
  }
  for (const char m : moving) {
    if (m) return 1.0;
  }
  return any ? std::max(1.0, factor) : 1.0;
}

// Newton with backtracking from the guess, row i with the minimum conductance gmin[i] to ground;
// throws SimulationError if it does not converge.
CircuitState newton(const Circuit& circuit, const CircuitState& guess, const OperatingPointOptions& options,
                    const Eigen::VectorXd& gmin) {
  check_state(circuit, guess);
  const int nc = circuit.circuit_state_count();
  const double t = guess.time_s;
  Workspace w = circuit.make_workspace();
  w.operating_point = true;
  Eigen::VectorXd x = guess.values;
  x.tail(x.size() - nc).setZero();
  Eigen::VectorXd r, r_try, x_try;
  std::vector<CircuitJunction> junctions;
  std::vector<char> moving;
  Eigen::VectorXd probe;
  int crawling = 0;  // shortened steps in a row that stayed on their pieces (pwl)
  circuit.assemble(t, t, x.data(), w);
  std::vector<unsigned char> pieces_of_x = w.pieces;
  residual(circuit, w, x.head(nc), gmin, r);
  double norm = 0.0;  // relative to the row scales, set in each iteration
  int stalled = 0;    // iterations in a row that reduced the residual by less than kStalledReduction
  for (int it = 0; it < options.maximum_iterations; ++it) {
    throw_if_interrupted();
    Eigen::MatrixXd g = w.flow_slope.topLeftCorner(nc, nc);
    g.diagonal() -= gmin;
    const Eigen::VectorXd dx = newton_step(g, r, t);
    const Eigen::VectorXd scale = row_scales(circuit, g, x.head(nc), options);
    norm = relative_norm(r, scale);
    bool small = true;
    for (int i = 0; i < nc; ++i) {
      const double tol = state_tolerance(circuit, i, options) + options.relative_tolerance * std::abs(x[i]);
      small = small && std::abs(dx[i]) <= tol;
    }
    // Converged: the Newton step is within every state's tolerance, or every residual is at the
    // round-off of its own row (a state whose scale is far below its absolute tolerance's, such
    // as an armature held by micronewtons, then still has an exact balance).
    if (small || residual_at_round_off(r, scale)) {
      CircuitState out;
      out.time_s = t;
      out.values = x;
      out.values.head(nc) += dx;
      return out;
    }
    // The junctions' extension of the step, tried first; then backtracking: halve the step
    // until the weighted residual decreases.
    double extension = 1.0;
    if (circuit.has_junctions()) {
      circuit.junctions_at(t, x.data(), w, junctions);
      moving.assign(static_cast<std::size_t>(nc), 0);
      for (int i = 0; i < nc; ++i) {
        moving[static_cast<std::size_t>(i)] = std::abs(dx[i]) > state_tolerance(circuit, i, options) + options.relative_tolerance * std::abs(x[i]);
      }
      extension = junction_extension(junctions, dx, moving);
    }
    // The first try is usually taken: it assembles the slopes the next iteration needs; a
    // shorter step's try assembles the residual alone (the same values), and the point taken
    // gets its slopes afterwards.
    double norm_try = 0.0;
    bool with_slopes = true;
    // A shortened step of a pwl circuit stopped short of a corner: on its pieces the residual
    // falls linearly along the step up to the first corner and the refused λ lies past it. Halving
    // alone takes it at most half way there each iteration, every iteration on the same pieces and
    // the same step, never across (measured: a cold pwl on-state crawled 100 iterations, ~30
    // evaluations each, at one residual). The corner is located between the λ
    // taken and the λ refused by bisection on the pieces the elements choose (no evaluation of
    // the circuit), and the point just past it is taken where its residual is the lower: the next
    // iteration's slopes are those of the pieces beyond. (The piecewise-linear path of Katzenelson,
    // "An algorithm for solving nonlinear resistor networks", Bell Syst. Tech. J. 44 (1965),
    // crosses one corner per step the same way.)
    auto cross_corner = [&](const Eigen::VectorXd& step, double taken, double refused) {
      if (!(refused > taken)) return;
      auto pieces_at = [&](double lambda) {
        probe = x;
        probe.head(nc) += lambda * step;
        circuit.choose_pieces(t, probe.data(), w);
        return w.pieces;
      };
      const std::vector<unsigned char> near = pieces_at(taken);
      if (pieces_at(refused) == near) return;
      double lo = taken, hi = refused;
      for (int k = 0; k < 60 && hi - lo > 1e-12 * hi; ++k) {
        const double mid = 0.5 * (lo + hi);
        if (!(mid > lo && mid < hi)) break;
        (pieces_at(mid) == near ? lo : hi) = mid;
      }
      Eigen::VectorXd x_past = x;
      x_past.head(nc) += hi * step;
      circuit.assemble(t, t, x_past.data(), w, true);
      Eigen::VectorXd r_past;
      residual(circuit, w, x_past.head(nc), gmin, r_past);
      const double norm_past = relative_norm(r_past, scale);
      if (std::isfinite(norm_past) && norm_past < norm_try) {
        x_try = x_past;
        r_try = r_past;
        norm_try = norm_past;
        with_slopes = true;
      }
      // (Otherwise the point taken keeps its residual; it is assembled again below.)
    };
    auto search = [&](const Eigen::VectorXd& step, double lambda) {
      double rejected = 0.0;  // the last λ tried and refused
      for (int k = 0; k < 30; ++k) {
        x_try = x;
        x_try.head(nc) += lambda * step;
        with_slopes = k == 0;
        circuit.assemble(t, t, x_try.data(), w, with_slopes);
        residual(circuit, w, x_try.head(nc), gmin, r_try);
        norm_try = relative_norm(r_try, scale);
        if (std::isfinite(norm_try) && norm_try <= norm * (1.0 - 1e-4 * std::min(lambda, 1.0))) {
          // A crawl: a shortened step that stays on the pieces it started from, the second in a
          // row (one such step is ordinary; crossing on it can set Newton circling between
          // corners whose row scales differ — measured on a pwl Darlington board).
          crawling = k > 0 && w.pieces == pieces_of_x ? crawling + 1 : 0;
          if (crawling >= 2 && circuit.piece_slot_count() > 0) cross_corner(step, lambda, rejected);
          return true;
        }
        rejected = lambda;
        lambda = lambda > 1.0 ? 1.0 : 0.5 * lambda;
      }
      return false;
    };
    if (!search(dx, extension > 1.0 ? extension : 1.0) && circuit.piece_slot_count() > 0) {
      // No descent along the step: x sits on a pwl corner whose other side the step enters,
      // and the slopes of this side predict it wrongly. Slopes of the pieces a hair along the
      // step (held at x: the curves are continuous, the residual the same), and their step.
      probe = x;
      probe.head(nc) += kCornerProbe * dx;
      circuit.choose_pieces(t, probe.data(), w);
      w.hold_pieces = true;
      circuit.assemble(t, t, x.data(), w);
      w.hold_pieces = false;
      Eigen::MatrixXd g_past = w.flow_slope.topLeftCorner(nc, nc);
      g_past.diagonal() -= gmin;
      search(newton_step(g_past, r, t), 1.0);
    }
    if (!with_slopes) circuit.assemble(t, t, x_try.data(), w);
    pieces_of_x = w.pieces;
    stalled = norm_try > (1.0 - kStalledReduction) * norm ? stalled + 1 : 0;
    x = x_try;
    r = r_try;
    norm = norm_try;
    // Stalled where nothing is left to balance (negligible_residual). A board whose supply is cut
    // (a fault) has nodes held by picoamperes of junction leakage through near-singular
    // conductances: a node keeps ~1e-17 A that no Newton step removes, the line search weighs it
    // against a row scale of a picoampere per volt, and the step it asks for would move a
    // floating rail by tens of millivolts — Newton crawls there for all its iterations.
    if (stalled >= kStalledIterations && negligible_residual(circuit, r, scale, options)) {
      CircuitState out;
      out.time_s = t;
      out.values = x;
      return out;
    }
  }
  // Name the row furthest from balance relative to its own scale.
  circuit.assemble(t, t, x.data(), w);
  const Eigen::VectorXd scale = row_scales(circuit, w.flow_slope.topLeftCorner(nc, nc), x.head(nc), options);
  int worst = 0;
  for (int i = 1; i < nc; ++i) {
    if (std::abs(r[i] / scale[i]) > std::abs(r[worst] / scale[worst])) worst = i;
  }
  std::ostringstream m;
  m << "operating point at t = " << t << " s did not converge in " << options.maximum_iterations
    << " Newton iterations; the residual furthest from balance is in '"
    << circuit.states()[static_cast<std::size_t>(worst)].name << "' (" << r[worst] << ", " << std::abs(r[worst] / scale[worst])
    << " of its row's scale)";
  throw OperatingPointError(m.str());
}

// Pseudo-transient continuation: implicit-Euler steps of M·ẋ = f with the sources frozen at
// t, the step growing as the residual falls (switched evolution relaxation). The capacitances
// and inductances damp the path a plain Newton iteration would take; used when Newton fails.
Eigen::VectorXd pseudo_transient(const Circuit& circuit, double t, Eigen::VectorXd x, double minimum_conductance_S, Workspace& w) {
  const int nc = circuit.circuit_state_count();
  const Eigen::VectorXd gmin = on_every_node(circuit, minimum_conductance_S);
  Eigen::VectorXd r;
  circuit.assemble(t, t, x.data(), w);
  residual(circuit, w, x.head(nc), gmin, r);
  double norm = weighted_norm(circuit, r);
  double dt = 1e-10;
  constexpr double kLargestNodeMove = 0.5;  // V per step
  Eigen::VectorXd limit = Eigen::VectorXd::Constant(nc, kLargestNodeMove), last_dx = Eigen::VectorXd::Zero(nc);
  for (int it = 0; it < 5000 && norm > 1e-12; ++it) {
    Eigen::MatrixXd a = w.mass.topLeftCorner(nc, nc) / dt - w.flow_slope.topLeftCorner(nc, nc);
    a.diagonal() += gmin;
    Eigen::VectorXd dx = a.partialPivLu().solve(r);
    // Node voltages move at most 0.5 V per step: the junctions' exponentials stay tractable. A
    // node whose step reverses its last one has that limit halved (grown back by half per step
    // that goes on): at the 0.5 V limit a node can circle its solution for good — a pwl
    // Darlington's output swinging between its saturation and active lines, ±0.5 V about it.
    double scale = 1.0;
    for (int i = 0; i < nc; ++i) {
      if (!circuit.is_node_row(i)) continue;
      limit[i] = dx[i] * last_dx[i] < 0.0 ? 0.5 * limit[i] : std::min(kLargestNodeMove, 1.5 * limit[i]);
      if (std::abs(dx[i]) > limit[i]) scale = std::min(scale, limit[i] / std::abs(dx[i]));
    }
    dx *= scale;
    last_dx = dx;
    Eigen::VectorXd x_try = x;
    x_try.head(nc) += dx;
    circuit.assemble(t, t, x_try.data(), w);
    Eigen::VectorXd r_try;
    residual(circuit, w, x_try.head(nc), gmin, r_try);
    const double norm_try = weighted_norm(circuit, r_try);
    // Every finite step is a linearised implicit-Euler step of the circuit's own (stable)
    // dynamics: accept it even when the residual rises on the way; grow the step as it falls.
    if (dx.allFinite() && std::isfinite(norm_try)) {
      dt *= norm_try < norm ? 2.0 : 1.2;
      dt = std::min(dt, 1e3);
      x = x_try;
      r = r_try;
      norm = norm_try;
    } else {
      dt *= 0.25;
      circuit.assemble(t, t, x.data(), w);
      if (dt < 1e-20) break;
    }
  }
  return x;
}

// The minimum conductance where a node needs it at the point x: on the nodes of the conductance
// matrix's null space without it (a node between two capacitors, a pair of nodes joined only to
// each other: their exactly zero pivots), none elsewhere.
Eigen::VectorXd where_needed(const Circuit& circuit, const CircuitState& x, double gmin) {
  const int nc = circuit.circuit_state_count();
  Workspace w = circuit.make_workspace();
  w.operating_point = true;
  circuit.assemble(x.time_s, x.time_s, x.values.data(), w);
  Eigen::FullPivLU<Eigen::MatrixXd> lu(w.flow_slope.topLeftCorner(nc, nc));
  lu.setThreshold(1e-300);  // only exact zeros: conductances of 1e-12 S are paths
  Eigen::VectorXd g = Eigen::VectorXd::Zero(nc);
  if (lu.dimensionOfKernel() == 0) return g;
  const Eigen::MatrixXd kernel = lu.kernel();
  for (Eigen::Index k = 0; k < kernel.cols(); ++k) {
    const double largest = kernel.col(k).cwiseAbs().maxCoeff();
    for (int i = 0; i < nc; ++i) {
      if (circuit.is_node_row(i) && std::abs(kernel(i, k)) > 1e-9 * largest) g[i] = gmin;
    }
  }
  return g;
}

// The point with the nodes' minimum conductance taken out again where the circuit has a DC path
// without it: the transient has no such conductance, and a node balanced only by leakage (a
// junction at its knee; a divider of teraohms) sits elsewhere without it — the run then starts
// drifting at tens of V/s, a dozen steps over what should be a stationary on-state. A few Newton
// iterations from the point found; if they do not converge, the point as found.
CircuitState without_node_conductance(const Circuit& circuit, const CircuitState& found, const OperatingPointOptions& options) {
  if (options.minimum_conductance_S == 0.0) return found;
  OperatingPointOptions polish = options;
  polish.maximum_iterations = 8;
  try {
    return newton(circuit, found, polish, where_needed(circuit, found, options.minimum_conductance_S));
  } catch (const SimulationError&) {
    return found;
  }
}

}  // namespace

CircuitState solve_operating_point(const Circuit& circuit, double time_s,
                                   const OperatingPointOptions& options) {
  return solve_operating_point(circuit, guess_state(circuit, time_s), options);
}

CircuitState solve_operating_point(const Circuit& circuit, const CircuitState& guess,
                                   const OperatingPointOptions& options) {
  try {
    return without_node_conductance(circuit, solve_by_newton(circuit, guess, options), options);
  } catch (const SimulationError& newton_failed) {
    Workspace w = circuit.make_workspace();
    w.operating_point = true;
    CircuitState start = guess;
    start.values = pseudo_transient(circuit, guess.time_s, guess.values, options.minimum_conductance_S, w);
    try {
      return without_node_conductance(circuit, solve_by_newton(circuit, start, options), options);
    } catch (const SimulationError&) {
      throw OperatingPointError(std::string(newton_failed.what()) + "; a pseudo-transient continuation did not reach it either");
    }
  }
}

CircuitState solve_by_newton(const Circuit& circuit, const CircuitState& guess,
                             const OperatingPointOptions& options) {
  return newton(circuit, guess, options, on_every_node(circuit, options.minimum_conductance_S));
}

}  // namespace coilkick::engine
