// Tests of the modal closed form of n states (src/response/modal.hpp) on the hard cases of the
// several-storage-elements issue, each against an outside or independent reference.
#include <cmath>
#include <complex>
#include <numbers>
#include <random>

#include <unsupported/Eigen/MatrixFunctions>

#include "engine_helpers.hpp"
#include "long_double_reference.hpp"
#include "response/modal.hpp"

using namespace netfold;
using namespace netfold::response;
using namespace netfold::testing;

namespace {

constexpr double kPi = std::numbers::pi;

Drive dc(double value) {
  Drive d;
  d.dc = value;
  return d;
}

Drive cosine(double amplitude, double frequency) {
  Drive d;
  d.add_phasor(frequency, {amplitude, 0.0});
  return d;
}

// A series RLC on a step V: states (i_L, v_C); L·di/dt = V − R·i − v_C, C·dv/dt = i.
struct SeriesRlc {
  double r, l, c;
  Eigen::MatrixXd a() const { return (Eigen::MatrixXd(2, 2) << -r / l, -1.0 / l, 1.0 / c, 0.0).finished(); }
  Eigen::MatrixXd b() const { return (Eigen::MatrixXd(2, 1) << 1.0 / l, 0.0).finished(); }
};

// Largest |x_ref(t) − x(t)| over a grid, relative to the largest |x_ref|, for every state.
template <typename Ref>
double worst_error(const ModalResponse& m, Ref&& reference, int points = 400) {
  double err = 0.0, scale = 0.0;
  for (int i = 0; i <= points; ++i) {
    const double t = m.t0() + (m.t1() - m.t0()) * i / points;
    const Eigen::VectorXd want = reference(t);
    const Eigen::VectorXd got = m.value(t);
    for (int s = 0; s < m.states(); ++s) {
      CHECK(std::fabs(m.state(s).value(t) - got(s)) <= 1e-13 * (1.0 + std::fabs(got(s))));
      err = std::max(err, std::fabs(got(s) - want(s)));
      scale = std::max(scale, std::fabs(want(s)));
    }
  }
  return err / scale;
}

// x(t) for dx/dt = A·x + b·u_dc from x0, in long double: the exponential of the matrix augmented
// with the constant input as a state (an independent reference).
Eigen::VectorXd reference_dc(const Eigen::MatrixXd& a, const Eigen::VectorXd& b, const Eigen::VectorXd& x0, double u,
                             double t) {
  const Eigen::Index n = a.rows();
  LongMatrix m = LongMatrix::Zero(n + 1, n + 1);
  m.topLeftCorner(n, n) = a.cast<long double>() * static_cast<long double>(t);
  m.col(n).head(n) = b.cast<long double>() * static_cast<long double>(u * t);
  LongVector v(n + 1);
  v.head(n) = x0.cast<long double>();
  v(n) = 1.0L;
  return (expm_long(m) * v).head(n).cast<double>();
}

}  // namespace

TEST_CASE("a critically damped series RLC peaks at 2V/(e*R) at t = 2L/R, as s*e^{-as} terms", "[modal]") {
  // Source: series RLC step response, textbook (critically damped: i = (V/L)·t·e^{−αt}, α = R/2L,
  // peak 2V/(e·R) at t = 1/α).
  const double l = 10e-3, c = 1e-6, r = 2.0 * std::sqrt(l / c), v = 100.0;
  const SeriesRlc rlc{r, l, c};
  const ModalResponse m = solve_modal(rlc.a(), rlc.b(), Eigen::Vector2d::Zero(), {dc(v)}, 0.0, 2e-3);
  REQUIRE(m.accuracy().ok);
  const Response i = m.state(0);
  bool has_secular = false;
  for (const auto& t : i.terms) has_secular = has_secular || t.k >= 1;
  CHECK(has_secular);
  const Extremes e = find_extremes(i, 0.0, 2e-3);
  CHECK_REL(e.max, 2.0 * v / (std::exp(1.0) * r), 1e-12);
  CHECK_REL(e.t_max, 2.0 * l / r, 1e-9);
  const double alpha = r / (2 * l);
  const double err = worst_error(m, [&](double t) {
    return Eigen::Vector2d(v / l * t * std::exp(-alpha * t), v * (1.0 - (1.0 + alpha * t) * std::exp(-alpha * t)));
  });
  INFO("critically damped RLC, max relative error " << err);
  CHECK(err <= 1e-12);
  REQUIRE(m.modes().size() == 1);
  CHECK(m.modes()[0].multiplicity == 2);
  CHECK_REL(m.modes()[0].time_constant, 1.0 / alpha, 1e-12);
}

