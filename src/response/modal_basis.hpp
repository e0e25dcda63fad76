#pragma once
// The decomposition behind the modal closed form (modal.hpp): a block-diagonal form of the
// state matrix, made of clusters of nearly equal eigenvalues, computed once per state matrix and
// segment length and reused for every initial state and forcing (sweeps). Private.
//
//     A = D·Q·V · blockdiag(T_c) · V⁻¹·Q*·D⁻¹,    x = D·Q·V·y
//
//   D  diagonal balancing, powers of 2 (exact), so that rows and columns of D⁻¹·A·D have
//      comparable norms (Parlett & Reinsch, Numer. Math. 13, 1969; from memory)
//   Q  unitary: the complex Schur vectors of the balanced matrix (real Schur form by
//      real_schur.hpp, turned complex 2×2 block by 2×2 block so that conjugate eigenvalues stay
//      exactly conjugate), reordered so that each cluster is contiguous (Givens swaps of
//      neighbours)
//   V  unit upper triangular: the Sylvester solutions that decouple the clusters
//      (Bavely & Stewart, Numer. Math. 32, 1979; from memory)
//   T_c  the cluster's upper-triangular diagonal block of the Schur form
//
// Clusters: two eigenvalues join when |λᵢ − λⱼ| ≤ 1e-6·max(|λᵢ|, |λⱼ|) (separating them would
// amplify rounding by up to the inverse gap); their exponentials are then expanded together as
// e^{μs}·Σ (N·s)^k/k!, N = T_c − μ·I. After the Sylvester solutions are known, two clusters
// whose coupling block of V exceeds max(1e3, e^{2R}) are merged as well, R the merged cluster's
// radius times L (the series' cancellation is at most e^{2R}): whichever of the two costs less
// accuracy is taken. Eigenvalues that are merely close compared with 1/L are not joined: where
// the Schur form couples them weakly their separation costs nothing (a first version joined them
// and, in a random 200-state matrix, chained most modes into one long series). Real parts of eigenvalues
// below the backward error of the Schur form (8·n·ε·‖A‖) are set to 0, so that a lossless or
// DC-isolated mode is exactly undamped (rounding would otherwise make it grow or decay); for the
// same reason a forcing rate within that distance of a mode is taken as exactly resonant.

#include <complex>
#include <string>
#include <vector>

#include <Eigen/Dense>

namespace netfold::response {

/// A contiguous range of the Schur form whose eigenvalues are expanded together.
struct Cluster {
  int begin = 0, end = 0;  ///< rows/columns [begin, end)
  int size() const { return end - begin; }
};

/// The block-diagonal form of one state matrix for segments of one length (see the file comment).
struct ModalBasis {
  int n = 0;              ///< number of states
  double span = 0.0;      ///< segment length L the clusters were chosen for, s
  Eigen::VectorXd scale;  ///< D
  Eigen::MatrixXcd q;     ///< Q
  Eigen::MatrixXcd t;     ///< the Schur form (upper triangular); its diagonal blocks are T_c
  Eigen::MatrixXcd v;     ///< V (unit upper triangular)
  std::vector<Cluster> clusters;
  double condition = 1.0;  ///< estimate of ‖V‖₁·‖V⁻¹‖₁
  double rounding = 0.0;   ///< 8·n·ε·‖D⁻¹AD‖: eigenvalues are known to this, 1/s
  bool ok = true;          ///< false when the Schur form could not be computed
  std::string reason;      ///< why, when not ok

  /// The eigenvalue at position i of the Schur form, 1/s.
  std::complex<double> eigenvalue(int i) const { return t(i, i); }
  /// y = V⁻¹·Q*·D⁻¹·x: modal coordinates of a state vector.
  Eigen::VectorXcd to_modal(const Eigen::VectorXcd& x) const;
  /// x = D·Q·V·y: the state vector of modal coordinates.
  Eigen::VectorXcd to_state(const Eigen::VectorXcd& y) const;
  /// c·D·Q·V: the row that takes modal coordinates to the output c·x.
  Eigen::RowVectorXcd output_row(const Eigen::RowVectorXcd& c) const;
};

/// Whether two eigenvalues are too close to be separated (1e-6 relative, or equal).
bool modes_close(std::complex<double> a, std::complex<double> b);

/// Whether a forcing rate z (0 or jω) is near an eigenvalue over a span L: |λ − z|·L ≤ 1, or
/// modes_close. Such a forcing is carried inside the mode's solution instead of being divided by
/// λ − z.
bool rates_close(std::complex<double> a, std::complex<double> b, double span);

/// Decomposes the state matrix `a` (n×n, real) for segments of length `span` (s).
ModalBasis decompose(const Eigen::MatrixXd& a, double span);

/// The exponential of a cluster's triangular matrix M applied to v, as a series about the centre
/// μ = trace(M)/size: e^{M·s}·v = e^{μs}·Σ_k coefs[k]·s^k over s ∈ [0, span].
struct ClusterSeries {
  std::complex<double> centre;          ///< μ, 1/s
  std::vector<Eigen::MatrixXcd> coefs;  ///< the first `rows` rows of (M − μI)^k·v/k!
  double amplification = 1.0;           ///< Σ_k ‖coef_k‖·L^k / ‖sum at s = 0 or L‖ (cancellation)
  bool converged = true;                ///< the terms fell below rounding within the cap
};

/// Sums the series until a term is below rounding over [0, span] (two in a row), keeping `rows`
/// rows of each coefficient; stops where span^k would leave double range.
ClusterSeries exponential_series(const Eigen::MatrixXcd& m, const Eigen::MatrixXcd& v, Eigen::Index rows, double span);

/// Balances `a` in place (D⁻¹·A·D) and returns D.
Eigen::VectorXd balance(Eigen::MatrixXd& a);

}  // namespace netfold::response
