#include "netfold/distribution.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <stdexcept>

namespace netfold {

namespace {

// The length of [a, b] in which the line from (a, ya) to (b, yb) is at or below `level`.
double length_at_or_below(double a, double b, double ya, double yb, double level) {
  if (ya <= level && yb <= level) return b - a;
  if (ya > level && yb > level) return 0.0;
  const double cross = a + (b - a) * (level - ya) / (yb - ya);
  return ya <= level ? cross - a : b - cross;
}

double measure_at_or_below(const std::vector<double>& x, const std::vector<double>& y, double level) {
  double m = 0.0;
  for (std::size_t k = 0; k + 1 < x.size(); ++k) m += length_at_or_below(x[k], x[k + 1], y[k], y[k + 1], level);
  return m;
}

}  // namespace

double curve_percentile(const std::vector<double>& x, const std::vector<double>& y, double q) {
  if (x.size() < 2 || x.size() != y.size()) throw std::invalid_argument("curve_percentile: needs two or more points");
  const double range = x.back() - x.front();
  double lo = *std::min_element(y.begin(), y.end()), hi = *std::max_element(y.begin(), y.end());
  if (q <= 0.0) return lo;
  if (q >= 1.0 || hi == lo) return hi;
  // The measure below L grows monotonically with L: bisection.
  const double tol = 1e-12 * std::max(hi - lo, std::fabs(hi));
  while (hi - lo > tol) {
    const double mid = 0.5 * (lo + hi);
    if (measure_at_or_below(x, y, mid) >= q * range) hi = mid;
    else lo = mid;
    if (mid == lo && mid == hi) break;
  }
  return hi;
}

double curve_share_above(const std::vector<double>& x, const std::vector<double>& y, double level) {
  if (x.size() < 2 || x.size() != y.size()) throw std::invalid_argument("curve_share_above: needs two or more points");
  const double range = x.back() - x.front();
  return std::clamp(1.0 - measure_at_or_below(x, y, level) / range, 0.0, 1.0);
}

double weighted_percentile(const std::vector<double>& values, const std::vector<double>& weights, double q) {
  if (values.empty() || values.size() != weights.size()) throw std::invalid_argument("weighted_percentile: no values");
  std::vector<std::size_t> order(values.size());
  std::iota(order.begin(), order.end(), std::size_t{0});
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return values[a] < values[b]; });
  const double total = std::accumulate(weights.begin(), weights.end(), 0.0);
  // Equal weights must give rank ⌈q·n⌉ exactly: compare cumulative weight with q·total less a
  // rounding margin, so that q·n landing on an integer does not step one rank too far.
  const double target = q * total * (1.0 - 1e-12);
  double sum = 0.0;
  for (std::size_t k : order) {
    sum += weights[k];
    if (sum >= target && weights[k] > 0.0) return values[k];
  }
  return values[order.back()];
}

double weighted_share_above(const std::vector<double>& values, const std::vector<double>& weights, double level) {
  double above = 0.0, total = 0.0;
  for (std::size_t k = 0; k < values.size(); ++k) {
    total += weights[k];
    if (values[k] > level) above += weights[k];
  }
  return total > 0.0 ? above / total : 0.0;
}

namespace {
// P(B = j) for B ~ Binomial(n, p), 0 < p < 1, from log-gamma (no overflow for large n).
double binomial_pmf(std::size_t j, std::size_t n, double p) {
  const double nn = static_cast<double>(n), jj = static_cast<double>(j);
  return std::exp(std::lgamma(nn + 1) - std::lgamma(jj + 1) - std::lgamma(nn - jj + 1) + jj * std::log(p) +
                  (nn - jj) * std::log1p(-p));
}
}  // namespace

double binomial_cdf(std::size_t k, std::size_t n, double p) {
  if (k >= n || p <= 0.0) return 1.0;
  if (p >= 1.0) return 0.0;
  double sum = 0.0;
  for (std::size_t j = 0; j <= k; ++j) sum += binomial_pmf(j, n, p);
  return std::min(sum, 1.0);
}

QuantileRanks quantile_confidence_ranks(std::size_t n, double q, double confidence) {
  QuantileRanks r;
  const double alpha = (1.0 - confidence) / 2.0;
  // Cumulative binomial probabilities P(B ≤ j), j = 0..n, accumulated once.
  std::vector<double> cdf(n + 1, 1.0);
  double sum = 0.0;
  for (std::size_t j = 0; j < n && q > 0.0 && q < 1.0; ++j) cdf[j] = std::min(sum += binomial_pmf(j, n, q), 1.0);
  // lower: the largest rank l ≥ 1 with P(B ≤ l − 1) ≤ α.
  for (std::size_t l = 1; l <= n && cdf[l - 1] <= alpha; ++l) r.lower = l;
  // upper: the smallest rank u ≤ n with P(B ≤ u − 1) ≥ 1 − α.
  for (std::size_t u = 1; u <= n; ++u)
    if (cdf[u - 1] >= 1.0 - alpha) {
      r.upper = u;
      break;
    }
  return r;
}

UniformSampler::UniformSampler(std::uint64_t seed) : engine_(seed) {}

double UniformSampler::next() { return static_cast<double>(engine_() >> 11) * 0x1.0p-53; }

}  // namespace netfold