TEST_CASE("an underdamped series RLC overshoots by e^{-zeta*pi/sqrt(1-zeta^2)} and reports its mode", "[modal]") {
  // Source: second-order step response, textbook: overshoot e^{−ζπ/√(1−ζ²)} at t = π/ω_d;
  // ω_n = 1/√(LC), ζ = (R/2)·√(C/L).
  const double l = 2e-3, c = 4.7e-6, r = 6.0, v = 48.0;
  const SeriesRlc rlc{r, l, c};
  const double wn = 1.0 / std::sqrt(l * c), zeta = 0.5 * r * std::sqrt(c / l), wd = wn * std::sqrt(1 - zeta * zeta);
  const ModalResponse m = solve_modal(rlc.a(), rlc.b(), Eigen::Vector2d::Zero(), {dc(v)}, 0.0, 5e-3);
  REQUIRE(m.accuracy().ok);
  const Extremes e = find_extremes(m.state(1), 0.0, 5e-3);
  CHECK_REL(e.max, v * (1.0 + std::exp(-zeta * kPi / std::sqrt(1 - zeta * zeta))), 1e-12);
  CHECK_REL(e.t_max, kPi / wd, 1e-9);
  REQUIRE(m.modes().size() == 1);
  const Mode& mode = m.modes()[0];
  CHECK(mode.oscillatory);
  CHECK_REL(mode.natural_frequency, wn / (2 * kPi), 1e-13);
  CHECK_REL(mode.damped_frequency, wd / (2 * kPi), 1e-13);
  CHECK_REL(mode.damping_ratio, zeta, 1e-13);
  CHECK_REL(mode.time_constant, 2 * l / r, 1e-13);
  const auto steady = m.state(1).steady_state();
  REQUIRE(steady.has_value());
  CHECK_REL(steady->dc, v, 1e-13);
}

TEST_CASE("a lossless LC switched onto DC charges its capacitor to exactly twice the supply", "[modal]") {
  // Common practice, no source: v_C = V·(1 − cos ω₀t), peak 2V at t = π·√(LC).
  const double l = 1e-3, c = 10e-6, v = 325.0;
  const SeriesRlc lc{0.0, l, c};
  const ModalResponse m = solve_modal(lc.a(), lc.b(), Eigen::Vector2d::Zero(), {dc(v)}, 0.0, 1e-3);
  REQUIRE(m.accuracy().ok);
  const Extremes e = find_extremes(m.state(1), 0.0, 1e-3);
  CHECK_REL(e.max, 2.0 * v, 1e-13);
  CHECK_REL(e.t_max, kPi * std::sqrt(l * c), 1e-10);
  const auto steady = m.state(1).steady_state();  // the undamped ring is part of the steady state
  REQUIRE(steady.has_value());
  CHECK_REL(steady->dc, v, 1e-13);
  REQUIRE(steady->phasors.size() == 1);
  CHECK_REL(std::abs(steady->phasors[0].value), v, 1e-13);
  CHECK(std::isinf(m.modes()[0].time_constant));
}

