#pragma once
// The exact response of n states over one segment: the n-state successor of `state_wave`.
// Private to the library (Eigen types).
//
//     dx/dt = A·x + B·u(t),   x(t0) = x0,   u_i(t) = dc_i + Σ_m Re(U_im·e^{j·2π·f_m·t})
//
//   x  n states (capacitor voltages V, inductor currents A)   A  n×n, 1/s
//   u  m inputs (source values)                              B  n×m
//
// Method, and why. The state matrix is balanced, brought to complex Schur form, and split into
// clusters of nearly equal eigenvalues that are decoupled by Sylvester equations (modal_basis.hpp).
// Within a cluster of centre μ the exponential is e^{μs}·Σ_k (N·s)^k/k!, N = T_c − μ·I, summed
// until the term is below rounding over the segment: that gives exactly the s^k·e^{μs} terms of
// repeated and nearly repeated eigenvalues (critical damping, defective and nearly defective
// matrices), with no division by an eigenvalue gap. A forcing at rate z (0 for DC, jω for a
// phasor) is solved as a particular solution (z·I − T_c)⁻¹·b_c where it is far from the cluster,
// and otherwise carried inside the cluster: as the exact term b·e^{zs}·φ(λ − z, s) for a single
// mode (drift of a capacitor with no DC path at λ = 0, resonant growth s·e^{jωs} at λ = jω, and
// everything between, with expm1 accuracy), or as an extra state of the cluster's triangular
// matrix when the cluster has several modes. The real response is the real part of the complex
// one (A and B real; only positive frequencies are forced).
//
// Rejected: a plain eigenvector formula (divides by eigenvalue gaps: fails at critical damping
// and loses digits near it); Eigen's MatrixBase::exp() (a matrix, not the terms of a closed
// form, and unbalanced it returns wrong figures on badly scaled matrices such as a 1 H coil
// with a 10 nF snubber); Schur–Parlett matrixFunction (accurate, used by the tests as a
// reference, but it too gives a matrix for one time, not terms).
//
// Condition: the estimated relative error is 16·ε·κ₁(V)·(largest cancellation of a cluster's
// series, Σ‖term‖/‖sum‖ at s = L). Above `max_relative_error` (1e-8) the response is flagged
// and carries a reason; callers print no figure from it.
//
// Accuracy measured: largest error over the segment relative to the largest value of each
// case; tests/test_modal.cpp against analytic or long-double references, and
// tests/scipy_modal_check.py against SciPy (expm on the balanced augmented matrix / Radau at
// rtol 1e-12; where they differ, the smaller is SciPy's own error).
//   1 H, 10 Ω coil opening into a 10 nF snubber, analytic 2×2          3.0e-15  (SciPy 3.3e-15)
//   critically damped series RLC, analytic (V/L)·t·e^{−αt}             4.3e-16  (SciPy 3.4e-15)
//   λ = 0 drift of two capacitors, charge conservation                 1.9e-16  (SciPy 1.9e-15)
//   leak of 1e15 Ω (τ = 1e9 s over 1 s), expm1 form                    2.3e-16
//   resonance (U·ω/2)·t·sin ωt, one tank / two identical tanks         5.8e-16 / 2.8e-14
//                                                                        (SciPy Radau 1.5e-13)
//   10⁹ stiffness spread, badly scaled, analytic modes                 4.4e-15  (SciPy Radau 1.9e-15)
//   nearly defective 3×3, eigenvalues 1e-9 apart, long-double expm     9.3e-16  (SciPy 2.7e-15)
//   coupled pair 1e-4 apart with coupling 1e6 (merged cluster)         4.7e-16
//   200-state random stable system, long-double expm                   6.2e-15  (SciPy 1.0e-13)
// The estimate is pessimistic where the eigenvector condition is large but harmless (200
// random states: estimate 5e-11, measured 6e-15). The real Schur form is the project's own
// (real_schur.hpp: the same Francis QR as Eigen's RealSchur, twice as fast at 1000 states).

#include <complex>
#include <memory>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "netfold/closed_form.hpp"
#include "response/modal_basis.hpp"
#include "response/terms.hpp"

