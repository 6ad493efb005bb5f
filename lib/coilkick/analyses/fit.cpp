#include "coilkick/analyses/fit.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "coilkick/drivers/on_state.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/drivers/switch_on.hpp"
#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/probe.hpp"

namespace coilkick::analyses {
namespace {

constexpr std::size_t kNoiseSamples = 16;

// A run of the model: its transient, the switch voltage at any time, and the drive edge's start.
struct ModelRun {
  drivers::BuiltDriver built;
  std::shared_ptr<const engine::TransientResult> transient;
  double drive_edge_s = 0.0;
  double drive_ramp_s = 0.0;  // the drive edge's fall or rise time
  double make_time_s = std::nan("");
  double switch_voltage(double t) const {
    const Eigen::VectorXd x = transient->sample(t);
    return drivers::switch_voltage_V(built, transient->circuit(), t, x.data());
  }
};

ModelRun run_model(const scenario::Scenario& s, const catalogue::Catalogue& parts, CaptureEdge edge, double span_s) {
  ModelRun m{drivers::build_driver_network(s.driver, parts), nullptr};  // bad values: invalid_argument
  m.drive_edge_s = s.driver.drive.switch_off_at_s;
  m.drive_ramp_s = edge == CaptureEdge::switch_off ? s.driver.drive.fall_time_s : s.driver.drive.rise_time_s;
  if (edge == CaptureEdge::switch_off) {
    m.transient = drivers::simulate_switch_off(s.driver, m.built).transient;
  } else {
    auto on = drivers::simulate_switch_on(s.driver, m.built, span_s);
    m.transient = on.transient;
    m.make_time_s = on.make_time_s;
  }
  return m;
}

// The model's edge by the capture's rule (edge_time_s), after the start of its drive edge. The
// drive is a straight ramp: half way at half its fall (switch-off) or rise (switch-on) time. The
// switch voltage: on the recorded points, then by bisection on the dense output.
double model_edge_time(const ModelRun& m, EdgeAlignment alignment) {
  if (alignment == EdgeAlignment::drive) return 0.5 * m.drive_ramp_s;
  const auto& tr = *m.transient;
  const std::vector<double>& t = tr.times_s();
  std::vector<double> v(t.size());
  for (std::size_t k = 0; k < t.size(); ++k) {
    v[k] = drivers::switch_voltage_V(m.built, tr.circuit(), t[k], tr.states().row(static_cast<Eigen::Index>(k)).data());
  }
  const double rough = scenario::edge_time_s(t, v);
  if (std::isnan(rough)) throw engine::SimulationError("fit: the model's switch voltage never moves: no edge to align with");
  const scenario::EdgeLevel e = scenario::edge_level(v);
  const auto k = static_cast<std::size_t>(std::upper_bound(t.begin(), t.end(), rough) - t.begin());
  double lo = t[std::max<std::size_t>(k, 1) - 1], hi = t[std::min(k, t.size() - 1)];
  for (int it = 0; it < 200 && hi - lo > 1e-15 * std::max(1.0, hi); ++it) {
    const double mid = 0.5 * (lo + hi);
    (e.direction * (m.switch_voltage(mid) - e.level) < 0.0 ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi) - m.drive_edge_s;
}

// with_voltage: the switch voltage at each time too (a fit's residuals need only the current).
ModelTrace trace_of(const ModelRun& m, const std::vector<double>& times_after_edge_s, EdgeAlignment alignment, bool with_voltage = true) {
  const auto& tr = *m.transient;
  ModelTrace out;
  out.edge_time_s = model_edge_time(m, alignment);
  out.make_time_s = m.make_time_s;
  // What a shunt in series with the coil measures: the current through its terminals, the
  // winding's and the core loss's (which a stiff clamp's voltage drives). The coil element
  // holds no charge, so its terminal current reads no rates.
  const engine::Probe coil = engine::Probe::element_current(tr.circuit(), "coil", 0);
  const std::vector<double> no_rates(static_cast<std::size_t>(tr.circuit().state_count()), 0.0);
  out.current_A.reserve(times_after_edge_s.size());
  out.voltage_V.reserve(times_after_edge_s.size());
  Eigen::VectorXd x(tr.circuit().state_count());
  for (double ta : times_after_edge_s) {
    const double t = std::clamp(m.drive_edge_s + out.edge_time_s + ta, tr.start_time_s(), tr.end_time_s());
    tr.sample(t, x.data());
    out.current_A.push_back(coil(t, x.data(), no_rates.data()));
    if (with_voltage) out.voltage_V.push_back(drivers::switch_voltage_V(m.built, tr.circuit(), t, x.data()));
  }
  return out;
}

double span_after_edge(const std::vector<double>& times_after_edge_s) {
  double last = 0.0;
  for (double t : times_after_edge_s) last = std::max(last, t);
  // The switch-voltage edge comes after the drive edge's start by the driver's turn-on delay:
  // a switch-on run goes on a little past the last time (a later sample reads the run's end).
  return 1.05 * last + 1e-4;
}

// The contact signal's change (half way from its first value to its last) and the measured
// current there.
void read_contact(const scenario::Capture& c, const std::vector<double>& t_after, CaptureFit& out) {
  out.measured_release_current_A = std::nan("");
  out.measured_contact_time_s = std::nan("");
  if (c.contact.empty()) return;
  const double a = c.contact.front(), b = c.contact.back();
  if (!(std::abs(b - a) > 0.0)) return;
  const double level = 0.5 * (a + b);
  for (std::size_t k = 1; k < c.contact.size(); ++k) {
    if ((c.contact[k] - level) * (b - a) < 0.0) continue;
    const double f = (level - c.contact[k - 1]) / (c.contact[k] - c.contact[k - 1]);
    out.measured_contact_time_s = t_after[k - 1] + f * (t_after[k] - t_after[k - 1]);
    out.measured_release_current_A = c.current_A[k - 1] + f * (c.current_A[k] - c.current_A[k - 1]);
    return;
  }
}

// With the armature model the reader froze the coil's resistance and inductance into the relay's
// data sheet, and the magnet is calibrated from those (drivers::freeze_relay_datasheet): the
// armature's coil takes its inductance from the magnet alone. A fitted coil is that data sheet,
// so a fitted coil.inductance or coil.resistance goes there too.
void set_fitted_keys(scenario::Scenario& c, const catalogue::Catalogue& parts, const std::vector<std::string>& keys, const Eigen::VectorXd& x) {
  for (std::size_t k = 0; k < keys.size(); ++k) {
    const double v = x[static_cast<Eigen::Index>(k)];
    scenario::set_numeric_key(c, keys[k], v, parts);
    if (!c.driver.relay.armature_model) continue;
    if (keys[k] == "coil.inductance") c.driver.relay.closed_inductance_H = v;
    if (keys[k] == "coil.resistance") c.driver.relay.resistance_at_20C_ohm = v;
  }
}

}  // namespace

const char* to_string(CaptureEdge e) { return e == CaptureEdge::switch_off ? "switch-off" : "switch-on"; }

CaptureEdge capture_edge(const scenario::Capture& c) {
  // The drive falls to switch off and rises to switch on; the switch voltage does the opposite.
  const bool drive = !c.drive_V.empty();
  const auto& v = drive ? c.drive_V : c.voltage_V;
  if (v.empty()) throw std::invalid_argument("capture: no switch-voltage or drive channel to tell the edge from");
  const int direction = scenario::edge_level(v).direction;
  if (direction == 0) {
    throw std::invalid_argument(std::string("capture: the ") + (drive ? "drive" : "switch voltage") +
                                " never moves: neither a switch-off nor a switch-on");
  }
  return (direction > 0) != drive ? CaptureEdge::switch_off : CaptureEdge::switch_on;
}

ModelTrace model_trace(const scenario::Scenario& s, const catalogue::Catalogue& parts, CaptureEdge edge,
                       const std::vector<double>& times_after_edge_s, EdgeAlignment alignment) {
  return trace_of(run_model(s, parts, edge, span_after_edge(times_after_edge_s)), times_after_edge_s, alignment);
}

EdgeAlignment capture_alignment(const scenario::Capture& c) { return c.drive_V.empty() ? EdgeAlignment::switch_voltage : EdgeAlignment::drive; }

double capture_edge_time_s(const scenario::Capture& c) {
  return scenario::edge_time_s(c.time_s, capture_alignment(c) == EdgeAlignment::drive ? c.drive_V : c.voltage_V);
}

const char* to_string(EdgeAlignment a) { return a == EdgeAlignment::drive ? "drive" : "switch-voltage"; }

std::vector<std::string> default_fit_keys(const scenario::Scenario& s, CaptureEdge edge) {
  std::vector<std::string> keys{"coil.inductance"};
  if (edge == CaptureEdge::switch_off) {
    if (std::isfinite(s.driver.coil.core_loss_resistance_ohm)) keys.emplace_back("coil.core_loss_resistance");
    if (s.driver.relay.armature_model && std::isfinite(s.driver.relay.release_time_s)) keys.emplace_back("relay.release_time");
  } else {
    keys.emplace_back("coil.resistance");
    if (s.driver.relay.armature_model && std::isfinite(s.driver.relay.operate_time_s)) keys.emplace_back("relay.operate_time");
  }
  return keys;
}

double current_noise_before_edge_A(const scenario::Capture& c) {
  const double t_edge = capture_edge_time_s(c);
  if (std::isnan(t_edge) || c.current_A.empty()) return std::nan("");
  double sum = 0.0, sum2 = 0.0;
  std::size_t n = 0;
  for (std::size_t k = 0; k < c.time_s.size() && c.time_s[k] < t_edge; ++k, ++n) sum += c.current_A[k];
  if (n < kNoiseSamples) return std::nan("");
  const double mean = sum / static_cast<double>(n);
  for (std::size_t k = 0; k < n; ++k) sum2 += (c.current_A[k] - mean) * (c.current_A[k] - mean);
  return std::sqrt(sum2 / static_cast<double>(n - 1));
}

CaptureFit fit_capture(const scenario::Scenario& s, const catalogue::Catalogue& parts, const scenario::Capture& capture,
                       const std::vector<std::string>& keys, const FitOptions& options) {
  if (keys.empty()) throw std::invalid_argument("fit: no keys to fit");
  if (capture.current_A.empty() || (capture.voltage_V.empty() && capture.drive_V.empty())) {
    throw std::invalid_argument("fit: the capture needs a current channel and a switch-voltage or drive channel");
  }
  // A capture made in a program rather than read from a file (which checks the same).
  auto fits = [&](const std::vector<double>& v) { return v.empty() || v.size() == capture.time_s.size(); };
  if (capture.current_A.size() != capture.time_s.size() || !fits(capture.voltage_V) || !fits(capture.contact) || !fits(capture.drive_V)) {
    throw std::invalid_argument("fit: the capture's columns differ in length");
  }
  for (std::size_t k = 1; k < capture.time_s.size(); ++k) {
    if (!(capture.time_s[k] > capture.time_s[k - 1])) {
      throw std::invalid_argument("fit: the capture's time does not increase at row " + std::to_string(k));
    }
  }
  CaptureFit out;
  out.edge = capture_edge(capture);
  out.alignment = capture_alignment(capture);
  out.keys = keys;
  out.current_noise_A = options.current_noise_A > 0.0 ? options.current_noise_A : current_noise_before_edge_A(capture);
  if (!(out.current_noise_A > 0.0) || !std::isfinite(out.current_noise_A)) {
    throw std::invalid_argument("fit: the current's noise is not known: give it (the capture has fewer than 16 steady samples before its edge)");
  }
  const double t_edge_capture = capture_edge_time_s(capture);
  if (std::isnan(t_edge_capture)) throw std::invalid_argument(std::string("fit: the capture's ") + to_string(out.alignment) + " channel has no edge to align with");
  for (double t : capture.time_s) out.time_after_edge_s.push_back(t - t_edge_capture);
  const auto n = static_cast<Eigen::Index>(keys.size());
  // The keys, and last the time shift between capture and model: the edges are found on samples
  // (a scope's few per microsecond against an edge of a fraction of one), and a shift of a
  // microsecond moves every sample after the edge by di/dt·1 µs — fitted, it costs no bias.
  const double dt = (capture.time_s.back() - capture.time_s.front()) / static_cast<double>(capture.time_s.size() - 1);
  LeastSquaresProblem p;
  p.initial.resize(n + 1);
  p.scale.resize(n + 1);
  for (Eigen::Index k = 0; k < n; ++k) {
    p.initial[k] = scenario::numeric_key_value(s, keys[static_cast<std::size_t>(k)]);
    if (!std::isfinite(p.initial[k])) {
      throw std::invalid_argument("fit: key '" + keys[static_cast<std::size_t>(k)] + "' has no finite value in the scenario to start from");
    }
    p.scale[k] = p.initial[k] != 0.0 ? std::abs(p.initial[k]) : 1.0;
    out.start_values.push_back(p.initial[k]);
  }
  p.initial[n] = 0.0;
  p.scale[n] = dt;
  const double span = span_after_edge(out.time_after_edge_s);
  auto at = [&](const Eigen::VectorXd& x) {
    scenario::Scenario c = s;
    set_fitted_keys(c, parts, keys, x);
    std::vector<double> shifted(out.time_after_edge_s);
    for (double& t : shifted) t += x[n];
    return trace_of(run_model(c, parts, out.edge, span), shifted, out.alignment, false);
  };
  p.residuals = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
    const auto m = at(x);
    r.resize(static_cast<Eigen::Index>(m.current_A.size()));
    for (std::size_t k = 0; k < m.current_A.size(); ++k) {
      r[static_cast<Eigen::Index>(k)] = (m.current_A[k] - capture.current_A[k]) / out.current_noise_A;
    }
  };
  LeastSquaresOptions lo;
  lo.on_iteration = options.on_iteration;
  // The residuals are weighted by the noise: a fall of the sum by less than 1e-3 moves the
  // parameters by a few hundredths of their standard errors (the sum rises by 1 at 1σ).
  lo.absolute_reduction_tolerance = 1e-3;
  // Difference steps well above the engine's error: a step of 1e-6 of a weakly seen key (a core
  // loss resistance) moves the current by less than the integration's own tolerance, and the
  // Jacobian — and so the standard errors — would be that noise. 1e-4 keeps the truncation error
  // of the forward difference (second order in the step) far below the statistical error.
  lo.difference_step = 1e-3;
  out.result = levenberg_marquardt(p, lo);
  if (!out.result.converged) throw engine::SimulationError("fit: " + out.result.message);
  const auto best = at(out.result.parameters);
  out.model_current_A = best.current_A;
  out.model_make_time_s = best.make_time_s;
  out.time_shift_s = out.result.parameters[n];
  out.time_shift_error_s = out.result.standard_errors[n];
  for (Eigen::Index k = 0; k < n; ++k) {
    const double se = out.result.standard_errors[k];
    if (!(se < std::abs(out.result.parameters[k]))) out.undetermined.push_back(keys[static_cast<std::size_t>(k)]);
  }
  if (out.edge == CaptureEdge::switch_on) {
    out.measured_motion = find_armature_motion(out.time_after_edge_s, capture.current_A, out.current_noise_A);
    out.model_motion = find_armature_motion(out.time_after_edge_s, out.model_current_A, 0.0);
  }
  read_contact(capture, out.time_after_edge_s, out);
  return out;
}

scenario::Scenario fitted_scenario(const scenario::Scenario& s, const catalogue::Catalogue& parts, const CaptureFit& fit) {
  scenario::Scenario c = s;
  set_fitted_keys(c, parts, fit.keys, fit.result.parameters);
  return c;
}

}  // namespace coilkick::analyses