TEST_CASE("a 1 H, 10 ohm coil opening into a 10 nF snubber matches the analytic 2x2 solution to 1e-12", "[modal]") {
  // Reference: the analytic solution of i'' + 2αi' + ω₀²i = 0 (textbook second-order ODE), with
  // i(0) = I₀ and L·i'(0) = −R·I₀ − v₀; v_C = v₀ + (1/C)∫i. Also against Eigen's Schur–Parlett
  // matrixFunction on the balanced matrix. The issue notes that unbalanced Padé exp() is off here.
  const double l = 1.0, r = 10.0, c = 10e-9, i0 = 2.4;
  const Eigen::Matrix2d a{{-r / l, -1.0 / l}, {1.0 / c, 0.0}};
  const Eigen::MatrixXd b = Eigen::MatrixXd::Zero(2, 1);
  const ModalResponse m = solve_modal(a, b, Eigen::Vector2d(i0, 0.0), {Drive{}}, 0.0, 2e-3);
  REQUIRE(m.accuracy().ok);
  const long double alpha = r / (2 * l), w0sq = 1.0L / (static_cast<long double>(l) * c),
                    wd = std::sqrt(w0sq - alpha * alpha);
  const long double di0 = -r * i0 / l;
  auto reference = [&](double t) {
    const long double e = std::exp(-alpha * t), cw = std::cos(wd * t), sw = std::sin(wd * t);
    const long double k = (di0 + alpha * i0) / wd;
    const long double i = e * (i0 * cw + k * sw);
    const long double di = -alpha * i + e * wd * (-i0 * sw + k * cw);
    return Eigen::Vector2d(static_cast<double>(i), static_cast<double>(-r * i - l * di));
  };
  const double err = worst_error(m, reference, 2000);
  INFO("coil into snubber, max relative error " << err);
  CHECK(err <= 1e-12);
  Eigen::MatrixXd ab = a;
  const Eigen::VectorXd d = balance(ab);
  for (double t : {1e-4, 7.7e-4, 2e-3}) {
    const Eigen::MatrixXd e = (ab * t).matrixFunction(Eigen::internal::stem_function_exp<std::complex<double>>);
    const Eigen::Vector2d x = d.asDiagonal() * (e * d.cwiseInverse().asDiagonal() * Eigen::Vector2d(i0, 0.0));
    CHECK(std::fabs(m.value(t)(1) - x(1)) <= 1e-12 * i0 * std::sqrt(l / c));
  }
  // Source: energy balance, ½·L·I₀² = ½·C·V² without losses, V ≈ I₀·√(L/C) (textbook); the
  // 10 Ω takes about 0.25 % before the first peak (R·I₀ and e^{−αt}).
  const Extremes e = find_extremes(m.state(1), 0.0, 2e-3);
  CHECK_REL(-e.min, i0 * std::sqrt(l / c), 5e-3);
}

TEST_CASE("a capacitor pair with no DC path drifts linearly under a DC current (lambda = 0)", "[modal]") {
  // Reference: charge conservation, C₁v₁ + C₂v₂ = Q₀ + I·t, and the difference v₁ − v₂ relaxing
  // with τ = R·C₁C₂/(C₁ + C₂) towards I·R·C₂/(C₁ + C₂) (circuit analysis, from memory).
  const double c1 = 1e-6, c2 = 4.7e-6, r = 1e3, cur = 2e-3;
  const Eigen::Matrix2d a{{-1 / (r * c1), 1 / (r * c1)}, {1 / (r * c2), -1 / (r * c2)}};
  const Eigen::MatrixXd b = (Eigen::MatrixXd(2, 1) << 1 / c1, 0.0).finished();
  const Eigen::Vector2d x0(3.0, -1.0);
  const ModalResponse m = solve_modal(a, b, x0, {dc(cur)}, 0.0, 0.05);
  REQUIRE(m.accuracy().ok);
  const double cs = c1 * c2 / (c1 + c2), tau = r * cs, dinf = cur * r * c2 / (c1 + c2);
  auto reference = [&](double t) {
    const double q = c1 * x0(0) + c2 * x0(1) + cur * t;
    const double diff = dinf + (x0(0) - x0(1) - dinf) * std::exp(-t / tau);
    return Eigen::Vector2d((q + c2 * diff) / (c1 + c2), (q - c1 * diff) / (c1 + c2));
  };
  const double err = worst_error(m, reference);
  INFO("drift, max relative error " << err);
  CHECK(err <= 1e-12);
  CHECK_FALSE(m.state(0).steady_state().has_value());
  REQUIRE(m.modes().size() == 2);
  CHECK(std::isinf(m.modes()[0].time_constant));
  CHECK_REL(m.modes()[1].time_constant, tau, 1e-12);
}

