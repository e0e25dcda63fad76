#pragma once
// Internal: one factorization of a nodal matrix, reused for every right-hand side.
// Small systems use a dense LU; large symmetric positive definite ones (resistor networks
// with grounded sources) a sparse Cholesky (LDLᵀ); other large ones KLU, which is built for
// circuit matrices.
// Rows and columns are equilibrated first, so that the condition estimate measures the
// circuit (a 10 Gohm resistor beside a voltage source is not ill-posed) and not the units.

#include <memory>

#include <Eigen/Dense>
#include <Eigen/SparseCore>

namespace netfold {

/// Which factorization serves a system.
enum class SolverKind { dense_lu, sparse_klu, sparse_cholesky };

class LinearSolver {
 public:
  virtual ~LinearSolver() = default;
  /// Solves G·X = RHS for every column of RHS.
  virtual Eigen::MatrixXd solve(const Eigen::MatrixXd& rhs) const = 0;
  /// Reciprocal condition estimate of the equilibrated matrix (1 = perfect, 0 = singular).
  double rcond() const { return rcond_; }
  SolverKind kind() const { return kind_; }

 protected:
  double rcond_ = 0.0;
  SolverKind kind_ = SolverKind::dense_lu;
};

/// Largest system solved densely.
inline constexpr Eigen::Index kDenseLimit = 300;

/// Factors G. Never throws for a singular matrix: rcond() is then 0 and the caller reports it.
/// `spd` says G is symmetric positive definite (NodalSystem::symmetric_positive_definite).
std::unique_ptr<LinearSolver> factor_nodal_matrix(const Eigen::SparseMatrix<double>& g, bool spd = false);

/// Factors G with a given method regardless of size (tests compare the paths; Cholesky
/// requires an SPD matrix).
std::unique_ptr<LinearSolver> factor_nodal_matrix_with(const Eigen::SparseMatrix<double>& g, SolverKind kind);

/// Name of a solver kind for reports: "dense LU", "KLU", "sparse LDLT".
const char* solver_kind_name(SolverKind kind);

}  // namespace netfold
