#pragma once
// LU factorisation with partial pivoting for the engine's small dense systems (the capacitance/
// inductance matrix M at every evaluation, the Rosenbrock stage matrix at every step: a handful
// to a few tens of rows). Plain Doolittle elimination with row interchanges (Golub & Van Loan,
// "Matrix Computations", 4th ed., §3.4); at these sizes Eigen's blocked PartialPivLU spends
// most of its time on bookkeeping. A zero pivot is not trapped: it yields non-finite results,
// which the integrator reports as a failure.
#include <Eigen/Dense>
#include <vector>

namespace coilkick::engine {

class SmallLu {
 public:
  using ConstMatrixRef = Eigen::Ref<const Eigen::MatrixXd, 0, Eigen::OuterStride<>>;
  using MatrixRef = Eigen::Ref<Eigen::MatrixXd, 0, Eigen::OuterStride<>>;

  void compute(const ConstMatrixRef& a);
  // b ← A⁻¹·b for a vector or for each column of a matrix.
  void solve_in_place(Eigen::Ref<Eigen::VectorXd> b) const;
  void solve_in_place(double* b) const;  // b of size() contiguous values
  void solve_columns_in_place(MatrixRef b) const;
  int size() const { return n_; }

 private:
  Eigen::MatrixXd lu_;
  std::vector<int> pivot_;
  int n_ = 0;
  bool diagonal_ = false;  // no off-diagonal entry (M of grounded capacitances and coils): solves divide
  std::vector<int> rows_;  // scratch of compute: the rows with a nonzero multiplier
  void eliminate();        // the factorisation of lu_ in place (compute)
};

}  // namespace coilkick::engine