TEST_CASE("a leak of 1e15 ohm gives the exact near-drift, not a cancellation of two huge terms", "[modal]") {
  // Reference: the RC law v = v∞ + (v₀ − v∞)·e^{−t/τ} with v∞ = I·R, evaluated as
  // v₀·e^{−t/τ} − I·R·expm1(−t/τ) in long double (τ = 1e9 s over a 1 s segment).
  const double c = 1e-6, r = 1e15, cur = 1e-3, v0 = 2.0;
  const Eigen::MatrixXd a = Eigen::MatrixXd::Constant(1, 1, -1 / (r * c));
  const Eigen::MatrixXd b = Eigen::MatrixXd::Constant(1, 1, 1 / c);
  const ModalResponse m = solve_modal(a, b, Eigen::VectorXd::Constant(1, v0), {dc(cur)}, 0.0, 1.0);
  REQUIRE(m.accuracy().ok);
  const long double tau = static_cast<long double>(r) * c;
  const double err = worst_error(m, [&](double t) {
    return Eigen::VectorXd::Constant(
        1, static_cast<double>(v0 * std::exp(-t / tau) - cur * static_cast<long double>(r) * std::expm1(-t / tau)));
  });
  INFO("near drift, max relative error " << err);
  CHECK(err <= 1e-14);
  const auto steady = m.state(0).steady_state();
  REQUIRE(steady.has_value());
  CHECK_REL(steady->dc, cur * r, 1e-12);
}

TEST_CASE("a lossless LC driven at its own frequency grows as (U*w/2)*t*sin(wt)", "[modal]") {
  // Source: undamped resonance, v'' + ω₀²v = ω₀²U·cos ω₀t from rest has v = (Uω₀/2)·t·sin ω₀t
  // (textbook forced oscillator).
  const double l = 1e-3, c = 1e-6, u = 10.0, w0 = 1.0 / std::sqrt(l * c);
  const SeriesRlc lc{0.0, l, c};
  const ModalResponse m = solve_modal(lc.a(), lc.b(), Eigen::Vector2d::Zero(), {cosine(u, w0 / (2 * kPi))}, 0.0, 0.02);
  REQUIRE(m.accuracy().ok);
  const double err = worst_error(
      m,
      [&](double t) {
        const double v = 0.5 * u * w0 * t * std::sin(w0 * t);
        const double i = c * 0.5 * u * w0 * (std::sin(w0 * t) + w0 * t * std::cos(w0 * t));
        return Eigen::Vector2d(i, v);
      },
      4000);
  INFO("resonance, max relative error " << err);
  CHECK(err <= 1e-12);
  CHECK_FALSE(m.state(1).steady_state().has_value());
}

TEST_CASE("a stiffness spread of 1e9 between two modes keeps both exact", "[modal]") {
  // Reference: A = [[−2, 1], [1e9, −1e9 − 1]] has the eigenvalues −1 and −(1e9 + 2) with
  // eigenvectors (1, 1) and (1, −1e9) (by hand: (λ + 1)(λ + 1e9 + 2) is its characteristic
  // polynomial); state 2 is scaled by 2^20 so that the matrix is badly scaled too. Every entry is
  // exact in double; x(t) = S·diag(e^{λt})·S⁻¹·x₀ is evaluated in long double.
  const double k = std::ldexp(1.0, 20);
  const Eigen::Matrix2d a{{-2.0, 1.0 / k}, {1e9 * k, -1e9 - 1.0}};
  LongMatrix s(2, 2);
  s << 1.0L, 1.0L, k, -1e9L * k;
  const LongMatrix si = s.inverse();
  const Eigen::Vector2d x0(1.0, 3e5 * k);
  const ModalResponse m = solve_modal(a, Eigen::MatrixXd::Zero(2, 1), x0, {Drive{}}, 0.0, 5.0);
  REQUIRE(m.accuracy().ok);
  auto reference = [&](double t) {
    LongMatrix e = LongMatrix::Zero(2, 2);
    e(0, 0) = std::exp(-1.0L * t);
    e(1, 1) = std::exp(-(1e9L + 2.0L) * t);
    return Eigen::Vector2d((s * e * si * x0.cast<long double>()).cast<double>());
  };
  double err = worst_error(m, reference);
  for (double t : {1e-10, 1e-9, 3e-9, 2e-8}) {  // inside the fast transient
    const Eigen::Vector2d want = reference(t), got = m.value(t);
    for (int i = 0; i < 2; ++i) err = std::max(err, std::fabs(got(i) - want(i)) / std::fabs(want(i)));
  }
  INFO("stiff 1e9, max relative error " << err);
  CHECK(err <= 1e-12);
}

