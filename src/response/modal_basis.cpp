#include "response/modal_basis.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <numeric>

#include <Eigen/Eigenvalues>

#include "response/real_schur.hpp"

namespace netfold::response {

namespace {

using Complex = std::complex<double>;
constexpr double kEps = std::numeric_limits<double>::epsilon();
constexpr double kSpanGap = 1.0;        // |λ − z|·L below which a forcing joins a mode
constexpr double kRelativeGap = 1e-6;   // |λᵢ − λⱼ|/|λ| below which they are never separated
constexpr double kCouplingFloor = 1e3;  // a coupling in V below which clusters stay apart
constexpr int kMergeRounds = 8;

// Real Schur form → complex Schur form, one 2×2 block at a time (as rsf2csf does): a unitary
// rotation that triangularises the block, with the two eigenvalues written back exactly
// conjugate, so that the two halves of an oscillatory mode are found equal later.
void make_complex(Eigen::MatrixXcd& t, Eigen::MatrixXcd& q) {
  const Eigen::Index n = t.rows();
  for (Eigen::Index m = n - 1; m >= 1; --m) {
    const Eigen::Index k = m - 1;
    const double c = t(m, k).real();
    if (c == 0.0) continue;
    const double a = t(k, k).real(), b = t(k, m).real(), d = t(m, m).real();
    // The eigenvalues of [[a, b], [c, d]], b·c < 0: (a + d)/2 ± j·√(−(p² + b·c)), scaled.
    const double p = 0.5 * (a - d);
    const double bc_max = std::max(std::fabs(b), std::fabs(c));
    const double bc_mis = std::min(std::fabs(b), std::fabs(c)) * (b < 0 ? -1.0 : 1.0) * (c < 0 ? -1.0 : 1.0);
    const double sc = std::max(std::fabs(p), bc_max);
    const double zz = p / sc * p + bc_max / sc * bc_mis;
    const double im = std::sqrt(sc) * std::sqrt(std::max(-zz, 0.0));
    const Complex lambda(d + p, im);
    const Complex mu = lambda - d;
    const double r = std::hypot(std::abs(mu), c);
    const Complex cs = mu / r;
    const double sn = c / r;
    for (Eigen::Index j = k; j < n; ++j) {  // rows k, m ← G·rows, G = [[cs*, sn], [−sn, cs]]
      const Complex x = t(k, j), y = t(m, j);
      t(k, j) = std::conj(cs) * x + sn * y;
      t(m, j) = -sn * x + cs * y;
    }
    auto rotate_columns = [&](Eigen::MatrixXcd& mat, Eigen::Index rows) {  // columns ← columns·G*
      for (Eigen::Index i = 0; i < rows; ++i) {
        const Complex x = mat(i, k), y = mat(i, m);
        mat(i, k) = x * cs + y * sn;
        mat(i, m) = -x * sn + y * std::conj(cs);
      }
    };
    rotate_columns(t, m + 1);
    rotate_columns(q, n);
    t(m, k) = 0.0;
    t(k, k) = lambda;
    t(m, m) = std::conj(lambda);
  }
}

// Swaps the neighbouring eigenvalues at k and k + 1 of the complex Schur form by one Givens
// rotation (the step of LAPACK's ztrexc).
void swap_neighbours(Eigen::MatrixXcd& t, Eigen::MatrixXcd& q, Eigen::Index k) {
  const Eigen::Index n = t.rows();
  const Complex t11 = t(k, k), t22 = t(k + 1, k + 1);
  const Complex f = t(k, k + 1), g = t22 - t11;
  double cs = 1.0;
  Complex sn = 0.0;
  if (g != Complex(0.0, 0.0)) {
    if (f == Complex(0.0, 0.0)) {
      cs = 0.0;
      sn = std::conj(g) / std::abs(g);
    } else {
      const double rho = std::hypot(std::abs(f), std::abs(g));
      cs = std::abs(f) / rho;
      sn = (f / std::abs(f)) * std::conj(g) / rho;
    }
  }
  // rot(x, y, c, s): x ← c·x + s·y, y ← c·y − conj(s)·x.
  for (Eigen::Index j = k + 2; j < n; ++j) {
    const Complex x = t(k, j), y = t(k + 1, j);
    t(k, j) = cs * x + sn * y;
    t(k + 1, j) = cs * y - std::conj(sn) * x;
  }
  const Complex snc = std::conj(sn);
  auto rotate_columns = [&](Eigen::MatrixXcd& mat, Eigen::Index rows) {
    for (Eigen::Index i = 0; i < rows; ++i) {
      const Complex x = mat(i, k), y = mat(i, k + 1);
      mat(i, k) = cs * x + snc * y;
      mat(i, k + 1) = cs * y - sn * x;
    }
  };
  rotate_columns(t, k);
  rotate_columns(q, n);
  t(k, k) = t22;
  t(k + 1, k + 1) = t11;
}

int find_root(std::vector<int>& parent, int i) {
  while (parent[static_cast<std::size_t>(i)] != i) {
    parent[static_cast<std::size_t>(i)] = parent[static_cast<std::size_t>(parent[static_cast<std::size_t>(i)])];
    i = parent[static_cast<std::size_t>(i)];
  }
  return i;
}

// Reorders the Schur form so that positions with the same label are contiguous, in the order
// in which the labels first appear; returns the clusters.
std::vector<Cluster> group_clusters(Eigen::MatrixXcd& t, Eigen::MatrixXcd& q, std::vector<int>& label) {
  const int n = static_cast<int>(label.size());
  std::vector<Cluster> clusters;
  int p = 0;
  while (p < n) {
    const int current = label[static_cast<std::size_t>(p)];
    int end = p + 1;
    for (int j = p + 1; j < n; ++j) {
      if (label[static_cast<std::size_t>(j)] != current) continue;
      for (int k = j - 1; k >= end; --k) {  // bubble j down to position `end`
        swap_neighbours(t, q, k);
        std::swap(label[static_cast<std::size_t>(k)], label[static_cast<std::size_t>(k + 1)]);
      }
      ++end;
    }
    clusters.push_back({p, end});
    p = end;
  }
  return clusters;
}

// V with T·V = V·blockdiag(T_c): column c of a cluster starting at b solves
// (T₁₁ − t_cc·I)·v = V(0:b, b:c)·T(b:c, c) − T(0:b, c), by column-oriented back substitution.
Eigen::MatrixXcd decoupling(const Eigen::MatrixXcd& t, const std::vector<Cluster>& clusters) {
  const Eigen::Index n = t.rows();
  Eigen::MatrixXcd v = Eigen::MatrixXcd::Identity(n, n);
  Eigen::VectorXcd rhs(n);
  for (const auto& cl : clusters) {
    const Eigen::Index b = cl.begin;
    if (b == 0) continue;
    for (Eigen::Index c = b; c < cl.end; ++c) {
      rhs.head(b) = -t.col(c).head(b);
      if (c > b) rhs.head(b) += v.block(0, b, b, c - b) * t.col(c).segment(b, c - b);
      const Complex tcc = t(c, c);
      for (Eigen::Index r = b - 1; r >= 0; --r) {
        const Complex x = rhs(r) / (t(r, r) - tcc);
        v(r, c) = x;
        if (r > 0) rhs.head(r) -= t.col(r).head(r) * x;
      }
    }
  }
  return v;
}

// Hager's estimate of ‖V⁻¹‖₁ (N. J. Higham, Accuracy and Stability of Numerical Algorithms,
// 2nd ed., §15.3; from memory), with triangular solves only.
double inverse_norm_estimate(const Eigen::MatrixXcd& v) {
  const Eigen::Index n = v.rows();
  const auto tri = v.triangularView<Eigen::UnitUpper>();
  Eigen::VectorXcd x = Eigen::VectorXcd::Constant(n, 1.0 / static_cast<double>(n));
  double est = 0.0;
  for (int iter = 0; iter < 5; ++iter) {
    Eigen::VectorXcd y = tri.solve(x);
    const double norm = y.cwiseAbs().sum();
    if (iter > 0 && norm <= est) break;
    est = norm;
    Eigen::VectorXcd xi = y.unaryExpr([](Complex w) { return std::abs(w) > 0 ? w / std::abs(w) : Complex(1.0); });
    Eigen::VectorXcd z = tri.adjoint().solve(xi);
    Eigen::Index j = 0;
    const double zmax = z.cwiseAbs().maxCoeff(&j);
    if (iter > 0 && zmax <= (z.adjoint() * x)(0).real()) break;
    x.setZero();
    x(j) = 1.0;
  }
  return est;
}

// Labels from the closeness rule (union–find over all pairs).
std::vector<int> initial_labels(const Eigen::MatrixXcd& t) {
  const int n = static_cast<int>(t.rows());
  std::vector<int> parent(static_cast<std::size_t>(n));
  std::iota(parent.begin(), parent.end(), 0);
  for (int i = 0; i < n; ++i)
    for (int j = i + 1; j < n; ++j)
      if (modes_close(t(i, i), t(j, j))) parent[static_cast<std::size_t>(find_root(parent, j))] = find_root(parent, i);
  std::vector<int> label(static_cast<std::size_t>(n));
  for (int i = 0; i < n; ++i) label[static_cast<std::size_t>(i)] = find_root(parent, i);
  return label;
}

// Clusters whose coupling in V costs more accuracy than expanding them together; relabels
// them and returns whether any merged.
bool merge_coupled(const Eigen::MatrixXcd& t, const Eigen::MatrixXcd& v, const std::vector<Cluster>& clusters,
                   double span, std::vector<int>& label) {
  const int n = static_cast<int>(t.rows());
  std::vector<int> owner(static_cast<std::size_t>(n));
  for (int c = 0; c < static_cast<int>(clusters.size()); ++c)
    for (int i = clusters[static_cast<std::size_t>(c)].begin; i < clusters[static_cast<std::size_t>(c)].end; ++i)
      owner[static_cast<std::size_t>(i)] = c;
  std::map<std::pair<int, int>, double> coupling;
  for (int c = 0; c < n; ++c)
    for (int r = 0; r < c; ++r) {
      const double m = std::abs(v(r, c));
      if (m <= kCouplingFloor) continue;  // (a NaN or infinite coupling goes on: it must merge)
      auto& slot = coupling[{owner[static_cast<std::size_t>(r)], owner[static_cast<std::size_t>(c)]}];
      if (!(m <= slot)) slot = m;
    }
  std::vector<int> parent(clusters.size());
  std::iota(parent.begin(), parent.end(), 0);
  bool merged = false;
  for (const auto& [pair, m] : coupling) {
    const auto& a = clusters[static_cast<std::size_t>(pair.first)];
    const auto& b = clusters[static_cast<std::size_t>(pair.second)];
    Complex centre = 0.0;
    for (int i = a.begin; i < a.end; ++i) centre += t(i, i);
    for (int i = b.begin; i < b.end; ++i) centre += t(i, i);
    centre /= static_cast<double>(a.size() + b.size());
    double radius = 0.0;
    for (int i = a.begin; i < a.end; ++i) radius = std::max(radius, std::abs(t(i, i) - centre));
    for (int i = b.begin; i < b.end; ++i) radius = std::max(radius, std::abs(t(i, i) - centre));
    const double exponent = 2.0 * radius * span;
    if (exponent < 700.0 && !(m <= std::exp(exponent))) {
      parent[static_cast<std::size_t>(find_root(parent, pair.second))] = find_root(parent, pair.first);
      merged = true;
    }
  }
  if (!merged) return false;
  for (int i = 0; i < n; ++i)
    label[static_cast<std::size_t>(i)] = find_root(parent, owner[static_cast<std::size_t>(i)]);
  return true;
}

}  // namespace

bool modes_close(Complex a, Complex b) { return std::abs(a - b) <= kRelativeGap * std::max(std::abs(a), std::abs(b)); }

bool rates_close(Complex a, Complex b, double span) {
  const double by_span = (span > 0.0 && std::isfinite(span)) ? kSpanGap / span : 0.0;
  return std::abs(a - b) <= by_span || modes_close(a, b);
}

Eigen::VectorXd balance(Eigen::MatrixXd& a) {
  const Eigen::Index n = a.rows();
  Eigen::VectorXd d = Eigen::VectorXd::Ones(n);
  // Parlett–Reinsch with radix 2: scale row i by 1/f and column i by f until the off-diagonal
  // norms of each row and column are within a factor 2 (the scaling is exact in binary).
  for (int sweep = 0; sweep < 100; ++sweep) {
    bool done = true;
    for (Eigen::Index i = 0; i < n; ++i) {
      double c = a.col(i).cwiseAbs().sum() - std::fabs(a(i, i));
      double r = a.row(i).cwiseAbs().sum() - std::fabs(a(i, i));
      if (c == 0.0 || r == 0.0) continue;
      const double s = c + r;
      double f = 1.0;
      while (c < r / 2.0) {
        c *= 2.0;
        r /= 2.0;
        f *= 2.0;
      }
      while (c >= r * 2.0) {
        c /= 2.0;
        r *= 2.0;
        f /= 2.0;
      }
      if (c + r < 0.95 * s) {
        done = false;
        d(i) *= f;
        a.row(i) /= f;
        a.col(i) *= f;
      }
    }
    if (done) break;
  }
  return d;
}

ClusterSeries exponential_series(const Eigen::MatrixXcd& m, const Eigen::MatrixXcd& v, Eigen::Index rows, double span) {
  ClusterSeries out;
  const Eigen::Index size = m.rows();
  out.centre = m.trace() / static_cast<double>(size);
  const double length = span > 0.0 ? span : 0.0;
  Eigen::MatrixXcd nl = m * length;  // N·L: the terms are kept scaled, (N·L)^k·v/k!
  nl.diagonal().array() -= out.centre * length;
  // L^k must stay within double range for the coefficients of s^k.
  int cap = 200;
  if (length > 1.0) cap = std::min(cap, static_cast<int>(300.0 / std::log10(length)));
  Eigen::MatrixXcd term = v, sum = v;
  std::vector<Eigen::MatrixXcd> scaled{v};
  const double first = v.norm();
  double largest = first, total = first;
  int small_run = 0;
  out.converged = false;
  for (int k = 1; k <= cap; ++k) {
    if (length == 0.0) {
      out.converged = true;
      break;
    }
    term = nl * term / static_cast<double>(k);
    const double norm = term.norm();
    if (norm == 0.0) {
      out.converged = true;
      break;
    }
    scaled.push_back(term);
    sum += term;
    total += norm;
    largest = std::max(largest, norm);
    small_run = (k >= size && norm <= kEps * largest) ? small_run + 1 : 0;
    if (small_run >= 2) {
      out.converged = true;
      break;
    }
  }
  const double reference = std::max(first, sum.norm());
  out.amplification = reference > 0.0 ? total / reference : 1.0;
  for (std::size_t k = 0; k < scaled.size(); ++k) {
    const double unscale = k == 0 ? 1.0 : std::exp(-static_cast<double>(k) * std::log(length));
    out.coefs.push_back(scaled[k].topRows(rows) * unscale);
  }
  return out;
}

Eigen::VectorXcd ModalBasis::to_modal(const Eigen::VectorXcd& x) const {
  Eigen::VectorXcd w = q.adjoint() * x.cwiseQuotient(scale.cast<Complex>());
  return v.triangularView<Eigen::UnitUpper>().solve(w);
}

Eigen::VectorXcd ModalBasis::to_state(const Eigen::VectorXcd& y) const {
  const Eigen::VectorXcd w = v.triangularView<Eigen::UnitUpper>() * y;
  return scale.cast<Complex>().cwiseProduct(q * w);
}

Eigen::RowVectorXcd ModalBasis::output_row(const Eigen::RowVectorXcd& c) const {
  const Eigen::RowVectorXcd w = c.cwiseProduct(scale.cast<Complex>().transpose()) * q;
  return w * v.triangularView<Eigen::UnitUpper>();
}

ModalBasis decompose(const Eigen::MatrixXd& a, double span) {
  ModalBasis basis;
  basis.n = static_cast<int>(a.rows());
  basis.span = span;
  if (!a.allFinite()) {
    basis.ok = false;
    basis.reason = "the state matrix has a non-finite entry";
    return basis;
  }
  if (basis.n == 0) return basis;
  Eigen::MatrixXd ab = a;
  basis.scale = balance(ab);
  Eigen::MatrixXd t_real, z_real;
  if (!real_schur(ab, t_real, z_real)) {  // Eigen's implementation, with its own shift strategy
    Eigen::RealSchur<Eigen::MatrixXd> fallback(ab, true);
    if (fallback.info() != Eigen::Success) {
      basis.ok = false;
      basis.reason = "the eigenvalues of the state matrix could not be computed (Schur iteration did not converge)";
      return basis;
    }
    t_real = fallback.matrixT();
    z_real = fallback.matrixU();
  }
  basis.t = t_real.cast<Complex>();
  basis.q = z_real.cast<Complex>();
  make_complex(basis.t, basis.q);
  basis.rounding = 8.0 * basis.n * kEps * ab.norm();
  for (int i = 0; i < basis.n; ++i)
    if (std::fabs(basis.t(i, i).real()) <= basis.rounding) basis.t(i, i).real(0.0);

  std::vector<int> label = initial_labels(basis.t);
  for (int round = 0;; ++round) {
    basis.clusters = group_clusters(basis.t, basis.q, label);
    basis.v = decoupling(basis.t, basis.clusters);
    if (round == kMergeRounds || !merge_coupled(basis.t, basis.v, basis.clusters, span, label)) break;
  }
  const double v_norm = basis.v.cwiseAbs().colwise().sum().maxCoeff();
  basis.condition = basis.n == 0 ? 1.0 : v_norm * inverse_norm_estimate(basis.v);
  return basis;
}

}  // namespace netfold::response
