// The reference switch-off (bench/reference_transient.py) two ways in C++, timed in this run:
//  * coilkick: the scenario file the script wrote, through the normal engine
//    (drivers::simulate_switch_off), as a user's program would call it;
//  * a one-off peer: a solver written for exactly this circuit's five equations, as a careful
//    engineer would write it — the on-state by Newton with the analytic Jacobian (no steps over
//    the stationary on-state), Boost.Odeint's rosenbrock4 controlled stepper with dense output
//    and the analytic Jacobian, restarted at the drive's two corners, the peak of the switch
//    voltage by bisection on its rate inside the step where the rate changes sign, the release
//    by bisection on the dense output, the run ending there.
// The constants come from the JSON file the script writes (the same numbers its scipy equations
// use), so both sides solve the same equations.
//
//   reference_peer CONSTANTS.json SCENARIO.toml RTOL...   one JSON line per solver and tolerance
//   reference_peer CONSTANTS.json SCENARIO.toml --once RTOL   one coilkick switch-off (for callgrind)
#include <algorithm>
#include <array>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <limits>
#include <sstream>
#include <string>

#include <boost/numeric/odeint.hpp>
#include <nlohmann/json.hpp>

#if __has_include(<valgrind/callgrind.h>)
#include <valgrind/callgrind.h>
#else
#define CALLGRIND_START_INSTRUMENTATION
#define CALLGRIND_STOP_INSTRUMENTATION
#endif

#include "coilkick/catalogue/catalogue.hpp"
#include "coilkick/drivers/switch_off.hpp"
#include "coilkick/scenario/scenario.hpp"

namespace odeint = boost::numeric::odeint;
using Vector = boost::numeric::ublas::vector<double>;
using Matrix = boost::numeric::ublas::matrix<double>;

namespace {

struct Constants {
  double vs, r_out, r_b, r_coil, l, v_high, t_off, t_fall, c_node, g_min, i_rel, vt;
  double is_q, beta_f, beta_r;                 // switch (Ebers–Moll)
  double is_d, n_d;                            // clamp diode (Shockley)
  double is_z, n_z, bv_z, it_z, n_knee;        // Zener: forward branch and breakdown knee
};

Constants read_constants(const std::string& path) {
  std::ifstream f(path);
  if (!f) throw std::runtime_error("cannot read " + path);
  const auto j = nlohmann::json::parse(f);
  return {j.at("VS"), j.at("R_OUT"), j.at("R_B"), j.at("R_COIL"), j.at("L"), j.at("V_HIGH"), j.at("T_OFF"), j.at("T_FALL"),
          j.at("C_NODE"), j.at("G_MIN"), j.at("I_REL"), j.at("VT"), j.at("SWITCH_SATURATION_CURRENT_A"), j.at("SWITCH_FORWARD_BETA"),
          j.at("SWITCH_REVERSE_BETA"), j.at("DIODE_SATURATION_CURRENT_A"), j.at("DIODE_EMISSION_COEFFICIENT"),
          j.at("ZENER_SATURATION_CURRENT_A"), j.at("ZENER_EMISSION_COEFFICIENT"), j.at("ZENER_BREAKDOWN_VOLTAGE_V"),
          j.at("ZENER_TEST_CURRENT_A"), j.at("ZENER_KNEE_EMISSION_COEFFICIENT")};
}

// The five equations (states v_out, v_base, v_collector, v_mid, i_coil) with their Jacobian.
struct Circuit {
  const Constants& k;
  double logic(double t) const {
    if (t <= k.t_off) return k.v_high;
    return t >= k.t_off + k.t_fall ? 0.0 : k.v_high * (1.0 - (t - k.t_off) / k.t_fall);
  }
  double logic_slope(double t) const { return t > k.t_off && t < k.t_off + k.t_fall ? -k.v_high / k.t_fall : 0.0; }

