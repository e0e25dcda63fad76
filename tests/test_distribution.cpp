// Tests of the statistics of a peak over a sweep: percentiles and shares of a curve, weighted
// percentiles, the order-statistic interval of a percentile, the portable sampler.
#include <cmath>
#include <numbers>
#include <vector>

#include <catch2/catch.hpp>

#include "engine_helpers.hpp"
#include "netfold/distribution.hpp"
#include "netfold/worst.hpp"

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

TEST_CASE("percentiles from the crossings of the function are exact where the linear curve is not", "[worst]") {
  // |cos φ| over [0, π] at six uneven points and its minimum at π/2: the percentiles are
  // cos((1 − q)·π/2) (derived by hand, as above), found here from the crossings of |cos| itself.
  auto f = [](double t) { return std::fabs(std::cos(t)); };
  std::vector<double> x{0.0, 0.4, 1.1, kPi / 2, 1.9, 2.5, kPi}, y;
  for (double t : x) y.push_back(f(t));
  for (double q : {0.25, 0.5, 0.9, 0.99}) {
    INFO("q = " << q);
    const double exact = std::cos((1.0 - q) * kPi / 2.0);
    CHECK_REL(function_percentile(f, x, y, q), exact, 1e-10);
    // The piecewise-linear curve through the same points misses by far more.
    CHECK(std::fabs(curve_percentile(x, y, q) - exact) > 1e-3);
  }
  CHECK_REL(function_share_above(f, x, y, 0.5), 2.0 / 3.0, 1e-10);
  CHECK(function_share_above(f, x, y, 1.5) == 0.0);
  CHECK(function_share_above(f, x, y, -1.0) == 1.0);
}

TEST_CASE("a flat stretch of the function is its percentile where it holds the share", "[worst]") {
  // min(x, 1) over [0, 2]: a half of the range sits at 1, so every q ≥ ½ gives 1 and q = ¼
  // gives ½ (derived by hand).
  auto f = [](double t) { return std::min(t, 1.0); };
  std::vector<double> x{0.0, 0.7, 1.3, 2.0}, y;
  for (double t : x) y.push_back(f(t));
  CHECK_REL(function_percentile(f, x, y, 0.25), 0.5, 1e-10);
  CHECK_REL(function_percentile(f, x, y, 0.5), 1.0, 1e-10);
  CHECK_REL(function_percentile(f, x, y, 0.9), 1.0, 1e-10);
}

TEST_CASE("a one-target sweep's percentiles come from the solved peak between coarse grid points", "[worst]") {
  // A 1 F capacitor holding V0 discharges through 1 ohm: the peaks are |v_C| = |V0| and the
  // resistor's power V0²/R, both at t = 0 (derived by hand). V0 uniform on [−1 V, 3 V]:
  // P(|V0| ≤ u) = u/2 for u ≤ 1 and (1 + u)/4 for 1 ≤ u ≤ 3, so the q-quantile of |V0| is 2q
  // (q ≤ ½) or 4q − 1: p50 = 1 V, p90 = 2.6 V, p99 = 2.96 V; of the power, their squares over
  // 1 ohm: 1 W, 6.76 W, 8.7616 W. |V0| > 2 V (the rating) on a quarter of the range; the power
  // exceeds 0.25 W where |V0| > 0.5 V, on three quarters. A grid step of 0.7 V puts no grid point
  // at 0, 2.6 or 2.96: interpolating the grid would miss the power's percentiles by up to 0.5 %.
  Circuit c = parse_netlist(
      "C1: capacitor a -> gnd, 1 F, initial 0 V, rated 2 V\nR1: resistor a -> gnd, 1 ohm\n"
      "watch C1.v, R1.p\nsweep C1.initial -1 V .. 3 V step 0.7 V\n",
      "discharge.nf");
  WorstOptions o;
  o.share_levels.push_back({"R1.p", 0.25});
  WorstReport r = find_worst_case(c, c.sweeps(), o);
  REQUIRE(r.sweeps.size() == 1);
  const SweepResult& s = r.sweeps.front();
  REQUIRE(s.observables.size() == 2);
  const PeakDistribution& v = s.observables[0].distribution;
  const PeakDistribution& p = s.observables[1].distribution;
  CHECK_REL(v.p50, 1.0, 1e-9);
  CHECK_REL(v.p90, 2.6, 1e-9);
  CHECK_REL(v.p99, 2.96, 1e-9);
  CHECK_REL(p.p50, 1.0, 1e-9);
  CHECK_REL(p.p90, 6.76, 1e-9);
  CHECK_REL(p.p99, 8.7616, 1e-9);
  REQUIRE(s.exceeded_share.size() == 1);
  CHECK_REL(s.exceeded_share[0], 0.25, 1e-9);
  REQUIRE(s.shares.size() == 1);
  CHECK_REL(s.shares[0].share, 0.75, 1e-9);
  CHECK(s.observables[1].best == Approx(0.0).margin(1e-12));  // the minimum at V0 = 0, off the grid
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
