// Tests of the statistics of a peak over a sweep: percentiles and shares of a curve, weighted
// percentiles, the order-statistic interval of a percentile, the portable sampler.
#include <cmath>
#include <numbers>
#include <vector>

#include <catch2/catch.hpp>

#include "engine_helpers.hpp"
#include "netfold/distribution.hpp"

using namespace netfold;

namespace {
constexpr double kPi = std::numbers::pi;

// y = |cos x| over x uniform on [0, π], sampled on n intervals.
void abs_cos_curve(std::size_t n, std::vector<double>& x, std::vector<double>& y) {
  for (std::size_t k = 0; k <= n; ++k) {
    x.push_back(kPi * static_cast<double>(k) / static_cast<double>(n));
    y.push_back(std::fabs(std::cos(x.back())));
  }
}
}  // namespace

TEST_CASE("the percentiles of |cos φ| for φ uniform are cos((1 − q)·π/2)", "[worst]") {
  // Derived by hand (from memory of the arccos measure): |cos φ| ≤ y on a share
  // 1 − 2·arccos(y)/π of [0, π], so the q-quantile is cos((1 − q)·π/2): p50 = cos(π/4) =
  // 0.70711, p90 = cos(0.05π) = 0.98769, p99 = cos(0.005π) = 0.99988.
  std::vector<double> x, y;
  abs_cos_curve(3600, x, y);
  for (double q : {0.5, 0.9, 0.99}) {
    INFO("q = " << q);
    CHECK_REL(curve_percentile(x, y, q), std::cos((1.0 - q) * kPi / 2.0), 1e-6);
  }
  CHECK_REL(curve_percentile(x, y, 0.5), 0.70710678, 1e-6);
}

TEST_CASE("the share of the range where |cos φ| exceeds a level is 2·arccos(level)/π", "[worst]") {
  // Derived by hand, as above: |cos φ| > 1/2 on 2/3 of the range.
  std::vector<double> x, y;
  abs_cos_curve(3600, x, y);
  CHECK_REL(curve_share_above(x, y, 0.5), 2.0 / 3.0, 1e-6);
  CHECK(curve_share_above(x, y, 1.5) == 0.0);
  CHECK(curve_share_above(x, y, -1.0) == 1.0);
}

TEST_CASE("equal weights give the order statistic of rank ceil(q·n)", "[worst]") {
  // Common practice, no source: the empirical quantile X(⌈q·n⌉) (Hyndman–Fan type 1).
  std::vector<double> v, w;
  for (int k = 100; k >= 1; --k) v.push_back(k), w.push_back(1.0);
  CHECK(weighted_percentile(v, w, 0.5) == 50.0);
  CHECK(weighted_percentile(v, w, 0.9) == 90.0);
  CHECK(weighted_percentile(v, w, 0.99) == 99.0);
  CHECK(weighted_percentile(v, w, 0.991) == 100.0);
  CHECK(weighted_share_above(v, w, 90.0) == Approx(0.10));
}

TEST_CASE("the 95 % interval of a median from 100 samples lies between ranks 40 and 61", "[worst]") {
  // Source: tables of distribution-free confidence intervals for the median (e.g. Conover,
  // Practical Nonparametric Statistics, 3rd ed., table A3), recalled from memory: n = 100
  // gives X(40) .. X(61); P(B ≤ 39) = 0.0176 for B ~ Binomial(100, 1/2).
  QuantileRanks r = quantile_confidence_ranks(100, 0.5, 0.95);
  REQUIRE(r.lower);
  REQUIRE(r.upper);
  CHECK(*r.lower == 40);
  CHECK(*r.upper == 61);
  CHECK(binomial_cdf(39, 100, 0.5) == Approx(0.0176).margin(1e-4));
}

TEST_CASE("a p99 interval needs enough samples for its upper bound", "[worst]") {
  // Derived by hand: X(n) covers the 99th percentile from above with probability 1 − 0.99ⁿ,
  // below 97.5 % until n ≥ 368 (0.99³⁶⁸ = 0.0248).
  CHECK_FALSE(quantile_confidence_ranks(300, 0.99).upper);
  CHECK(quantile_confidence_ranks(400, 0.99).upper);
  QuantileRanks r = quantile_confidence_ranks(10000, 0.99);
  REQUIRE(r.lower);
  REQUIRE(r.upper);
  // Normal approximation, common practice: 9900 ± 1.96·√(10000·0.99·0.01) = 9900 ± 19.5.
  CHECK(*r.lower >= 9878);
  CHECK(*r.lower <= 9882);
  CHECK(*r.upper >= 9918);
  CHECK(*r.upper <= 9922);
}

TEST_CASE("the sampler draws the 64-bit Mersenne Twister's sequence on every machine", "[worst]") {
  // Source: the C++ standard, [rand.predef]: the 10000th output of a default-constructed
  // mt19937_64 (seed 5489) is 9981545732273789042.
  UniformSampler s(5489);
  double u = 0.0;
  for (int k = 0; k < 10000; ++k) u = s.next();
  CHECK(u == static_cast<double>(9981545732273789042ULL >> 11) * 0x1.0p-53);
  UniformSampler a(7), b(7);
  for (int k = 0; k < 5; ++k) CHECK(a.next() == b.next());
}