  void rates(const double* y, double t, double* dy, double jac[5][5]) const {
    const double v_out = y[0], vb = y[1], vc = y[2], vm = y[3], il = y[4];
    const double ef = std::exp(vb / k.vt), er = std::exp((vb - vc) / k.vt);
    const double i_f = k.is_q * (ef - 1.0), i_r = k.is_q * (er - 1.0);
    const double gf = k.is_q * ef / k.vt, gr = k.is_q * er / k.vt;
    const double early = 1.0 - (vb - vc) / 1e12;
    const double ic = (i_f - i_r) * early - i_r / k.beta_r - k.g_min * (vb - vc) + k.g_min * vc;
    const double ib = i_f / k.beta_f + i_r / k.beta_r + k.g_min * vb + k.g_min * (vb - vc);
    const double ud = vc - vm, nd = k.n_d * k.vt;
    const double ed = std::exp(ud / nd);
    const double i_d = k.is_d * (ed - 1.0) + k.g_min * ud, gd = k.is_d * ed / nd + k.g_min;
    const double vz = k.vs - vm, nz = k.n_z * k.vt, nk = k.n_knee * k.vt;
    const double ez = std::exp(vz / nz), ek = std::exp((-vz - k.bv_z) / nk);
    const double i_a = k.is_z * (ez - 1.0) - k.it_z * ek + k.g_min * vz;
    const double ga = k.is_z * ez / nz + k.it_z * ek / nk + k.g_min;  // d i_a / d vz
    const double c = k.c_node;
    dy[0] = ((logic(t) - v_out) / k.r_out - (v_out - vb) / k.r_b) / c;
    dy[1] = ((v_out - vb) / k.r_b - ib) / c;
    dy[2] = (il - ic - i_d) / c;
    dy[3] = (i_d + i_a) / c;
    dy[4] = (k.vs - vc - k.r_coil * il) / k.l;
    if (!jac) return;
    // ∂ic/∂vb, ∂ic/∂vc, ∂ib/∂vb, ∂ib/∂vc
    const double dic_dvb = (gf - gr) * early - (i_f - i_r) / 1e12 - gr / k.beta_r - k.g_min;
    const double dic_dvc = gr * early + (i_f - i_r) / 1e12 + gr / k.beta_r + k.g_min + k.g_min;
    const double dib_dvb = gf / k.beta_f + gr / k.beta_r + 2.0 * k.g_min;
    const double dib_dvc = -gr / k.beta_r - k.g_min;
    for (int i = 0; i < 5; ++i) std::fill(jac[i], jac[i] + 5, 0.0);
    jac[0][0] = (-1.0 / k.r_out - 1.0 / k.r_b) / c;
    jac[0][1] = (1.0 / k.r_b) / c;
    jac[1][0] = (1.0 / k.r_b) / c;
    jac[1][1] = (-1.0 / k.r_b - dib_dvb) / c;
    jac[1][2] = -dib_dvc / c;
    jac[2][1] = -dic_dvb / c;
    jac[2][2] = (-dic_dvc - gd) / c;
    jac[2][3] = gd / c;
    jac[2][4] = 1.0 / c;
    jac[3][2] = gd / c;
    jac[3][3] = (-gd - ga) / c;
    jac[4][2] = -1.0 / k.l;
    jac[4][4] = -k.r_coil / k.l;
  }
};

struct PeerResult {
  double peak_V = 0.0, release_s = std::nan("");
  long steps = 0;
};

// The on-state: Newton on the rates with the analytic Jacobian from the guess by hand.
std::array<double, 5> on_state(const Circuit& c) {
  const Constants& k = c.k;
  const double vm = k.vs - k.n_z * k.vt * std::log1p(k.is_d / k.is_z);
  std::array<double, 5> y{4.8, 0.75, 0.05, vm, (k.vs - 0.05) / k.r_coil};
  for (int it = 0; it < 100; ++it) {
    double f[5], jac[5][5];
    c.rates(y.data(), 0.0, f, jac);
    // Gaussian elimination with partial pivoting on the 5×5 system J·dy = −f.
    double a[5][6];
    for (int i = 0; i < 5; ++i) {
      for (int j = 0; j < 5; ++j) a[i][j] = jac[i][j];
      a[i][5] = -f[i];
    }
    for (int col = 0; col < 5; ++col) {
      int p = col;
      for (int r = col + 1; r < 5; ++r) p = std::abs(a[r][col]) > std::abs(a[p][col]) ? r : p;
      std::swap(a[p], a[col]);
      for (int r = col + 1; r < 5; ++r) {
        const double m = a[r][col] / a[col][col];
        for (int j = col; j < 6; ++j) a[r][j] -= m * a[col][j];
      }
    }
    double dy[5];
    for (int i = 4; i >= 0; --i) {
      double s = a[i][5];
      for (int j = i + 1; j < 5; ++j) s -= a[i][j] * dy[j];
      dy[i] = s / a[i][i];
    }
    // Junction voltages limited to 2 V_T per iteration (the exponentials' usual guard).
    double scale = 1.0;
    for (int i = 1; i < 4; ++i) scale = std::min(scale, 2.0 * k.vt / std::max(std::abs(dy[i]), 1e-300));
    double moved = 0.0;
    for (int i = 0; i < 5; ++i) {
      y[i] += scale * dy[i];
      moved = std::max(moved, std::abs(scale * dy[i]) / std::max(std::abs(y[i]), 1e-9));
    }
    if (scale == 1.0 && moved < 1e-14) return y;
  }
  throw std::runtime_error("peer: on-state not found");
}

// The coil current is integrated in milliamperes: odeint takes one absolute tolerance for every
// state, and 1e-6 of it is then 1 µV on the nodes and 1 nA on the coil, as on the scipy side.
constexpr double kCurrentScale = 1e3;

PeerResult peer_switch_off(const Constants& k, double rtol) {
  const Circuit c{k};
  const auto y0 = on_state(c);
  auto si = [](const Vector& x) { return std::array<double, 5>{x[0], x[1], x[2], x[3], x[4] / kCurrentScale}; };
  auto system = std::make_pair(
      [&](const Vector& x, Vector& dxdt, double t) {
        const auto y = si(x);
        c.rates(y.data(), t, &dxdt[0], nullptr);
        dxdt[4] *= kCurrentScale;
      },
      [&](const Vector& x, Matrix& jac, double t, Vector& dfdt) {
        const auto y = si(x);
        double f[5], j[5][5];
        c.rates(y.data(), t, f, j);
        for (int r = 0; r < 5; ++r) {
          for (int q = 0; q < 5; ++q) jac(r, q) = j[r][q] * (r == 4 ? kCurrentScale : 1.0) / (q == 4 ? kCurrentScale : 1.0);
          dfdt[r] = 0.0;
        }
        dfdt[0] = c.logic_slope(t) / k.r_out / k.c_node;
      });
  PeerResult out;
  Vector x(5);
  for (int i = 0; i < 4; ++i) x[i] = y0[i];
  x[4] = y0[4] * kCurrentScale;
  out.peak_V = x[2];
  auto vc_rate = [&](const Vector& s, double t) {
    const auto y = si(s);
    double f[5];
    c.rates(y.data(), t, f, nullptr);
    return f[2];
  };
  // The drive's 10 ns fall: controlled steps that land on its end (the second corner).
  const double t_ramp_end = k.t_off + k.t_fall;
  out.steps += static_cast<long>(odeint::integrate_adaptive(odeint::make_controlled(1e-6, rtol, odeint::rosenbrock4<double>()), system, x,
                                                            k.t_off, t_ramp_end, k.t_fall / 8.0));
  out.peak_V = std::max(out.peak_V, x[2]);
  // After it: dense output, the peak and the release located inside the steps.
  auto stepper = odeint::make_dense_output(1e-6, rtol, odeint::rosenbrock4<double>());
  stepper.initialize(x, t_ramp_end, 1e-9);
  Vector s1(5), s(5);
  const double i_rel = k.i_rel * kCurrentScale;
  while (stepper.current_time() < k.t_off + 5e-3) {
    const double t0 = stepper.current_time();
    const double rate0 = vc_rate(stepper.current_state(), t0);
    stepper.do_step(system);
    ++out.steps;
    const double t1 = stepper.current_time();
    s1 = stepper.current_state();
    // The peak of the switch voltage: its rate changes sign inside this step.
    if (rate0 > 0.0 && vc_rate(s1, t1) <= 0.0) {
      double lo = t0, hi = t1;
      for (int it = 0; it < 60 && hi - lo > 1e-15; ++it) {
        const double mid = 0.5 * (lo + hi);
        stepper.calc_state(mid, s);
        (vc_rate(s, mid) > 0.0 ? lo : hi) = mid;
      }
      stepper.calc_state(0.5 * (lo + hi), s);
      out.peak_V = std::max(out.peak_V, s[2]);
    }
    out.peak_V = std::max(out.peak_V, s1[2]);
    // The release: the coil current falls through the release current; the run ends there.
    if (s1[4] <= i_rel) {
      double lo = t0, hi = t1;
      for (int it = 0; it < 60 && hi - lo > 1e-15; ++it) {
        const double mid = 0.5 * (lo + hi);
        stepper.calc_state(mid, s);
        (s[4] > i_rel ? lo : hi) = mid;
      }
      out.release_s = 0.5 * (lo + hi) - k.t_off;
      return out;
    }
  }
  return out;
}

template <class F>
double best_seconds(int repeats, int inner, F&& f) {
  double best = std::numeric_limits<double>::infinity();
  for (int r = 0; r < repeats; ++r) {
    const auto t0 = std::chrono::steady_clock::now();
    for (int i = 0; i < inner; ++i) f();
    best = std::min(best, std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count() / inner);
  }
  return best;
}

std::string read_text(const std::string& path) {
  std::ifstream f(path);
  std::stringstream s;
  s << f.rdbuf();
  return s.str();
}

}  // namespace

