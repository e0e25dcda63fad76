// The real Schur form A = Z·T·Zᵀ for the modal decomposition (modal_basis.hpp).
//
// Eigen's RealSchur spends 85 % of a 1000-state decomposition applying its 3-element reflectors
// through generic block expressions, row by row in column-major storage. This is the same
// algorithm — Hessenberg reduction (Eigen's), then Francis double-shift QR sweeps with
// deflation (G. H. Golub & C. F. Van Loan, Matrix Computations, 3rd ed., Alg. 7.5.1–7.5.2; from
// memory) — with each reflector applied in one fused pass: from the left three contiguous entries
// per column, from the right three columns walked together. 2×2 blocks with real eigenvalues are
// split by the rotation onto an eigenvector, so that every 2×2 block left holds a complex pair.

#include "response/real_schur.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include <Eigen/Eigenvalues>

namespace netfold::response {

namespace {

constexpr double kEps = std::numeric_limits<double>::epsilon();

// A reflector I − τ·v·vᵀ with v = (1, v1[, v2]) that maps (x, y[, z]) onto a multiple of e₁.
struct Reflector {
  double tau = 0.0, v1 = 0.0, v2 = 0.0;
  bool identity = true;
};

Reflector make_reflector(double x, double y, double z) {
  Reflector r;
  const double norm = std::sqrt(x * x + y * y + z * z);
  if (y == 0.0 && z == 0.0) return r;
  const double alpha = x > 0.0 ? -norm : norm;
  const double u0 = x - alpha;
  r.v1 = y / u0;
  r.v2 = z / u0;
  r.tau = (alpha - x) / alpha;
  r.identity = false;
  return r;
}

// Rows k..k+2 (or k..k+1 when `Three` is false) of columns [c0, c1) from the left.
template <bool Three>
void apply_left(Eigen::MatrixXd& h, const Reflector& r, Eigen::Index k, Eigen::Index c0, Eigen::Index c1) {
  for (Eigen::Index j = c0; j < c1; ++j) {
    double* col = &h(k, j);
    const double s = r.tau * (col[0] + r.v1 * col[1] + (Three ? r.v2 * col[2] : 0.0));
    col[0] -= s;
    col[1] -= s * r.v1;
    if constexpr (Three) col[2] -= s * r.v2;
  }
}

// Columns k..k+2 (or k..k+1) of rows [0, rows) from the right; the columns do not overlap, so
// the loop vectorises.
template <bool Three>
void apply_right(Eigen::MatrixXd& m, const Reflector& r, Eigen::Index k, Eigen::Index rows) {
  double* __restrict a = &m(0, k);
  double* __restrict b = &m(0, k + 1);
  double* __restrict c = Three ? &m(0, k + 2) : nullptr;
  const double tau = r.tau, v1 = r.v1, v2 = r.v2;
  for (Eigen::Index i = 0; i < rows; ++i) {
    double s = a[i] + v1 * b[i];
    if constexpr (Three) s += v2 * c[i];
    s *= tau;
    a[i] -= s;
    b[i] -= s * v1;
    if constexpr (Three) c[i] -= s * v2;
  }
}

// One Francis double-shift sweep over the active block [l, p], shifts given by their sum s and
// product t; the whole of T and Z is updated (a full Schur form, not only eigenvalues).
void francis_sweep(Eigen::MatrixXd& h, Eigen::MatrixXd& z, Eigen::Index l, Eigen::Index p, double s, double t) {
  const Eigen::Index n = h.rows();
  double x = h(l, l) * h(l, l) + h(l, l + 1) * h(l + 1, l) - s * h(l, l) + t;
  double y = h(l + 1, l) * (h(l, l) + h(l + 1, l + 1) - s);
  double w = h(l + 1, l) * h(l + 2, l + 1);
  for (Eigen::Index k = l; k + 2 <= p; ++k) {
    const Reflector r = make_reflector(x, y, w);
    if (!r.identity) {
      apply_left<true>(h, r, k, std::max(l, k - 1), n);
      apply_right<true>(h, r, k, std::min(k + 3, p) + 1);
      if (z.size() > 0) apply_right<true>(z, r, k, n);
    }
    if (k > l) h(k + 1, k - 1) = h(k + 2, k - 1) = 0.0;  // the bulge moved on
    x = h(k + 1, k);
    y = h(k + 2, k);
    if (k + 3 <= p) w = h(k + 3, k);
  }
  const Reflector r = make_reflector(x, y, 0.0);
  if (!r.identity) {
    apply_left<false>(h, r, p - 1, p - 2, n);
    apply_right<false>(h, r, p - 1, p + 1);
    if (z.size() > 0) apply_right<false>(z, r, p - 1, n);
  }
  h(p, p - 2) = 0.0;
}

// A deflated 2×2 block at (k, k+1) with real eigenvalues becomes triangular: rotate onto the
// eigenvector (λ − d, c) of [[a, b], [c, d]], λ = (a + d)/2 + sign(p)·√q taken away from d.
void split_real_pair(Eigen::MatrixXd& h, Eigen::MatrixXd& z, Eigen::Index k) {
  const Eigen::Index n = h.rows();
  const double a = h(k, k), b = h(k, k + 1), c = h(k + 1, k), d = h(k + 1, k + 1);
  const double p = 0.5 * (a - d), q = p * p + b * c;
  if (q < 0.0 || c == 0.0) return;  // a complex pair stays a 2×2 block
  const double v0 = p + (p >= 0.0 ? std::sqrt(q) : -std::sqrt(q)), v1 = c;
  const double r = std::hypot(v0, v1);
  const double cs = v0 / r, sn = v1 / r;
  for (Eigen::Index j = k; j < n; ++j) {  // Gᵀ from the left
    const double x = h(k, j), y = h(k + 1, j);
    h(k, j) = cs * x + sn * y;
    h(k + 1, j) = -sn * x + cs * y;
  }
  auto rotate = [&](Eigen::MatrixXd& m, Eigen::Index rows) {  // G from the right
    for (Eigen::Index i = 0; i < rows; ++i) {
      const double x = m(i, k), y = m(i, k + 1);
      m(i, k) = cs * x + sn * y;
      m(i, k + 1) = -sn * x + cs * y;
    }
  };
  rotate(h, k + 2);
  if (z.size() > 0) rotate(z, n);
  h(k + 1, k) = 0.0;
}

}  // namespace

bool real_schur(const Eigen::MatrixXd& a, Eigen::MatrixXd& t, Eigen::MatrixXd& z, bool vectors) {
  const Eigen::Index n = a.rows();
  Eigen::HessenbergDecomposition<Eigen::MatrixXd> hess(a);
  t = hess.matrixH();
  z = vectors ? Eigen::MatrixXd(hess.matrixQ()) : Eigen::MatrixXd();
  const double norm = std::max(t.cwiseAbs().maxCoeff(), std::numeric_limits<double>::min());
  Eigen::Index p = n - 1, iter = 0, total = 0;
  const Eigen::Index max_total = 40 * std::max<Eigen::Index>(n, 1);
  while (p >= 1) {
    Eigen::Index l = p;  // the top of the active block: below a negligible subdiagonal entry
    for (; l > 0; --l) {
      double scale = std::fabs(t(l - 1, l - 1)) + std::fabs(t(l, l));
      if (scale == 0.0) scale = norm;
      if (std::fabs(t(l, l - 1)) <= kEps * scale) break;
    }
    if (l > 0) t(l, l - 1) = 0.0;
    if (l == p) {
      --p;
      iter = 0;
    } else if (l == p - 1) {
      split_real_pair(t, z, p - 1);
      p -= 2;
      iter = 0;
    } else {
      if (++total > max_total) return false;
      ++iter;
      double s = t(p - 1, p - 1) + t(p, p);
      double prod = t(p - 1, p - 1) * t(p, p) - t(p - 1, p) * t(p, p - 1);
      if (iter % 10 == 0) {  // exceptional shifts break a cycle
        const double w = std::fabs(t(p, p - 1)) + std::fabs(t(p - 1, p - 2));
        s = 1.5 * w;
        prod = w * w;
      }
      francis_sweep(t, z, l, p, s, prod);
    }
  }
  for (Eigen::Index j = 0; j < n; ++j)
    for (Eigen::Index i = j + 2; i < n; ++i) t(i, j) = 0.0;
  return true;
}

}  // namespace netfold::response
