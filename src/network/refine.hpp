#pragma once
// Internal: solutions of the nodal equations G·X = B·U to about double-double accuracy, for
// the quantities that are small differences of large terms (a capacitor's current through
// its 10 mΩ ESR beside a 10 GΩ leak: R_th lost entirely, or 1e-5 off, in plain double).
//
// Mixed-precision iterative refinement against the unsummed stamps: the residual
// R = B·U − G·(X + X_lo) is computed in compensated arithmetic from each element's own stamp,
// so a conductance 1e12 below its neighbours still counts (the assembled, summed G has lost
// it to 1e-4), and G·D = R is solved with the factorization at hand. Each step gains about
// cond(G)·ε; the last correction's size is the error estimate.

#include <vector>

#include <Eigen/Dense>

#include "netfold/mna.hpp"
#include "network/linear_solver.hpp"

namespace netfold {

/// An unevaluated sum hi + lo, |lo| ≤ ulp(hi)/2: about 32 significant digits. TwoProduct with
/// fma and TwoSum (T. Ogita, S. M. Rump, S. Oishi, "Accurate sum and dot product", SIAM J. Sci.
/// Comput. 26, 2005).
struct Compensated {
  double hi = 0.0, lo = 0.0;
  void add_product(double a, double b) {
    const double p = a * b;
    const double p_err = std::fma(a, b, -p);
    add(p);
    lo += p_err;
  }
  void add(double v) {
    const double s = hi + v;
    const double z = s - hi;
    lo += (hi - (s - z)) + (v - z);
    hi = s;
  }
  double value() const { return hi + lo; }
};

/// Refinement of at most this many steps.
inline constexpr int kRefinementSteps = 4;
/// Relative precision of a double-double sum, ~ε².
inline constexpr double kDoubleDouble = 1e-30;

/// X solves G·X = B·U (U: inputs × columns) in plain double; refines it to X + X_lo and returns
/// per column the relative size of the last correction (the error estimate of X + X_lo).
std::vector<double> refine_solution(const NodalSystem& system, const LinearSolver& solver, const Eigen::MatrixXd& u,
                                    const Eigen::MatrixXd& x, Eigen::MatrixXd& x_lo);

/// Stamps of G or B as a list: (row, column, value), repeated positions adding up.
using Stamps = std::vector<Eigen::Triplet<double>>;

/// The same for a system given by its stamps (g of G, b of B).
std::vector<double> refine_solution(const Stamps& g, const Stamps& b, const LinearSolver& solver,
                                    const Eigen::MatrixXd& u, const Eigen::MatrixXd& x, Eigen::MatrixXd& x_lo);

/// Σ c_i·(x_i + x_lo_i) + Σ d_j·u_j of a form, in compensated arithmetic.
double evaluate_compensated(const LinearForm& form, const Eigen::VectorXd& x, const Eigen::VectorXd& x_lo,
                            const Eigen::VectorXd& u);

}  // namespace netfold
