#include "linear_solver.hpp"

#include <cmath>

#include <Eigen/KLUSupport>
#include <Eigen/LU>

namespace netfold {

namespace {

// Row and column scale factors (powers of two, so scaling is exact) that bring every row's
// and column's largest entry near 1.
struct Equilibration {
  Eigen::VectorXd row, col;
};

double power_of_two_near(double x) { return std::ldexp(1.0, -std::ilogb(x)); }

Equilibration equilibrate(const Eigen::SparseMatrix<double>& g) {
  Equilibration e{Eigen::VectorXd::Ones(g.rows()), Eigen::VectorXd::Ones(g.cols())};
  Eigen::VectorXd rmax = Eigen::VectorXd::Zero(g.rows());
  for (Eigen::Index k = 0; k < g.outerSize(); ++k)
    for (Eigen::SparseMatrix<double>::InnerIterator it(g, k); it; ++it)
      rmax[it.row()] = std::max(rmax[it.row()], std::fabs(it.value()));
  for (Eigen::Index i = 0; i < g.rows(); ++i)
    if (rmax[i] > 0) e.row[i] = power_of_two_near(rmax[i]);
  Eigen::VectorXd cmax = Eigen::VectorXd::Zero(g.cols());
  for (Eigen::Index k = 0; k < g.outerSize(); ++k)
    for (Eigen::SparseMatrix<double>::InnerIterator it(g, k); it; ++it)
      cmax[it.col()] = std::max(cmax[it.col()], std::fabs(it.value() * e.row[it.row()]));
  for (Eigen::Index j = 0; j < g.cols(); ++j)
    if (cmax[j] > 0) e.col[j] = power_of_two_near(cmax[j]);
  return e;
}

Eigen::SparseMatrix<double> scaled(const Eigen::SparseMatrix<double>& g, const Equilibration& e) {
  Eigen::SparseMatrix<double> s = e.row.asDiagonal() * g * e.col.asDiagonal();
  s.makeCompressed();
  return s;
}

class DenseSolver final : public LinearSolver {
 public:
  DenseSolver(const Eigen::SparseMatrix<double>& g, Equilibration e) : e_(std::move(e)) {
    kind_ = SolverKind::dense_lu;
    Eigen::MatrixXd a = Eigen::MatrixXd(scaled(g, e_));
    if (a.rows() == 0) {
      rcond_ = 1.0;
      return;
    }
    lu_.compute(a);
    rcond_ = lu_.rcond();
    if (!std::isfinite(rcond_)) rcond_ = 0.0;
    // PartialPivLU never reports a zero pivot; an exactly zero one shows as rcond 0.
    const auto& m = lu_.matrixLU();
    for (Eigen::Index i = 0; i < m.rows(); ++i)
      if (m(i, i) == 0.0) rcond_ = 0.0;
  }
  Eigen::MatrixXd solve(const Eigen::MatrixXd& rhs) const override {
    if (rhs.rows() == 0) return rhs;
    return e_.col.asDiagonal() * lu_.solve(e_.row.asDiagonal() * rhs);
  }

 private:
  Equilibration e_;
  Eigen::PartialPivLU<Eigen::MatrixXd> lu_;
};

// Eigen's KLU wrapper keeps KLU's numeric object protected; this exposes KLU's own cheap
// reciprocal pivot-ratio estimate (klu_rcond) of the factorization.
class KluFactor : public Eigen::KLU<Eigen::SparseMatrix<double>> {
 public:
  double pivot_rcond() {
    if (!m_numeric || !m_symbolic) return 0.0;
    if (!klu_rcond(m_symbolic, m_numeric, &m_common)) return 0.0;
    return m_common.rcond;
  }
};

class SparseSolver final : public LinearSolver {
 public:
  SparseSolver(const Eigen::SparseMatrix<double>& g, Equilibration e) : e_(std::move(e)), a_(scaled(g, e_)) {
    kind_ = SolverKind::sparse_klu;
    klu_.compute(a_);
    rcond_ = klu_.info() == Eigen::Success ? klu_.pivot_rcond() : 0.0;
    if (!std::isfinite(rcond_)) rcond_ = 0.0;
  }
  Eigen::MatrixXd solve(const Eigen::MatrixXd& rhs) const override {
    Eigen::MatrixXd b = e_.row.asDiagonal() * rhs;
    Eigen::MatrixXd x = const_cast<KluFactor&>(klu_).solve(b);
    return e_.col.asDiagonal() * x;
  }

 private:
  Equilibration e_;
  Eigen::SparseMatrix<double> a_;  // KLU keeps a reference to the matrix it factored
  KluFactor klu_;
};

}  // namespace

std::unique_ptr<LinearSolver> factor_nodal_matrix(const Eigen::SparseMatrix<double>& g) {
  Equilibration e = equilibrate(g);
  if (g.rows() <= kDenseLimit) return std::make_unique<DenseSolver>(g, std::move(e));
  return std::make_unique<SparseSolver>(g, std::move(e));
}

}  // namespace netfold