TEST_CASE("a nearly defective 3x3 with eigenvalues 1e-9 apart matches a long-double exponential", "[modal]") {
  // Reference: e^{At} by scaling and squaring of a Taylor series in long double (textbook; its
  // error is near 1e-17 here). A = S·J·S⁻¹, J upper triangular with −1, −1 + 1e-9, −1 + 2e-9.
  Eigen::Matrix3d j{{-1.0, 1.0, 0.0}, {0.0, -1.0 + 1e-9, 1.0}, {0.0, 0.0, -1.0 + 2e-9}};
  Eigen::Matrix3d s{{1.0, 2.0, 0.0}, {0.0, 1.0, 1.0}, {1.0, 0.0, 1.0}};
  const Eigen::Matrix3d a = s * j * s.inverse();
  const Eigen::Vector3d x0(1.0, -2.0, 0.5), b(0.0, 1.0, 1.0);
  const ModalResponse m = solve_modal(a, b, x0, {dc(3.0)}, 0.0, 6.0);
  REQUIRE(m.accuracy().ok);
  const double err = worst_error(
      m, [&](double t) { return reference_dc(a, b, x0, 3.0, t); }, 60);
  INFO("nearly defective 3x3, max relative error " << err);
  CHECK(err <= 1e-10);
}

TEST_CASE("a 200-state random stable system matches a long-double exponential", "[modal]") {
  // Reference: the long-double exponential of the matrix augmented with the DC input (an
  // independent method in higher precision).
  const int n = 200;
  std::mt19937_64 rng(20261202);
  std::normal_distribution<double> normal;
  Eigen::MatrixXd a(n, n);
  for (int i = 0; i < n; ++i)
    for (int k = 0; k < n; ++k) a(i, k) = normal(rng) / std::sqrt(static_cast<double>(n));
  a.diagonal().array() -= 1.5;
  Eigen::VectorXd b(n), x0(n);
  for (int i = 0; i < n; ++i) b(i) = normal(rng), x0(i) = normal(rng);
  const ModalResponse m = solve_modal(a, b, x0, {dc(2.0)}, 0.0, 4.0);
  REQUIRE(m.accuracy().ok);
  // One long-double exponential over a step h, applied step by step (the grid is uniform).
  const int steps = 8;
  const double h = 4.0 / steps;
  LongMatrix aug = LongMatrix::Zero(n + 1, n + 1);
  aug.topLeftCorner(n, n) = a.cast<long double>() * static_cast<long double>(h);
  aug.col(n).head(n) = b.cast<long double>() * static_cast<long double>(2.0 * h);
  const LongMatrix step = expm_long(aug);
  LongVector state(n + 1);
  state.head(n) = x0.cast<long double>();
  state(n) = 1.0L;
  int done = 0;
  const double err = worst_error(
      m,
      [&](double t) {
        for (; done < std::lround(t / h); ++done) state = step * state;
        return Eigen::VectorXd(state.head(n).cast<double>());
      },
      steps);
  INFO("200 states, max relative error " << err << ", estimate " << m.accuracy().estimated_error);
  CHECK(err <= 1e-10);
}

TEST_CASE("an output C*x + D*u is the same combination of the states and inputs", "[modal]") {
  // Reference: the definition y = C·x + D·u at sample times.
  const SeriesRlc rlc{3.0, 1e-3, 1e-6};
  const Drive u = [] {
    Drive d = cosine(5.0, 700.0);
    d.dc = 2.0;
    return d;
  }();
  const ModalResponse m = solve_modal(rlc.a(), rlc.b(), Eigen::Vector2d(0.1, -4.0), {u}, 0.01, 0.03);
  const Eigen::RowVector2d c(3.0, -1.0);
  const Eigen::RowVectorXd d = Eigen::RowVectorXd::Constant(1, 0.5);
  const Response y = m.output(c, d);
  for (double t : {0.01, 0.017, 0.03}) CHECK_REL(y.value(t), c.dot(m.value(t)) + 0.5 * u.value(t), 1e-13);
}

