#pragma once
/// \file distribution.hpp
/// The statistics `worst` gives of a peak over a sweep taken as uniformly likely (spec v2,
/// "Sweeps"): percentiles and exceeded shares from a curve sampled on a grid, from weighted
/// grid points, or from Monte Carlo samples, a distribution-free confidence interval for a
/// percentile, and the seeded generator that makes the samples the same on every machine.
///
/// Example:
/// \code
///   // y = |cos x| over x uniform on [0, π]: the median is cos(π/4)
///   std::vector<double> x, y;
///   for (int k = 0; k <= 3600; ++k) { x.push_back(k * std::numbers::pi / 3600); y.push_back(std::fabs(std::cos(x.back()))); }
///   double p50 = netfold::curve_percentile(x, y, 0.5);   // 0.70711 (to about 1e-7)
/// \endcode

#include <cstdint>
#include <functional>
#include <optional>
#include <random>
#include <vector>

namespace netfold {

/// The q-quantile (0 ≤ q ≤ 1) of y(x) for x uniform on [x.front(), x.back()], where y is the
/// piecewise-linear curve through the points (x increasing, same length ≥ 2): the level L at
/// which the measure of {x : y(x) ≤ L} is q of the range, found from the crossings of each
/// linear piece with L (bisection on L to 1e-12 of the curve's span).
double curve_percentile(const std::vector<double>& x, const std::vector<double>& y, double q);

/// The share (0..1) of [x.front(), x.back()] in which the piecewise-linear curve through the
/// points exceeds `level`.
double curve_share_above(const std::vector<double>& x, const std::vector<double>& y, double level);

/// (v2) The q-quantile (0 ≤ q ≤ 1) of f(x) for x uniform on [x.front(), x.back()], exact up to
/// the tolerances below: from the crossings of f itself, not of an interpolation. (x, y) are
/// points of f (x increasing, y = f(x), length ≥ 2) that include every local extreme of f, so
/// that f is monotone between neighbours. The level L at which the measure of {x : f(x) ≤ L}
/// is q of the range is found by the Illinois variant of regula falsi on L (to 1e-12 of the
/// curve's span), each measure from the crossings of f with L, every one located by the same
/// method on f between the two neighbouring points that bracket it (to 1e-12 of the range).
/// The piecewise-linear percentile through the points is the starting guess.
double function_percentile(const std::function<double(double)>& f, const std::vector<double>& x,
                           const std::vector<double>& y, double q);

/// (v2) The share (0..1) of [x.front(), x.back()] in which f exceeds `level`, from the
/// crossings of f with the level (points as for function_percentile).
double function_share_above(const std::function<double(double)>& f, const std::vector<double>& x,
                            const std::vector<double>& y, double level);

/// The q-quantile of values carrying weights (≥ 0, any sum > 0): the smallest value at which
/// the cumulative weight of the sorted values reaches q of the total. With equal weights and
/// n values this is the order statistic of rank ⌈q·n⌉ (rank 1 for q = 0).
double weighted_percentile(const std::vector<double>& values, const std::vector<double>& weights, double q);

/// The share (0..1) of the total weight carried by values above `level`.
double weighted_share_above(const std::vector<double>& values, const std::vector<double>& weights, double level);

/// Ranks (from 1) of the order statistics that bound a distribution-free confidence interval
/// for the q-quantile of a continuous distribution from n independent samples: the largest
/// `lower` with P(B ≤ lower − 1) ≤ (1 − confidence)/2 and the smallest `upper` with
/// P(B ≤ upper − 1) ≥ (1 + confidence)/2, B ~ Binomial(n, q); the interval
/// [X(lower), X(upper)] then covers the quantile with probability ≥ confidence (W. J. Conover,
/// Practical Nonparametric Statistics, 3rd ed., 1999, §3.2). A bound that would need a rank
/// below 1 or above n is empty: too few samples for that side.
struct QuantileRanks {
  std::optional<std::size_t> lower;  ///< rank of the lower bound, 1..n
  std::optional<std::size_t> upper;  ///< rank of the upper bound, 1..n
};
QuantileRanks quantile_confidence_ranks(std::size_t n, double q, double confidence = 0.95);

/// P(B ≤ k) for B ~ Binomial(n, p), summed in log space (exact to about 1e-13 for n ≤ 10⁷).
double binomial_cdf(std::size_t k, std::size_t n, double p);

/// A generator of uniform numbers in [0, 1) that gives the same sequence on every machine: the
/// 64-bit Mersenne Twister (its output is fixed by the C++ standard, [rand.predef]) with the
/// top 53 bits of each draw scaled by 2⁻⁵³ (std::uniform_real_distribution is not portable).
class UniformSampler {
 public:
  /// A sequence seeded by `seed`.
  explicit UniformSampler(std::uint64_t seed);
  /// The next number in [0, 1).
  double next();

 private:
  std::mt19937_64 engine_;
};

/// The seed `worst --samples` uses when `--seed` is not given.
inline constexpr std::uint64_t kDefaultSeed = 20240601;

}  // namespace netfold
