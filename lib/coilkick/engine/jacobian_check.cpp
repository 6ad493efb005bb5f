#include "coilkick/engine/jacobian_check.hpp"

#include <cmath>
#include <vector>

namespace coilkick::engine {

JacobianComparison compare_jacobian(const Circuit& circuit, double t_s, const double* x) {
  const int n = circuit.state_count();
  Workspace w = circuit.make_workspace();
  circuit.evaluate(t_s, t_s, x, w, true);
  const Eigen::MatrixXd ja = w.jacobian;
  const Eigen::VectorXd ta = w.time_rate;
  Eigen::MatrixXd jn(n, n + 1);
  std::vector<double> xp(x, x + n);
  for (int j = 0; j <= n; ++j) {
    const double base = j < n ? x[j] : t_s;
    // Step: 1e-6 of the larger of |x| and the state's typical scale (1 V, 1 mA, 1 µJ, or 1e6 ×
    // the element's absolute tolerance) — small enough for truncation, large against round-off.
    double typical = 1e-9;  // time
    if (j < n) {
      const auto& info = circuit.states()[static_cast<std::size_t>(j)];
      typical = info.is_energy ? 1e-6
                : info.kind == StateKind::node_voltage ? 1.0
                : info.kind == StateKind::branch_current ? 1e-3
                                                         : 1e6 * info.absolute_tolerance;
    }
    const double h = (j < n ? 1e-6 : 1e-7) * std::max(typical, std::abs(base));
    Eigen::VectorXd fp, fm;
    if (j < n) {
      xp[static_cast<std::size_t>(j)] = base + h;
      circuit.evaluate(t_s, t_s, xp.data(), w, false);
      fp = w.rate;
      xp[static_cast<std::size_t>(j)] = base - h;
      circuit.evaluate(t_s, t_s, xp.data(), w, false);
      fm = w.rate;
      xp[static_cast<std::size_t>(j)] = base;
    } else {
      circuit.evaluate(t_s + h, t_s + h, x, w, false);
      fp = w.rate;
      circuit.evaluate(t_s - h, t_s - h, x, w, false);
      fm = w.rate;
    }
    jn.col(j) = (fp - fm) / (2.0 * h);
  }
  JacobianComparison r;
  for (int i = 0; i < n; ++i) {
    double scale = 0.0;
    for (int j = 0; j < n; ++j) scale = std::max(scale, std::abs(ja(i, j)));
    scale = std::max(scale, 1e-300);
    for (int j = 0; j <= n; ++j) {
      const double a = j < n ? ja(i, j) : ta[i];
      // Time column: judged against its own magnitude (it has other units than the row).
      const double s = j < n ? scale : std::max(std::abs(a), std::abs(jn(i, j))) + 1e-300;
      const double e = std::abs(a - jn(i, j)) / s;
      if (j == n && std::abs(a) < 1e-12 * scale && std::abs(jn(i, j)) < 1e-12 * scale) continue;
      if (e > r.worst_error) {
        r.worst_error = e;
        r.row = i;
        r.column = j < n ? j : -1;
        r.analytic = a;
        r.numeric = jn(i, j);
        r.row_name = circuit.states()[static_cast<std::size_t>(i)].name;
        r.column_name = j < n ? circuit.states()[static_cast<std::size_t>(j)].name : "time";
      }
    }
  }
  return r;
}

}  // namespace coilkick::engine