TEST_CASE("a matrix whose eigenvectors are nearly parallel is flagged instead of trusted", "[modal]") {
  // Common practice, no source: separated eigenvalues with a coupling of 1e14 make the modal
  // basis condition about 1e14; no figure from it can be vouched for at 1e-8.
  const Eigen::Matrix2d a{{-1.0, 1e14}, {0.0, -1e3}};
  const ModalResponse m = solve_modal(a, Eigen::MatrixXd::Zero(2, 1), Eigen::Vector2d(1.0, 1.0), {Drive{}}, 0.0, 1.0);
  CHECK_FALSE(m.accuracy().ok);
  CHECK(m.accuracy().reason.find("estimated relative error") != std::string::npos);
  const Eigen::Matrix2d nan_a{{std::nan(""), 0.0}, {0.0, -1.0}};
  const ModalResponse bad =
      solve_modal(nan_a, Eigen::MatrixXd::Zero(2, 1), Eigen::Vector2d(1.0, 1.0), {Drive{}}, 0.0, 1.0);
  CHECK_FALSE(bad.accuracy().ok);
  CHECK(bad.accuracy().reason == "the state matrix has a non-finite entry");
}

TEST_CASE("the periodic state of an RC under DC is its DC value, and a lossless period map is refused", "[modal]") {
  // Source: the DC steady state of an RC, v = I·R (Ohm's law); a lossless LC over its own period
  // returns to its start (Φ = I), so (I − Φ) is singular (definition of the monodromy matrix).
  const double r = 100.0, c = 1e-6, cur = 0.02, period = 1e-4;
  const Eigen::MatrixXd a = Eigen::MatrixXd::Constant(1, 1, -1 / (r * c));
  const Eigen::MatrixXd b = Eigen::MatrixXd::Constant(1, 1, 1 / c);
  const auto basis = std::make_shared<const ModalBasis>(decompose(a, period));
  const Eigen::MatrixXd phi = transition_matrix(*basis, period);
  CHECK_REL(phi(0, 0), std::exp(-period / (r * c)), 1e-14);
  const ModalResponse forced = solve_modal(basis, b, Eigen::VectorXd::Zero(1), {dc(cur)}, 0.0, period);
  const PeriodicState ps = periodic_state(phi, forced.value(period));
  REQUIRE(ps.accuracy.ok);
  CHECK_REL(ps.x(0), cur * r, 1e-12);

  const SeriesRlc lc{0.0, 1e-3, 1e-6};
  const double t_lc = 2 * kPi * std::sqrt(1e-3 * 1e-6);
  const Eigen::MatrixXd phi_lc = transition_matrix(decompose(lc.a(), t_lc), t_lc);
  CHECK((phi_lc - Eigen::Matrix2d::Identity()).cwiseAbs().maxCoeff() <= 1e-9);
  const PeriodicState bad = periodic_state(phi_lc, Eigen::Vector2d(1.0, 0.0));
  CHECK_FALSE(bad.accuracy.ok);
  CHECK(bad.accuracy.reason.find("eigenvalue") != std::string::npos);
}

TEST_CASE("the transition matrix of a badly scaled snubber matches Schur-Parlett on the balanced matrix", "[modal]") {
  // Reference: Eigen's matrixFunction (Schur–Parlett) on the balanced matrix, back-scaled.
  const Eigen::Matrix2d a{{-10.0, -1.0}, {1e8, 0.0}};
  Eigen::MatrixXd ab = a;
  const Eigen::VectorXd d = balance(ab);
  for (double t : {1e-5, 3.3e-4, 1e-3}) {
    const Eigen::MatrixXd want =
        d.asDiagonal() *
        Eigen::MatrixXd((ab * t).matrixFunction(Eigen::internal::stem_function_exp<std::complex<double>>)) *
        d.cwiseInverse().asDiagonal();
    const Eigen::MatrixXd got = transition_matrix(decompose(a, t), t);
    for (int i = 0; i < 2; ++i)
      for (int k = 0; k < 2; ++k) {
        INFO("t = " << t << ", entry " << i << k);
        CHECK(std::fabs(got(i, k) - want(i, k)) <= 1e-12 * want.row(i).cwiseAbs().maxCoeff());
      }
  }
}

