#pragma once
// Independent references in long double for the closed-form tests: composite Gauss–Legendre
// quadrature, and the matrix exponential by scaling and squaring of a Taylor series. Both are
// textbook methods (nodes by Newton's method on the Legendre polynomial; from memory) computed
// with 64-bit mantissas, so that their own error is far below the double results they check.
#include <cmath>
#include <complex>
#include <functional>
#include <vector>

#include <Eigen/Dense>

namespace netfold::testing {

using LongMatrix = Eigen::Matrix<long double, Eigen::Dynamic, Eigen::Dynamic>;
using LongVector = Eigen::Matrix<long double, Eigen::Dynamic, 1>;

/// Nodes and weights of the n-point Gauss–Legendre rule on [−1, 1].
inline void gauss_legendre(int n, std::vector<long double>& x, std::vector<long double>& w) {
  x.assign(static_cast<std::size_t>(n), 0.0L);
  w.assign(static_cast<std::size_t>(n), 0.0L);
  const long double pi = 3.141592653589793238462643383279502884L;
  for (int i = 0; i < n; ++i) {
    long double z = std::cos(pi * (i + 0.75L) / (n + 0.5L)), dp = 0.0L;
    for (int iter = 0; iter < 100; ++iter) {
      long double p0 = 1.0L, p1 = z;
      for (int k = 2; k <= n; ++k) {
        const long double p2 = ((2 * k - 1) * z * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      if (n == 1) p0 = 1.0L, p1 = z;
      dp = n * (z * p1 - p0) / (z * z - 1.0L);
      const long double dz = p1 / dp;
      z -= dz;
      if (std::fabs(dz) < 1e-21L) break;
    }
    x[static_cast<std::size_t>(i)] = z;
    w[static_cast<std::size_t>(i)] = 2.0L / ((1.0L - z * z) * dp * dp);
  }
}

/// ∫_a^b f over `panels` equal panels of a 20-point rule.
template <typename F>
auto integrate_long(F&& f, long double a, long double b, int panels) {
  static std::vector<long double> x, w;
  if (x.empty()) gauss_legendre(20, x, w);
  decltype(f(a)) sum{};
  const long double h = (b - a) / panels;
  for (int p = 0; p < panels; ++p) {
    const long double mid = a + (p + 0.5L) * h;
    for (std::size_t i = 0; i < x.size(); ++i) sum += w[i] * 0.5L * h * f(mid + 0.5L * h * x[i]);
  }
  return sum;
}

/// e^{M} by scaling and squaring of a 40-term Taylor series, in long double.
inline LongMatrix expm_long(const LongMatrix& m) {
  const long double norm = m.cwiseAbs().colwise().sum().maxCoeff();
  int squarings = 0;
  long double scale = 1.0L;
  while (norm * scale > 0.25L) {
    scale /= 2.0L;
    ++squarings;
  }
  const LongMatrix a = m * scale;
  LongMatrix term = LongMatrix::Identity(m.rows(), m.cols()), sum = term;
  for (int k = 1; k <= 40; ++k) {
    term = a * term / static_cast<long double>(k);
    sum += term;
  }
  for (int i = 0; i < squarings; ++i) sum = sum * sum;
  return sum;
}

}  // namespace netfold::testing
