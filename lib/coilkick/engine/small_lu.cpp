#include "coilkick/engine/small_lu.hpp"

#include <cmath>
#include <cstddef>
#include <utility>

namespace coilkick::engine {

void SmallLu::compute(const ConstMatrixRef& a) {
  n_ = static_cast<int>(a.rows());
  lu_ = a;
  pivot_.resize(static_cast<std::size_t>(n_));
  diagonal_ = true;
  for (int j = 0; j < n_ && diagonal_; ++j) {
    for (int i = 0; i < n_; ++i) {
      if (i != j && lu_(i, j) != 0.0) {
        diagonal_ = false;
        break;
      }
    }
  }
  eliminate();
}

// The elimination on raw pointers (column-major, leading dimension n), each column updated only
// in the rows whose multiplier is not zero — the other rows would subtract exact zeros: M and the
// stage matrices are mostly zeros (a node couples to its few neighbours).
__attribute__((optimize("no-tree-vectorize"))) void SmallLu::eliminate() {
  const int n = n_;
  double* a = lu_.data();
  rows_.resize(static_cast<std::size_t>(n));
  int* rows = rows_.data();
  for (int k = 0; k < n; ++k) {
    double* col_k = a + static_cast<std::ptrdiff_t>(k) * n;
    int p = k;
    double best = std::abs(col_k[k]);
    for (int i = k + 1; i < n; ++i) {
      if (std::abs(col_k[i]) > best) {
        best = std::abs(col_k[i]);
        p = i;
      }
    }
    pivot_[static_cast<std::size_t>(k)] = p;
    if (p != k) {
      for (int c = 0; c < n; ++c) std::swap(a[k + static_cast<std::ptrdiff_t>(c) * n], a[p + static_cast<std::ptrdiff_t>(c) * n]);
    }
    const double inv = 1.0 / col_k[k];
    int m = 0;
    for (int i = k + 1; i < n; ++i) {
      col_k[i] *= inv;
      if (col_k[i] != 0.0) rows[m++] = i;
    }
    if (m == 0) continue;
    for (int j = k + 1; j < n; ++j) {
      double* col_j = a + static_cast<std::ptrdiff_t>(j) * n;
      const double u = col_j[k];
      if (u == 0.0) continue;
      for (int r = 0; r < m; ++r) col_j[rows[r]] -= col_k[rows[r]] * u;
    }
  }
}

void SmallLu::solve_in_place(Eigen::Ref<Eigen::VectorXd> b) const { solve_in_place(b.data()); }

// The same operations in the same order as through Eigen's accessors, on raw pointers: at these
// sizes the accessors' index arithmetic was most of the cost.
// Not vectorised: the loops run a handful of times, where the vector code's set-up costs more.
__attribute__((optimize("no-tree-vectorize"))) void SmallLu::solve_in_place(double* b) const {
  const int n = n_;
  const double* lu = lu_.data();
  if (diagonal_) {  // what the elimination below reduces to, exactly: no pivoting, no eliminations
    for (int k = 0; k < n; ++k) b[k] /= lu[static_cast<std::ptrdiff_t>(k) * (n + 1)];
    return;
  }
  const int* pivot = pivot_.data();
  for (int k = 0; k < n; ++k) {
    const int p = pivot[k];
    if (p != k) std::swap(b[k], b[p]);
  }
  for (int k = 0; k < n; ++k) {
    const double bk = b[k];
    if (bk == 0.0) continue;
    const double* col = lu + static_cast<std::ptrdiff_t>(k) * n;
    for (int i = k + 1; i < n; ++i) b[i] -= col[i] * bk;
  }
  for (int k = n - 1; k >= 0; --k) {
    const double* col = lu + static_cast<std::ptrdiff_t>(k) * n;
    b[k] /= col[k];
    const double bk = b[k];
    for (int i = 0; i < k; ++i) b[i] -= col[i] * bk;
  }
}

void SmallLu::solve_columns_in_place(MatrixRef b) const {
  for (Eigen::Index c = 0; c < b.cols(); ++c) solve_in_place(b.col(c).data());
}

}  // namespace coilkick::engine