TEST_CASE("a double integrator under DC gives the exact parabola through a cluster that carries the forcing",
          "[modal]") {
  // Reference: x₂ = x₂₀ + u·t, x₁ = x₁₀ + x₂₀·t + u·t²/2 (integration, by hand): the eigenvalue 0
  // is double and the DC rate sits on it, so the forcing joins the cluster as an extra state.
  const Eigen::Matrix2d a{{0.0, 1.0}, {0.0, 0.0}};
  const Eigen::MatrixXd b = (Eigen::MatrixXd(2, 1) << 0.0, 1.0).finished();
  const Eigen::Vector2d x0(0.5, -2.0);
  const double u = 3.0;
  const ModalResponse m = solve_modal(a, b, x0, {dc(u)}, 1.0, 3.0);
  REQUIRE(m.accuracy().ok);
  const double err = worst_error(m, [&](double t) {
    const double s = t - 1.0;
    return Eigen::Vector2d(x0(0) + x0(1) * s + 0.5 * u * s * s, x0(1) + u * s);
  });
  INFO("double integrator, max relative error " << err);
  CHECK(err <= 1e-14);
  CHECK_FALSE(m.state(0).steady_state().has_value());
}

TEST_CASE("two identical lossless tanks driven at resonance both grow as t*sin(wt)", "[modal]") {
  // Source: undamped resonance, as above (textbook forced oscillator); the two tanks share their
  // eigenvalues ±jω₀ exactly (a repeated pair), so the forcing joins a cluster of two modes.
  const double l = 1e-3, c = 1e-6, u = 10.0, w0 = 1.0 / std::sqrt(l * c);
  const SeriesRlc lc{0.0, l, c};
  Eigen::MatrixXd a = Eigen::MatrixXd::Zero(4, 4), b = Eigen::MatrixXd::Zero(4, 1);
  a.topLeftCorner(2, 2) = lc.a();
  a.bottomRightCorner(2, 2) = lc.a();
  b.topRows(2) = lc.b();
  b.bottomRows(2) = 2.0 * lc.b();
  const ModalResponse m = solve_modal(a, b, Eigen::Vector4d::Zero(), {cosine(u, w0 / (2 * kPi))}, 0.0, 0.01);
  REQUIRE(m.accuracy().ok);
  const double err = worst_error(
      m,
      [&](double t) {
        const double v = 0.5 * u * w0 * t * std::sin(w0 * t);
        const double i = c * 0.5 * u * w0 * (std::sin(w0 * t) + w0 * t * std::cos(w0 * t));
        return Eigen::Vector4d(i, v, 2 * i, 2 * v);
      },
      2000);
  INFO("repeated resonance, max relative error " << err);
  CHECK(err <= 1e-12);
}

TEST_CASE("a strongly coupled pair of modes 1e-4 apart is expanded together, not separated", "[modal]") {
  // Reference: for A = [[−1, 1e6], [0, −1 − δ]], x₂ = x₂₀·e^{−(1+δ)t} and
  // x₁ = e^{−t}·(x₁₀ − 1e6·x₂₀·expm1(−δt)/δ) (integration by hand), in long double. Separating the
  // two modes would divide the coupling 1e6 by the gap δ = 1e-4 (a condition of about 1e10).
  const double delta = 1e-4, k = 1e6;
  const Eigen::Matrix2d a{{-1.0, k}, {0.0, -1.0 - delta}};
  const Eigen::Vector2d x0(1.0, 0.5);
  const ModalResponse m = solve_modal(a, Eigen::MatrixXd::Zero(2, 1), x0, {Drive{}}, 0.0, 8.0);
  REQUIRE(m.accuracy().ok);
  const double err = worst_error(m, [&](double t) {
    const long double tl = t, e = std::exp(-tl);
    const long double x1 = e * (x0(0) - k * x0(1) * std::expm1(-static_cast<long double>(delta) * tl) / delta);
    return Eigen::Vector2d(static_cast<double>(x1), static_cast<double>(x0(1) * std::exp(-(1.0L + delta) * tl)));
  });
  INFO("coupled pair, max relative error " << err << ", estimate " << m.accuracy().estimated_error);
  CHECK(err <= 1e-13);
}

