#include "coilkick/engine/small_lu.hpp"

#include <cmath>
#include <utility>

namespace coilkick::engine {

void SmallLu::compute(const ConstMatrixRef& a) {
  n_ = static_cast<int>(a.rows());
  lu_ = a;
  pivot_.resize(static_cast<std::size_t>(n_));
  for (int k = 0; k < n_; ++k) {
    int p = k;
    double best = std::abs(lu_(k, k));
    for (int i = k + 1; i < n_; ++i) {
      if (std::abs(lu_(i, k)) > best) {
        best = std::abs(lu_(i, k));
        p = i;
      }
    }
    pivot_[static_cast<std::size_t>(k)] = p;
    if (p != k) lu_.row(k).swap(lu_.row(p));
    const double inv = 1.0 / lu_(k, k);
    for (int i = k + 1; i < n_; ++i) lu_(i, k) *= inv;
    for (int j = k + 1; j < n_; ++j) {
      const double u = lu_(k, j);
      if (u == 0.0) continue;
      for (int i = k + 1; i < n_; ++i) lu_(i, j) -= lu_(i, k) * u;
    }
  }
}

void SmallLu::solve_in_place(Eigen::Ref<Eigen::VectorXd> b) const {
  for (int k = 0; k < n_; ++k) {
    const int p = pivot_[static_cast<std::size_t>(k)];
    if (p != k) std::swap(b[k], b[p]);
  }
  for (int k = 0; k < n_; ++k) {
    const double bk = b[k];
    if (bk == 0.0) continue;
    for (int i = k + 1; i < n_; ++i) b[i] -= lu_(i, k) * bk;
  }
  for (int k = n_ - 1; k >= 0; --k) {
    b[k] /= lu_(k, k);
    const double bk = b[k];
    for (int i = 0; i < k; ++i) b[i] -= lu_(i, k) * bk;
  }
}

void SmallLu::solve_columns_in_place(MatrixRef b) const {
  for (Eigen::Index c = 0; c < b.cols(); ++c) solve_in_place(b.col(c));
}

}  // namespace coilkick::engine
