// The modes of a state matrix for reports, the state-transition matrix over a span, and the
// periodic steady state from the one-period map (modal.hpp).

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <limits>
#include <numbers>

#include <Eigen/LU>

#include "response/modal.hpp"
#include "response/real_schur.hpp"

namespace netfold::response {

namespace {

constexpr double kEps = std::numeric_limits<double>::epsilon();
constexpr double kTwoPi = 2.0 * std::numbers::pi;

Mode mode_of(Complex lambda) {
  Mode m;
  m.eigenvalue = lambda;
  const double re = lambda.real(), im = lambda.imag();
  m.time_constant = re == 0.0 ? std::numeric_limits<double>::infinity() : -1.0 / re;
  m.oscillatory = im != 0.0;
  if (m.oscillatory) {
    m.damped_frequency = im / kTwoPi;
    m.natural_frequency = std::abs(lambda) / kTwoPi;
    m.damping_ratio = -re / std::abs(lambda);
  }
  return m;
}

// One mode per eigenvalue with Im ≥ 0 (conjugates are exact, modal_basis.hpp), equal ones to
// 1e-6 relative counted once, slowest (largest real part) first.
std::vector<Mode> modes_from(std::vector<Complex> lambdas) {
  std::erase_if(lambdas, [](Complex l) { return l.imag() < 0.0; });
  std::sort(lambdas.begin(), lambdas.end(),
            [](Complex a, Complex b) { return a.real() != b.real() ? a.real() > b.real() : a.imag() < b.imag(); });
  std::vector<Mode> modes;
  for (Complex l : lambdas) {
    if (!modes.empty() && rates_close(modes.back().eigenvalue, l, 0.0)) {
      ++modes.back().multiplicity;
      continue;
    }
    modes.push_back(mode_of(l));
  }
  return modes;
}

}  // namespace

std::vector<Mode> modes_of(const ModalBasis& basis) {
  std::vector<Complex> lambdas;
  for (int i = 0; i < basis.n; ++i) lambdas.push_back(basis.eigenvalue(i));
  return modes_from(std::move(lambdas));
}

std::vector<Mode> modes_of(const Eigen::MatrixXd& a) {
  Eigen::MatrixXd ab = a;
  balance(ab);
  Eigen::MatrixXd t, unused;
  if (!ab.allFinite() || !real_schur(ab, t, unused, false)) return {};
  const double floor = 8.0 * static_cast<double>(a.rows()) * kEps * ab.norm();
  std::vector<Complex> lambdas;
  for (Eigen::Index i = 0; i < t.rows(); ++i) {
    if (i + 1 < t.rows() && t(i + 1, i) != 0.0) {  // a complex pair, as in make_complex
      const double p = 0.5 * (t(i, i) - t(i + 1, i + 1));
      const double im = std::sqrt(std::max(-(p * p + t(i, i + 1) * t(i + 1, i)), 0.0));
      const double re = std::fabs(t(i + 1, i + 1) + p) <= floor ? 0.0 : t(i + 1, i + 1) + p;
      lambdas.emplace_back(re, im);
      lambdas.emplace_back(re, -im);
      ++i;
    } else {
      lambdas.emplace_back(std::fabs(t(i, i)) <= floor ? 0.0 : t(i, i), 0.0);
    }
  }
  return modes_from(std::move(lambdas));
}

Eigen::MatrixXd transition_matrix(const ModalBasis& basis, double span, Accuracy* accuracy) {
  const Eigen::Index n = basis.n;
  // S = D·Q·V, then S·blockdiag(e^{T_c·span})·S⁻¹.
  const Eigen::MatrixXcd s =
      basis.scale.cast<Complex>().asDiagonal() * (basis.q * basis.v.triangularView<Eigen::UnitUpper>());
  Eigen::MatrixXcd se = Eigen::MatrixXcd::Zero(n, n);
  double amplification = 1.0;
  bool converged = true;
  for (const auto& cl : basis.clusters) {
    const Eigen::Index b = cl.begin, p = cl.size();
    Eigen::MatrixXcd e;
    if (p == 1) {
      e = Eigen::MatrixXcd::Constant(1, 1, std::exp(basis.t(b, b) * span));
    } else {
      const auto series = exponential_series(basis.t.block(b, b, p, p), Eigen::MatrixXcd::Identity(p, p), p, span);
      e = Eigen::MatrixXcd::Zero(p, p);
      for (std::size_t k = 0; k < series.coefs.size(); ++k)
        e += series.coefs[k] * std::pow(span, static_cast<double>(k));
      e *= std::exp(series.centre * span);
      amplification = std::max(amplification, series.amplification);
      converged = converged && series.converged;
    }
    se.middleCols(b, p) = s.middleCols(b, p) * e;
  }
  // Φ = S·E·S⁻¹, S⁻¹ = V⁻¹·Q*·D⁻¹.
  Eigen::MatrixXcd x = basis.v.triangularView<Eigen::UnitUpper>().solve<Eigen::OnTheRight>(se);
  x = x * basis.q.adjoint();
  const Eigen::VectorXd inverse_scale = basis.scale.cwiseInverse();
  Eigen::MatrixXd phi = (x * inverse_scale.cast<Complex>().asDiagonal()).real();
  if (accuracy) {
    accuracy->estimated_error = 16.0 * kEps * basis.condition * amplification;
    accuracy->reason = !basis.ok    ? basis.reason
                       : !converged ? "the series of a cluster of nearly equal modes did not converge over the span"
                                    : "";
    accuracy->ok = accuracy->reason.empty();
  }
  return phi;
}

PeriodicState periodic_state(const Eigen::MatrixXd& phi, const Eigen::VectorXd& beta, const ModalOptions& options) {
  PeriodicState out;
  const Eigen::Index n = phi.rows();
  const Eigen::MatrixXd m = Eigen::MatrixXd::Identity(n, n) - phi;
  Eigen::PartialPivLU<Eigen::MatrixXd> lu(m);
  const double rcond = lu.rcond();
  // Φ is known to rounding relative to its own size, not to that of I − Φ (which vanishes for an
  // undamped mode): the amplification is ‖(I − Φ)⁻¹‖·(1 + ‖Φ‖).
  const double m_norm = m.cwiseAbs().colwise().sum().maxCoeff();
  const double phi_norm = phi.cwiseAbs().colwise().sum().maxCoeff();
  out.condition =
      rcond > 0.0 && m_norm > 0.0 ? (1.0 + phi_norm) / (rcond * m_norm) : std::numeric_limits<double>::infinity();
  out.accuracy.estimated_error = 4.0 * kEps * out.condition;
  if (!std::isfinite(out.condition) || !phi.allFinite() || !beta.allFinite()) {
    out.x = Eigen::VectorXd::Zero(n);
    out.accuracy.reason =
        "the one-period map has an eigenvalue at 1 (a mode that neither decays nor grows): no unique periodic state";
  } else {
    out.x = lu.solve(beta);
    if (!out.x.allFinite() || out.accuracy.estimated_error > options.max_relative_error)
      out.accuracy.reason = fmt::format(
          "the one-period map has an eigenvalue near 1 (a mode that barely decays over a period): "
          "condition {:.1e}, estimated relative error {:.1e} > {:.0e}",
          out.condition, out.accuracy.estimated_error, options.max_relative_error);
  }
  out.accuracy.ok = out.accuracy.reason.empty();
  return out;
}

}  // namespace netfold::response