TEST_CASE("a mode that grows beyond double range over the segment is flagged", "[modal]") {
  // Common practice, no source: e^{800} exceeds the largest double (about e^{709.8}).
  const Eigen::MatrixXd a = Eigen::MatrixXd::Constant(1, 1, 80.0);
  const ModalResponse m = solve_modal(a, Eigen::MatrixXd::Zero(1, 1), Eigen::VectorXd::Ones(1), {Drive{}}, 0.0, 10.0);
  CHECK_FALSE(m.accuracy().ok);
  CHECK(m.accuracy().reason == "a mode grows by e^800 over the segment, beyond double range");
}

TEST_CASE("a series RLC on a sine settles to the phasor current V/Z with the impedance's phase", "[modal]") {
  // Source: phasor analysis of a series RLC, I = V/(R + j(ωL − 1/ωC)) (textbook).
  const double r = 4.0, l = 20e-3, c = 47e-6, v = 230.0 * std::sqrt(2.0), f = 50.0, w = 2 * kPi * f;
  const SeriesRlc rlc{r, l, c};
  const ModalResponse m = solve_modal(rlc.a(), rlc.b(), Eigen::Vector2d(1.0, -30.0), {cosine(v, f)}, 0.013, 0.2);
  REQUIRE(m.accuracy().ok);
  const auto steady = m.state(0).steady_state();
  REQUIRE(steady.has_value());
  REQUIRE(steady->phasors.size() == 1);
  const std::complex<double> want = v / std::complex<double>(r, w * l - 1.0 / (w * c));
  CHECK_REL(steady->phasors[0].value.real(), want.real(), 1e-12);
  CHECK_REL(steady->phasors[0].value.imag(), want.imag(), 1e-12);
  CHECK(std::fabs(steady->dc) <= 1e-12 * std::abs(want));
  // Long after the transient (τ = 2L/R = 10 ms, 18.7 τ later: e^{−18.7} ≈ 8e-9 of it is left)
  // the response is the phasor.
  CHECK(std::fabs(m.state(0).value(0.2) - steady->value(0.2)) <= 1e-6 * std::abs(want));
}

TEST_CASE("the modes of a state matrix alone are those of its full decomposition", "[modal]") {
  // Reference: the textbook second-order figures (as above) and the eigenvalues of the full
  // decomposition, computed with the Schur vectors.
  const SeriesRlc rlc{6.0, 2e-3, 4.7e-6};
  const auto modes = modes_of(rlc.a());
  REQUIRE(modes.size() == 1);
  CHECK_REL(modes[0].natural_frequency, 1.0 / (2 * kPi * std::sqrt(2e-3 * 4.7e-6)), 1e-13);
  CHECK_REL(modes[0].damping_ratio, 3.0 * std::sqrt(4.7e-6 / 2e-3), 1e-13);
  std::mt19937_64 rng(7);
  std::normal_distribution<double> normal;
  Eigen::MatrixXd a(40, 40);
  for (int i = 0; i < 40; ++i)
    for (int k = 0; k < 40; ++k) a(i, k) = normal(rng);
  a.col(3).setZero();  // a state that drives no derivative: λ = 0
  const auto alone = modes_of(a), full = modes_of(decompose(a, 1.0));
  REQUIRE(alone.size() == full.size());
  for (std::size_t i = 0; i < alone.size(); ++i) {
    CHECK(std::abs(alone[i].eigenvalue - full[i].eigenvalue) <= 1e-12 * a.norm());
    CHECK(alone[i].multiplicity == full[i].multiplicity);
  }
  CHECK(std::any_of(alone.begin(), alone.end(), [](const Mode& m) { return std::isinf(m.time_constant); }));
}