namespace netfold::response {

/// Options of the modal solution.
struct ModalOptions {
  double max_relative_error = 1e-8;  ///< above this estimate the result is flagged
};

/// Whether a result can be vouched for, and if not why.
struct Accuracy {
  bool ok = true;                ///< the estimate is within the limit
  double estimated_error = 0.0;  ///< estimated relative error
  std::string reason;            ///< empty when ok
};

/// One natural mode, for reports. A complex pair is listed once (Im λ > 0).
struct Mode {
  std::complex<double> eigenvalue;  ///< λ, 1/s
  int multiplicity = 1;             ///< how many times λ repeats (to 1e-6 relative)
  bool oscillatory = false;         ///< a complex pair
  double time_constant = 0.0;       ///< s: −1/Re λ (decay time constant 1/α of a pair); +∞ when
                                    ///< Re λ = 0; negative for a growing mode
  double damped_frequency = 0.0;    ///< f_d = Im λ/2π, Hz (pairs)
  double natural_frequency = 0.0;   ///< f_n = |λ|/2π, Hz (pairs)
  double damping_ratio = 0.0;       ///< ζ = −Re λ/|λ| (pairs)
};

/// The modes of a decomposed state matrix, slowest first.
std::vector<Mode> modes_of(const ModalBasis& basis);

/// The modes of a state matrix, slowest first.
std::vector<Mode> modes_of(const Eigen::MatrixXd& a);

/// One term shape with its coefficients in the modal coordinates of one cluster.
struct ModalTerm {
  Term shape;              ///< c unused (1)
  Eigen::Index begin = 0;  ///< the cluster's first modal coordinate
  Eigen::VectorXcd coef;   ///< the coefficient of each of the cluster's coordinates
};

/// The responses of every state of one segment, and of any output y = C·x + D·u. Kept in modal
/// coordinates: an output costs O(n²) once (its row c·D·Q·V), then O(1) per term.
class ModalResponse {
 public:
  /// Number of states.
  int states() const { return basis_ ? basis_->n : 0; }
  /// The response of state i.
  Response state(int i) const;
  /// The response of y = c·x + d·u(t) (c: n entries, d: m entries).
  Response output(const Eigen::RowVectorXd& c, const Eigen::RowVectorXd& d) const;
  /// Every state at time t.
  Eigen::VectorXd value(double t) const;
  /// Whether the figures can be vouched for.
  const Accuracy& accuracy() const { return accuracy_; }
  /// The natural modes of the segment, slowest first.
  const std::vector<Mode>& modes() const { return modes_; }
  /// The segment, s.
  double t0() const { return t0_; }
  double t1() const { return t1_; }

 private:
  friend ModalResponse solve_modal(std::shared_ptr<const ModalBasis>, const Eigen::MatrixXd&, const Eigen::VectorXd&,
                                   const std::vector<Drive>&, double, double, const ModalOptions&);
  Response assemble(const Eigen::RowVectorXcd& row) const;

  std::shared_ptr<const ModalBasis> basis_;
  double t0_ = 0.0, t1_ = 0.0;
  Eigen::VectorXcd dc_;                                       ///< DC particular solution, modal
  std::vector<std::pair<double, Eigen::VectorXcd>> phasors_;  ///< frequency (Hz), phasor, modal
  std::vector<ModalTerm> terms_;
  std::vector<Drive> inputs_;
  bool local_ = false;
  Accuracy accuracy_;
  std::vector<Mode> modes_;
};

/// The exact response over [t0, t1] with a decomposition made for span t1 − t0 (reused across
/// initial states and forcings of the same matrix).
ModalResponse solve_modal(std::shared_ptr<const ModalBasis> basis, const Eigen::MatrixXd& b, const Eigen::VectorXd& x0,
                          const std::vector<Drive>& inputs, double t0, double t1, const ModalOptions& options = {});

/// The exact response over [t0, t1] of dx/dt = A·x + B·u(t), x(t0) = x0, inputs[i] = u_i(t).
ModalResponse solve_modal(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b, const Eigen::VectorXd& x0,
                          const std::vector<Drive>& inputs, double t0, double t1, const ModalOptions& options = {});

/// e^{A·span}: the state-transition matrix over `span` (the monodromy matrix Φ over one period).
Eigen::MatrixXd transition_matrix(const ModalBasis& basis, double span, Accuracy* accuracy = nullptr);

/// The state that repeats after one period.
struct PeriodicState {
  Eigen::VectorXd x;       ///< x* = (I − Φ)⁻¹·β
  double condition = 1.0;  ///< estimate of ‖(I − Φ)⁻¹‖₁·(1 + ‖Φ‖₁)
  Accuracy accuracy;
};

/// x* with x* = Φ·x* + β, Φ the one-period transition matrix and β the state one period after
/// starting from 0 (the forced part). Flagged when I − Φ is singular or too ill-conditioned (a
/// mode that neither decays nor is forced at a different rate: no unique periodic state).
PeriodicState periodic_state(const Eigen::MatrixXd& phi, const Eigen::VectorXd& beta, const ModalOptions& options = {});

}  // namespace netfold::response
