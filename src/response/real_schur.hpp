#pragma once
// The real Schur form of a state matrix (real_schur.cpp). Private.
#include <Eigen/Dense>

namespace netfold::response {

/// A = Z·T·Zᵀ, Z orthogonal, T quasi upper triangular whose 2×2 diagonal blocks each hold a
/// complex-conjugate pair (real pairs are split). False when the QR iteration did not converge
/// within 40 sweeps per eigenvalue. Without `vectors`, Z is left empty (eigenvalues only).
bool real_schur(const Eigen::MatrixXd& a, Eigen::MatrixXd& t, Eigen::MatrixXd& z, bool vectors = true);

}  // namespace netfold::response
