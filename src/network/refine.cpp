#include "network/refine.hpp"

#include <cmath>

namespace netfold {

std::vector<double> refine_solution(const NodalSystem& system, const LinearSolver& solver, const Eigen::MatrixXd& u,
                                    const Eigen::MatrixXd& x, Eigen::MatrixXd& x_lo) {
  return refine_solution(system.matrix_stamps(), system.input_stamps(), solver, u, x, x_lo);
}

std::vector<double> refine_solution(const Stamps& g, const Stamps& b, const LinearSolver& solver,
                                    const Eigen::MatrixXd& u, const Eigen::MatrixXd& x, Eigen::MatrixXd& x_lo) {
  const auto n = x.rows(), m = x.cols();
  x_lo = Eigen::MatrixXd::Zero(n, m);
  std::vector<double> error(static_cast<std::size_t>(m), 0.0);
  if (n == 0 || m == 0) return error;
  for (int step = 0; step < kRefinementSteps; ++step) {
    std::vector<Compensated> r(static_cast<std::size_t>(n * m));
    auto at = [&](Eigen::Index row, Eigen::Index col) -> Compensated& {
      return r[static_cast<std::size_t>(col * n + row)];
    };
    for (const auto& t : b)
      for (Eigen::Index j = 0; j < m; ++j)
        if (u(t.col(), j) != 0.0) at(t.row(), j).add_product(t.value(), u(t.col(), j));
    for (const auto& t : g)
      for (Eigen::Index j = 0; j < m; ++j) {
        at(t.row(), j).add_product(-t.value(), x(t.col(), j));
        at(t.row(), j).add_product(-t.value(), x_lo(t.col(), j));
      }
    Eigen::MatrixXd residual(n, m);
    for (Eigen::Index j = 0; j < m; ++j)
      for (Eigen::Index i = 0; i < n; ++i) residual(i, j) = at(i, j).value();
    const Eigen::MatrixXd correction = solver.solve(residual);
    if (!correction.allFinite()) break;
    x_lo += correction;
    bool converged = true;
    for (Eigen::Index j = 0; j < m; ++j) {
      const double size = x.col(j).lpNorm<Eigen::Infinity>();
      const double change = correction.col(j).lpNorm<Eigen::Infinity>();
      error[static_cast<std::size_t>(j)] = size > 0.0 ? change / size : 0.0;
      converged = converged && change <= kDoubleDouble * size;
    }
    if (converged) break;
  }
  return error;
}

double evaluate_compensated(const LinearForm& form, const Eigen::VectorXd& x, const Eigen::VectorXd& x_lo,
                            const Eigen::VectorXd& u) {
  Compensated sum;
  for (auto [i, c] : form.unknowns) {
    sum.add_product(c, x[i]);
    sum.add_product(c, x_lo[i]);
  }
  for (auto [j, d] : form.inputs) sum.add_product(d, u[j]);
  return sum.value();
}

}  // namespace netfold