int main(int argc, char** argv) {
  if (argc < 4) {
    std::fprintf(stderr, "usage: reference_peer CONSTANTS.json SCENARIO.toml RTOL... | --once RTOL\n");
    return 2;
  }
  const Constants k = read_constants(argv[1]);
  const auto parts = coilkick::catalogue::load_default_catalogue();
  const std::string text = read_text(argv[2]);
  auto scenario_at = [&](double rtol) {
    auto s = coilkick::scenario::read_scenario_text(text, argv[2], parts);
    s.driver.analysis.relative_tolerance = rtol;
    return s;
  };
  if (std::string(argv[3]) == "--once") {
    const auto s = scenario_at(std::stod(argv[4]));
    const auto built = coilkick::drivers::build_driver_network(s.driver, parts);
    (void)coilkick::drivers::simulate_switch_off(s.driver, built);  // warm: caches, first-touch pages
    CALLGRIND_START_INSTRUMENTATION;
    const auto r = coilkick::drivers::simulate_switch_off(s.driver, built);
    CALLGRIND_STOP_INSTRUMENTATION;
    std::printf("%.9g\n", r.metrics.get("switch_voltage_peak_V"));
    return 0;
  }
  for (int a = 3; a < argc; ++a) {
    const double rtol = std::stod(argv[a]);
    const auto s = scenario_at(rtol);
    const auto built = coilkick::drivers::build_driver_network(s.driver, parts);
    coilkick::drivers::SwitchOffResult r;
    const double t_lib = best_seconds(5, 20, [&] { r = coilkick::drivers::simulate_switch_off(s.driver, built); });
    std::printf("%s\n", nlohmann::json{{"solver", "coilkick"}, {"rtol", rtol}, {"time_s", t_lib},
                                       {"steps", r.transient->statistics().accepted_steps},
                                       {"peak_V", r.metrics.get("switch_voltage_peak_V")}, {"release_s", r.metrics.get("release_time_s")}}
                            .dump()
                            .c_str());
    PeerResult p;
    const double t_peer = best_seconds(5, 20, [&] { p = peer_switch_off(k, rtol); });
    std::printf("%s\n", nlohmann::json{{"solver", "peer"}, {"rtol", rtol}, {"time_s", t_peer}, {"steps", p.steps},
                                       {"peak_V", p.peak_V}, {"release_s", p.release_s}}
                            .dump()
                            .c_str());
  }
  return 0;
}
