#include "coilkick/relay/relay_calibration.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <functional>
#include <map>
#include <memory>
#include <mutex>
#include <sstream>
#include <stdexcept>

#include "coilkick/engine/errors.hpp"
#include "coilkick/engine/network.hpp"
#include "coilkick/engine/parameter_check.hpp"
#include "coilkick/engine/transient.hpp"
#include "coilkick/relay/armature_operating_point.hpp"

namespace coilkick::relay {
namespace {

// The fixed shape (see the header), typical of small power relays and valves, from memory.
constexpr double kResidualGap_m = 50e-6;
constexpr double kPoleArea_m2 = 20e-6;
constexpr double kLeakageShare = 0.05;
constexpr double kContactSpringShare = 0.5;
constexpr double kDampingRatio = 0.2;
constexpr double kStopPenetrationShare = 1e-3;  // of the over-travel, under the holding force
constexpr double kStopDampingRatio = 0.7;       // of the stop's linearised spring at the holding penetration
constexpr double kForceRiseMargin = 1.05;       // closed-stop spring force at least 5 % above the preload
constexpr double kDischargeFactor = 19.0;       // disconnected coil discharges into 19·R
constexpr double kEdgeAt_s = 1e-6, kEdgeTime_s = 1e-7;
constexpr int kCalibrationBudget_s = 30;  // typical calibrations take 0.1–1 s


ArmatureCoilParameters shape(const RelayDatasheet& s, double core_gap_m, double mass_kg) {
  ArmatureCoilParameters p;
  p.resistance_ohm = s.coil_resistance_ohm;
  p.core_loss_resistance_ohm = s.core_loss_resistance_ohm;
  auto& mg = p.magnetic;
  auto& me = p.mechanics;
  const double mu_a = kVacuumPermeability_H_per_m * kPoleArea_m2;
  me.residual_gap_m = kResidualGap_m;
  me.make_gap_m = kResidualGap_m + s.over_travel_m;
  me.open_gap_m = me.make_gap_m + s.contact_gap_m;
  mg.pole_area_m2 = kPoleArea_m2;
  mg.core_reluctance_per_H = core_gap_m / mu_a;
  mg.leakage_inductance_H = kLeakageShare * s.closed_inductance_H;
  // L_m(g) = N²·μ0·A/(g_core + g): the magnetising part of the closed inductance fixes N.
  mg.turns = std::sqrt((1.0 - kLeakageShare) * s.closed_inductance_H * (core_gap_m + me.residual_gap_m) / mu_a);
  const double i_op = s.operate_voltage_V / s.coil_resistance_ohm, i_rel = s.release_voltage_V / s.coil_resistance_ohm;
  const double f_closed = -mg.force_N(i_rel, me.residual_gap_m);  // spring force at the closed stop: drop-out
  const double travel = me.open_gap_m - me.residual_gap_m;
  auto set_preload = [&](double preload) {
    const double rise = f_closed - preload;
    me.spring_preload_N = preload;
    me.contact_spring_rate_N_per_m = kContactSpringShare * rise / s.over_travel_m;
    me.spring_rate_N_per_m = (1.0 - kContactSpringShare) * rise / travel;
  };
  // Pick-up: the preload at which the largest holding current over the travel is I_op. Often
  // that is at the open stop (preload = ½·I_op²·|dL/dg(open)|, the upper bound); with a small
  // core reluctance it lies inside the travel and the preload must be lower. The largest holding
  // current grows with the preload: bisection.
  double lo = 0.0, hi = std::min(-mg.force_N(i_op, me.open_gap_m), f_closed);
  set_preload(hi);
  if (static_operate_current_A(p) > i_op) {
    for (int it = 0; it < 60; ++it) {
      const double mid = 0.5 * (lo + hi);
      set_preload(mid);
      (static_operate_current_A(p) > i_op ? hi : lo) = mid;
    }
    set_preload(lo);
  }
  me.mass_kg = mass_kg;
  me.damping_N_s_per_m = 2.0 * kDampingRatio * std::sqrt((me.spring_rate_N_per_m + me.contact_spring_rate_N_per_m) * mass_kg);
  const double i_nom = s.nominal_voltage_V / s.coil_resistance_ohm;
  const double hold = std::max(-mg.force_N(i_nom, me.residual_gap_m) - f_closed, 0.1 * f_closed);
  const double penetration = kStopPenetrationShare * s.over_travel_m;
  me.stop_stiffness_N_per_m1_5 = hold / std::pow(penetration, 1.5);
  // Damped near critically where the armature rests (a lightly damped stop rings at ~10 kHz and
  // the integrator has to follow every cycle): c = α·k_s·p^1.5 = α·F_hold = 2ζ·√(k_lin·m) with
  // the linearised stiffness k_lin = 1.5·F_hold/p. Impacts are then nearly plastic; bounce is
  // not modelled (data sheets exclude it from operate and release times).
  me.stop_damping_s_per_m = 2.0 * kStopDampingRatio * std::sqrt(1.5 * hold / penetration * mass_kg) / hold;
  return p;
}

// Largest core equivalent gap g_core for which the closed-stop spring force exceeds the preload
// by the margin: (I_rel/I_op)²·((g_core+g_open)/(g_core+g_res))² >= margin.
double largest_core_gap_m(const RelayDatasheet& s) {
  const double r = (s.operate_voltage_V / s.release_voltage_V) * std::sqrt(kForceRiseMargin);
  const double g_open = kResidualGap_m + s.over_travel_m + s.contact_gap_m;
  const double hi = (g_open - r * kResidualGap_m) / (r - 1.0);
  if (!(hi > 0.0)) {
    std::ostringstream m;
    m << "relay: release_voltage_V " << s.release_voltage_V << " V is too low against operate_voltage_V " << s.operate_voltage_V
      << " V for the armature travel: with a " << kResidualGap_m * 1e3 << " mm residual gap and "
      << g_open * 1e3 << " mm open gap the release voltage must exceed "
      << s.operate_voltage_V * std::sqrt(kForceRiseMargin) * kResidualGap_m / g_open << " V (or give a larger contact_gap_m)";
    throw std::invalid_argument(m.str());
  }
  return hi;
}

// Root of a monotone f on [lo, hi] (in log of the argument) by the Illinois variant of regula
// falsi. f(lo) and f(hi) are given. Returns the argument with the smallest |f| seen if the
// bracket holds no sign change (the target is out of reach) or tolerance is not reached.
double solve_log(const std::function<double(double)>& f, double lo, double hi, double f_lo, double f_hi, double tolerance) {
  double a = std::log(lo), b = std::log(hi), fa = f_lo, fb = f_hi;
  double best = std::abs(fa) < std::abs(fb) ? lo : hi, best_f = std::min(std::abs(fa), std::abs(fb));
  if (!(fa * fb < 0.0)) return best;
  int side = 0;
  for (int it = 0; it < 60 && best_f > tolerance; ++it) {
    const double c = (a * fb - b * fa) / (fb - fa);
    const double fc = f(std::exp(c));
    if (std::abs(fc) < best_f) {
      best_f = std::abs(fc);
      best = std::exp(c);
    }
    if (fc * fb < 0.0) {
      a = b;
      fa = fb;
      side = 0;
    } else {
      fa *= side == -1 ? 0.5 : 1.0;
      side = -1;
    }
    b = c;
    fb = fc;
    if (std::abs(b - a) < 1e-12) break;
  }
  return best;
}

// Expands [x, x] by factors of 4 until f changes sign or the limits are hit; returns the bracket.
void bracket_log(const std::function<double(double)>& f, double x0, double x_min, double x_max, double& lo, double& hi,
                 double& f_lo, double& f_hi) {
  lo = hi = x0;
  f_lo = f_hi = f(x0);
  for (int it = 0; it < 30 && f_lo * f_hi > 0.0; ++it) {
    if (f_lo > 0.0 && lo > x_min) {
      hi = lo;
      f_hi = f_lo;
      lo = std::max(lo / 4.0, x_min);
      f_lo = f(lo);
    } else if (f_hi < 0.0 && hi < x_max) {
      lo = hi;
      f_lo = f_hi;
      hi = std::min(hi * 4.0, x_max);
      f_hi = f(hi);
    } else {
      break;
    }
  }
}

engine::TransientOptions run_options(const ArmatureCoilParameters& p, double voltage_V, double limit_s) {
  engine::TransientOptions o;
  const double i = voltage_V / std::max(p.resistance_ohm, 1e-3);
  o.stop_time_s = kEdgeAt_s + limit_s;
  o.relative_tolerance = 1e-6;
  o.voltage_tolerance_V = 1e-6 * voltage_V;
  o.current_tolerance_A = 1e-6 * i;
  o.energy_tolerance_J = 1e-9 * 0.5 * p.magnetic.inductance_H(p.mechanics.residual_gap_m) * i * i;
  o.maximum_wall_time_s = 5.0;
  // An L-stable step much longer than the armature's snap-over time damps that instability
  // instead of following it (the relay would "hang" at a balance it cannot keep): bound it.
  o.maximum_step_s = limit_s / 400.0;
  o.record_waveforms = false;
  return o;
}

// Rising: the contact breaks (energised, operated relay); falling: it makes (released relay).
double contact_change_time_s(const engine::Network& net, const ArmatureCoilParameters& p, double voltage_V, double limit_s,
                             engine::Direction direction) {
  const engine::Circuit c(net);
  const engine::CircuitState start = direction == engine::Direction::rising ? operating_point_with_armatures_closed(net, c, 0.0)
                                                                             : operating_point_with_armatures_open(net, c, 0.0);
  const auto ev = engine::EventSpec::crossing("contact", engine::Probe::state(c, "coil.gap"), p.mechanics.make_gap_m, direction,
                                              kEdgeAt_s, true);
  const auto r = engine::simulate(c, start, run_options(p, voltage_V, limit_s), {ev});
  const auto& e = r.event("contact");
  return e.time_s ? *e.time_s - kEdgeAt_s : std::nan("");
}

}  // namespace

void RelayDatasheet::check() const {
  using engine::require_positive;
  require_positive("relay", "nominal_voltage_V", nominal_voltage_V);
  require_positive("relay", "coil_resistance_ohm", coil_resistance_ohm);
  require_positive("relay", "closed_inductance_H", closed_inductance_H);
  require_positive("relay", "operate_voltage_V", operate_voltage_V);
  require_positive("relay", "release_voltage_V", release_voltage_V);
  engine::require_open_range("relay", "operate_time_s", operate_time_s, 0.0, 10.0);
  engine::require_open_range("relay", "release_time_s", release_time_s, 0.0, 10.0);
  engine::require_open_range("relay", "contact_gap_m", contact_gap_m, 0.0, 0.05);
  engine::require_open_range("relay", "over_travel_m", over_travel_m, 0.0, 0.05);
  engine::require_positive_or_infinite("relay", "core_loss_resistance_ohm", core_loss_resistance_ohm);
  if (!(release_voltage_V < operate_voltage_V)) {
    throw std::invalid_argument("relay: release_voltage_V must be below operate_voltage_V");
  }
  if (!(operate_voltage_V < nominal_voltage_V)) {
    throw std::invalid_argument("relay: operate_voltage_V must be below nominal_voltage_V");
  }
}

double RelayCalibration::worst_relative_error() const {
  double w = 0.0;
  for (const auto& t : targets) w = std::max(w, std::abs(t.relative_error()));
  return w;
}

double static_release_current_A(const ArmatureCoilParameters& p) {
  const auto& m = p.mechanics;
  return std::sqrt(2.0 * m.spring_force_N(m.residual_gap_m) / -p.magnetic.inductance_slope_H_per_m(m.residual_gap_m));
}

double static_operate_current_A(const ArmatureCoilParameters& p) {
  // The current that holds the armature in balance at gap g is √(2·F_spring(g)/|dL/dg|);
  // raised slowly, the armature travels all the way once the current exceeds the largest of
  // these over the travel. Scan, then refine around the largest sample by golden section.
  const auto& m = p.mechanics;
  auto need = [&](double g) { return std::sqrt(2.0 * m.spring_force_N(g) / -p.magnetic.inductance_slope_H_per_m(g)); };
  const int n = 400;
  double best_g = m.open_gap_m, best = need(best_g);
  const double step = (m.open_gap_m - m.residual_gap_m) / n;
  for (int k = 0; k <= n; ++k) {
    const double g = m.residual_gap_m + k * step;
    if (need(g) > best) {
      best = need(g);
      best_g = g;
    }
  }
  double a = std::max(m.residual_gap_m, best_g - step), b = std::min(m.open_gap_m, best_g + step);
  const double phi = 0.5 * (std::sqrt(5.0) - 1.0);
  for (int it = 0; it < 60; ++it) {
    const double c = b - phi * (b - a), d = a + phi * (b - a);
    if (need(c) > need(d)) b = d;
    else a = c;
  }
  return std::max(best, need(0.5 * (a + b)));
}

double operate_time_s(const ArmatureCoilParameters& p, double voltage_V, double limit_s) {
  engine::Network net;
  net.add_voltage_source("source", "coil_top", engine::Waveform::edge(0.0, voltage_V, kEdgeAt_s, kEdgeTime_s));
  net.add(std::make_shared<ArmatureCoil>("coil", "coil_top", engine::Network::ground, p));
  return contact_change_time_s(net, p, voltage_V, limit_s, engine::Direction::falling);
}

double release_time_s(const ArmatureCoilParameters& p, double voltage_V, double limit_s) {
  engine::Network net;
  net.add_voltage_source("source", "supply", engine::Waveform::constant(voltage_V));
  net.add_timed_switch("breaker", "supply", "coil_top", {1e-3, 1e9, kEdgeAt_s, kEdgeTime_s});
  net.add(std::make_shared<ArmatureCoil>("coil", "coil_top", engine::Network::ground, p));
  net.add_resistor("discharge", "coil_top", engine::Network::ground, kDischargeFactor * p.resistance_ohm);
  return contact_change_time_s(net, p, voltage_V, limit_s, engine::Direction::rising);
}

namespace {
RelayCalibration calibrate_checked(const RelayDatasheet& s) {
  const auto started = std::chrono::steady_clock::now();
  auto check_budget = [&] {
    if (std::chrono::steady_clock::now() - started > std::chrono::seconds(kCalibrationBudget_s)) {
      throw std::invalid_argument("relay: the armature model's calibration did not converge within " +
                                  std::to_string(kCalibrationBudget_s) + " s; check operate_time_s and release_time_s");
    }
  };
  const double core_gap_hi = largest_core_gap_m(s) / kForceRiseMargin;
  const double core_gap_lo = 1e-3 * kResidualGap_m;
  const double v = s.nominal_voltage_V;
  const double limit = 20.0 * std::max(s.operate_time_s, s.release_time_s);
  // A contact that never changes state within the limit counts as "much too slow".
  auto log_ratio = [](double t, double target) { return std::isnan(t) ? 10.0 : std::log(t / target); };

  // A calibration run that fails is a data-sheet time this coil cannot meet: name that value.
  auto fitting = [&s](const char* field, double target_s, const auto& fit) {
    try {
      return fit();
    } catch (const engine::SimulationError& e) {
      std::ostringstream m;
      m << "relay: " << field << " (" << target_s << " s) cannot be met by an armature on this coil (its time constant "
        << "closed_inductance_H/coil_resistance_ohm is " << s.closed_inductance_H / s.coil_resistance_ohm
        << " s); the calibration run that fits it failed: " << e.what();
      throw std::invalid_argument(m.str());
    }
  };
  // Inner: the moving mass that meets the release time for a given core gap.
  auto mass_fitting_release = [&](double core_gap) {
    const double f_closed = shape(s, core_gap, 1.0).mechanics.spring_force_N(kResidualGap_m);
    const double m0 = std::clamp(f_closed * s.release_time_s * s.release_time_s / (2.0 * s.over_travel_m), 1e-6, 1.0);
    auto f = [&](double m) {
      check_budget();
      return log_ratio(release_time_s(shape(s, core_gap, m), v, limit), s.release_time_s);
    };
    double lo, hi, flo, fhi;
    bracket_log(f, m0, 1e-8, 100.0, lo, hi, flo, fhi);
    return solve_log(f, lo, hi, flo, fhi, 2e-4);
  };
  auto mass_for = [&](double core_gap) {
    return fitting("release_time_s", s.release_time_s, [&] { return mass_fitting_release(core_gap); });
  };
  // Outer: the core gap that meets the operate time (with the mass re-solved each time).
  auto op_error = [&](double core_gap) {
    const double mass = mass_for(core_gap);
    return fitting("operate_time_s", s.operate_time_s,
                   [&] { return log_ratio(operate_time_s(shape(s, core_gap, mass), v, limit), s.operate_time_s); });
  };
  const double f_lo = op_error(core_gap_lo), f_hi = op_error(core_gap_hi);
  const double core_gap = solve_log(op_error, core_gap_lo, core_gap_hi, f_lo, f_hi, 2e-4);

  RelayCalibration out;
  out.parameters = shape(s, core_gap, mass_for(core_gap));
  const auto& p = out.parameters;
  const double r = s.coil_resistance_ohm;
  out.targets = {
      {"closed_inductance_H", s.closed_inductance_H, p.magnetic.inductance_H(p.mechanics.residual_gap_m)},
      {"operate_voltage_V", s.operate_voltage_V, r * static_operate_current_A(p)},
      {"release_voltage_V", s.release_voltage_V, r * static_release_current_A(p)},
      {"operate_time_s", s.operate_time_s, operate_time_s(p, v, limit)},
      {"release_time_s", s.release_time_s, release_time_s(p, v, limit)},
  };
  return out;
}
}  // namespace

RelayCalibration calibrate_relay(const RelayDatasheet& s) {
  s.check();
  try {
    return calibrate_checked(s);
  } catch (const engine::SimulationError& e) {
    // Values far outside any relay (a 1 µs release of a 1 kH coil ...) can make a calibration run
    // fail: that is a problem of the data, reported as such.
    throw std::invalid_argument(std::string("relay: the armature model cannot be calibrated to these values (a calibration "
                                            "run failed: ") + e.what() + ")");
  }
}


const RelayCalibration& calibrate_relay_cached(const RelayDatasheet& s) {
  static std::mutex mutex;
  static std::map<std::vector<double>, std::unique_ptr<const RelayCalibration>> cache;
  const std::vector<double> key{s.nominal_voltage_V, s.coil_resistance_ohm, s.closed_inductance_H, s.operate_voltage_V,
                                s.release_voltage_V, s.operate_time_s,      s.release_time_s,      s.contact_gap_m,
                                s.over_travel_m,     s.core_loss_resistance_ohm};
  const std::lock_guard<std::mutex> lock(mutex);
  auto it = cache.find(key);
  if (it == cache.end()) it = cache.emplace(key, std::make_unique<const RelayCalibration>(calibrate_relay(s))).first;
  return *it->second;
}

}  // namespace coilkick::relay
