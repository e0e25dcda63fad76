#include "netfold/distribution.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <stdexcept>
#include <string>

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

namespace {

// Illinois (modified regula falsi; M. Dowell and P. Jarratt, BIT 11, 1971) for g(t) = 0 on a
// bracket [a, b] with g(a) and g(b) of opposite signs: the end that stays twice in a row has
// its value halved. When three steps have not halved the bracket the next step is a bisection,
// so that a jump in g (a flat stretch of the curve, whose level is then the answer) still
// shrinks the bracket geometrically.
template <typename G>
double illinois_root(G&& g, double a, double b, double ga, double gb, double tol) {
  int side = 0;
  double width_before = std::fabs(b - a);
  for (int it = 0; it < 200 && std::fabs(b - a) > tol; ++it) {
    const bool bisect = it % 3 == 2 && std::fabs(b - a) > 0.5 * width_before;
    if (it % 3 == 2) width_before = std::fabs(b - a);
    double t = bisect || ga == gb ? 0.5 * (a + b) : (a * gb - b * ga) / (gb - ga);
    if (!(t > std::min(a, b) && t < std::max(a, b))) t = 0.5 * (a + b);
    const double gt = g(t);
    if (gt == 0.0) return t;
    if ((gt > 0.0) == (gb > 0.0)) {
      b = t, gb = gt;
      if (side == -1) ga *= 0.5;
      side = -1;
    } else {
      a = t, ga = gt;
      if (side == 1) gb *= 0.5;
      side = 1;
    }
  }
  return 0.5 * (a + b);
}

// A function known at points that include its local extremes (so it is monotone between
// neighbours), and every further value computed while locating crossings: each one joins the
// points, so a later level is bracketed by the nearest values already known and its crossings
// cost a few evaluations.
class KnownCurve {
 public:
  KnownCurve(const std::function<double(double)>& f, const std::vector<double>& x, const std::vector<double>& y)
      : f_(f), x_(x), y_(y) {
    if (x.size() < 2 || x.size() != y.size()) throw std::invalid_argument("a curve needs two or more points");
  }

  double range() const { return x_.back() - x_.front(); }
  const std::vector<double>& x() const { return x_; }
  const std::vector<double>& y() const { return y_; }

  // The measure of {x : f(x) ≤ level}: whole pieces below, and on a piece whose ends lie on
  // both sides the part up to (or from) the crossing of f itself (to 1e-12 of the range).
  double measure_at_or_below(double level) {
    const double tol = 1e-12 * range();
    std::vector<std::pair<double, double>> found;
    double m = 0.0;
    for (std::size_t k = 0; k + 1 < x_.size(); ++k) {
      const bool a = y_[k] <= level, b = y_[k + 1] <= level;
      if (a && b) m += x_[k + 1] - x_[k];
      if (a == b) continue;
      auto g = [&](double t) {
        const double v = f_(t);
        found.emplace_back(t, v);
        return v - level;
      };
      const double cross = illinois_root(g, x_[k], x_[k + 1], y_[k] - level, y_[k + 1] - level, tol);
      m += a ? cross - x_[k] : x_[k + 1] - cross;
    }
    merge(found);
    return m;
  }

 private:
  void merge(std::vector<std::pair<double, double>>& found) {
    if (found.empty()) return;
    for (std::size_t k = 0; k < x_.size(); ++k) found.emplace_back(x_[k], y_[k]);
    std::stable_sort(found.begin(), found.end(), [](const auto& p, const auto& q) { return p.first < q.first; });
    x_.clear();
    y_.clear();
    for (const auto& [t, v] : found) {
      if (!x_.empty() && t == x_.back()) continue;
      x_.push_back(t);
      y_.push_back(v);
    }
  }

  const std::function<double(double)>& f_;
  std::vector<double> x_, y_;
};

}  // namespace

double function_percentile(const std::function<double(double)>& f, const std::vector<double>& x,
                           const std::vector<double>& y, double q) {
  KnownCurve curve(f, x, y);
  const double range = curve.range();
  const double lo = *std::min_element(y.begin(), y.end()), hi = *std::max_element(y.begin(), y.end());
  if (q <= 0.0) return lo;
  if (q >= 1.0 || hi == lo) return hi;
  auto g = [&](double level) { return curve.measure_at_or_below(level) / range - q; };
  const double tol = 1e-12 * std::max(hi - lo, std::fabs(hi));
  // Two guesses from the piecewise-linear curve: through the given points, then through them
  // and the values found at the first guess's crossings (close to the answer); then a bracket
  // widened from the second in growing steps until g changes sign, and Illinois within it.
  const double first = std::clamp(curve_percentile(curve.x(), curve.y(), q), lo, hi);
  const double g_first = g(first);
  if (g_first == 0.0) return first;
  double a = first, ga = g_first;
  double b = std::clamp(curve_percentile(curve.x(), curve.y(), q), lo, hi);
  double gb = b == a ? ga : g(b);
  if (gb == 0.0) return b;
  double step = std::max(std::fabs(b - a), 1e-9 * (hi - lo));
  while ((ga > 0.0) == (gb > 0.0)) {
    // g > 0: more than q of the range lies below b, so the answer is lower.
    a = b, ga = gb;
    b = ga > 0.0 ? std::max(lo, a - step) : std::min(hi, a + step);
    gb = g(b);
    if (gb == 0.0) return b;
    if (b == lo && gb > 0.0) return lo;  // a flat bottom holds the share (g(hi) = 1 − q > 0 above)
    step *= 4.0;
  }
  return illinois_root(g, a, b, ga, gb, tol);
}

double function_share_above(const std::function<double(double)>& f, const std::vector<double>& x,
                            const std::vector<double>& y, double level) {
  KnownCurve curve(f, x, y);
  return std::clamp(1.0 - curve.measure_at_or_below(level) / curve.range(), 0.0, 1.0);
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
