#include "coilkick/analyses/fit.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "coilkick/drivers/on_state.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/engine/errors.hpp"

namespace coilkick::analyses {
namespace {

// The same point of the model's switch voltage, on its dense output (bisection in the
// accepted step where the recorded points cross it).
double model_half_way_time(const drivers::BuiltDriver& b, const drivers::SwitchOffResult& run) {
  const auto& w = run.waveforms;
  const auto& tr = *run.transient;
  const double v0 = w.switch_voltage_V[0];
  const double level = v0 + 0.5 * (run.metrics.get("switch_voltage_peak_V") - v0);
  auto v_at = [&](double t) {
    const Eigen::VectorXd x = tr.sample(t);
    return drivers::switch_voltage_V(b, tr.circuit(), t, x.data());
  };
  for (Eigen::Index k = 1; k < w.time_s.size(); ++k) {
    if (w.switch_voltage_V[k] < level) continue;
    double lo = w.time_s[k - 1], hi = w.time_s[k];
    for (int it = 0; it < 200 && hi - lo > 1e-15 * std::max(1.0, hi); ++it) {
      const double mid = 0.5 * (lo + hi);
      (v_at(mid) < level ? lo : hi) = mid;
    }
    return 0.5 * (lo + hi);
  }
  throw engine::SimulationError("fit: the model's switch voltage never rises half way to its peak");
}

}  // namespace

SwitchOffFit fit_switch_off(const scenario::Scenario& s, const catalogue::Catalogue& parts, const scenario::Capture& capture,
                            const std::vector<std::string>& keys, double current_noise_A) {
  if (keys.empty()) throw std::invalid_argument("fit: no keys to fit");
  if (capture.current_A.empty() || capture.voltage_V.empty()) {
    throw std::invalid_argument("fit: the capture needs a current and a switch-voltage channel");
  }
  if (!(current_noise_A > 0.0) || !std::isfinite(current_noise_A)) throw std::invalid_argument("fit: the current noise must be > 0");
  const double t_edge_capture = scenario::switch_voltage_edge_time_s(capture.time_s, capture.voltage_V);
  if (std::isnan(t_edge_capture)) throw std::invalid_argument("fit: the capture's switch voltage never rises: no switch-off edge to align with");
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
    p.scale[k] = p.initial[k] != 0.0 ? std::abs(p.initial[k]) : 1.0;
  }
  p.initial[n] = 0.0;
  p.scale[n] = dt;
  SwitchOffFit out;
  out.keys = keys;
  auto model = [&](const Eigen::VectorXd& x) {
    scenario::Scenario c = s;
    for (Eigen::Index k = 0; k < n; ++k) scenario::set_numeric_key(c, keys[static_cast<std::size_t>(k)], x[k], parts);
    const auto built = drivers::build_driver_network(c.driver, parts);  // bad values: invalid_argument
    const auto run = drivers::simulate_switch_off(c.driver, built);
    const auto& tr = *run.transient;
    const double t_edge = model_half_way_time(built, run);
    const int coil = tr.circuit().state_index("coil.current");
    std::vector<double> i(capture.time_s.size());
    for (std::size_t k = 0; k < i.size(); ++k) {
      const double t = std::clamp(t_edge + capture.time_s[k] - t_edge_capture + x[n], tr.start_time_s(), tr.end_time_s());
      i[k] = tr.sample(t)[coil];
    }
    return i;
  };
  p.residuals = [&](const Eigen::VectorXd& x, Eigen::VectorXd& r) {
    const auto i = model(x);
    r.resize(static_cast<Eigen::Index>(i.size()));
    for (std::size_t k = 0; k < i.size(); ++k) r[static_cast<Eigen::Index>(k)] = (i[k] - capture.current_A[k]) / current_noise_A;
  };
  out.result = levenberg_marquardt(p);
  out.model_current_A = model(out.result.parameters);
  out.time_shift_s = out.result.parameters[n];
  out.time_shift_error_s = out.result.standard_errors[n];
  for (Eigen::Index k = 0; k < n; ++k) {
    const double se = out.result.standard_errors[k];
    if (!(se < std::abs(out.result.parameters[k]))) out.undetermined.push_back(keys[static_cast<std::size_t>(k)]);
  }
  return out;
}

}  // namespace coilkick::analyses
