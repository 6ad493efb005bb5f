// SmallLu against Eigen's LU (a linear-algebra library outside this project) on matrices that
// need row interchanges, of the sizes the engine meets.
#include <doctest/doctest.h>

#include <cmath>
#include <random>

#include "coilkick/engine/small_lu.hpp"

using coilkick::engine::SmallLu;

TEST_CASE("SmallLu solves like Eigen's partial-pivoting LU, vectors and matrix columns") {
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> u(-1.0, 1.0);
  for (int n : {1, 2, 5, 12, 30}) {
    CAPTURE(n);
    Eigen::MatrixXd a(n, n), b(n, 3);
    for (int i = 0; i < n; ++i) {
      for (int j = 0; j < n; ++j) a(i, j) = u(rng);
      for (int j = 0; j < 3; ++j) b(i, j) = u(rng);
    }
    if (n > 1) a(0, 0) = 0.0;  // forces a row interchange at the first column
    // Rows of very different scale, as capacitances (pF) next to inductances (H).
    a.row(n - 1) *= 1e-12;
    const Eigen::MatrixXd want = a.fullPivLu().solve(b);
    SmallLu lu;
    lu.compute(a);
    Eigen::VectorXd x = b.col(0);
    lu.solve_in_place(x);
    Eigen::MatrixXd xs = b;
    lu.solve_columns_in_place(xs);
    // Backward-stable both; random matrices of these sizes have condition numbers ~1e2–1e4, so
    // 1e-9 relative to the solution's size is a margin of >1e3 over rounding.
    const double scale = want.cwiseAbs().maxCoeff();
    CHECK((x - want.col(0)).cwiseAbs().maxCoeff() < 1e-9 * scale);
    CHECK((xs - want).cwiseAbs().maxCoeff() < 1e-9 * scale);
    // A block of a larger matrix (the engine factors the circuit corner of M in place).
    Eigen::MatrixXd big = Eigen::MatrixXd::Random(n + 2, n + 2);
    big.topLeftCorner(n, n) = a;
    lu.compute(big.topLeftCorner(n, n));
    Eigen::VectorXd y = b.col(1);
    lu.solve_in_place(y);
    CHECK((y - want.col(1)).cwiseAbs().maxCoeff() < 1e-9 * scale);
  }
}

TEST_CASE("SmallLu: a singular matrix gives non-finite values, not a silent number") {
  Eigen::MatrixXd a(2, 2);
  a << 1.0, 2.0, 2.0, 4.0;
  SmallLu lu;
  lu.compute(a);
  Eigen::VectorXd x(2);
  x << 1.0, 1.0;
  lu.solve_in_place(x);
  CHECK_FALSE((std::isfinite(x[0]) && std::isfinite(x[1])));
}
