// Tests of the term-sum response (src/response/terms.hpp): values, derivatives, steady state,
// exact integrals against long-double quadrature, and extremes against calculus.
#include <cmath>
#include <complex>
#include <numbers>

#include "engine_helpers.hpp"
#include "long_double_reference.hpp"
#include "netfold/closed_form.hpp"
#include "response/terms.hpp"

using namespace netfold;
using namespace netfold::response;
using namespace netfold::testing;

namespace {

constexpr double kPi = std::numbers::pi;
using LongComplex = std::complex<long double>;

// c·s^k·e^{zs}·[φ(d, s)] in long double, from its definition (expm1 of the real and imaginary
// parts written out), for the quadrature references.
LongComplex term_long(const Term& t, long double s) {
  const LongComplex z(t.z.real(), t.z.imag()), c(t.c.real(), t.c.imag());
  LongComplex v = c * std::pow(s, static_cast<long double>(t.k)) * std::exp(z * s);
  if (!t.has_phi) return v;
  const LongComplex d(t.d.real(), t.d.imag());
  const LongComplex ds = d * s;
  const long double half = std::sin(0.5L * ds.imag());
  const LongComplex em1(std::expm1(ds.real()) * std::cos(ds.imag()) - 2.0L * half * half,
                        std::exp(ds.real()) * std::sin(ds.imag()));
  return v * em1 / d;
}

long double response_long(const Response& y, long double t) {
  long double v = y.periodic.dc;
  for (const auto& p : y.periodic.phasors) {
    const long double w = 2.0L * 3.141592653589793238462643383279502884L * p.frequency;
    v += p.value.real() * std::cos(w * t) - p.value.imag() * std::sin(w * t);
  }
  for (const auto& term : y.terms) v += term_long(term, t - y.t0).real();
  return v;
}

// A response with every kind of term: constant, phasor, decay, complex mode, secular growth,
// a repeated-eigenvalue power and a drift with a tiny rate.
Response mixed_response() {
  Response y;
  y.t0 = 0.25;
  y.t1 = 2.25;
  y.periodic.dc = 0.7;
  y.periodic.add_phasor(3.0, {0.4, -0.2});
  y.add_term({{1.5, 0.0}, {-2.0, 0.0}, 0, false, 0.0});
  y.add_term({{0.3, -0.8}, {-0.5, 9.0}, 0, false, 0.0});
  y.add_term({{0.05, 0.1}, {0.0, 2.0 * kPi * 3.0}, 1, false, 0.0});
  y.add_term({{2.0, 0.0}, {-4.0, 0.0}, 2, false, 0.0});
  y.add_term({{0.9, 0.0}, {0.0, 0.0}, 0, true, {-1e-9, 0.0}});
  y.add_term({{0.2, 0.3}, {0.0, 5.0}, 0, true, {-0.05, 1e-3}});
  return y;
}

}  // namespace

TEST_CASE("phi is (e^{ds} - 1)/d to rounding even where d*s is tiny or d is complex", "[response]") {
  // Reference: the same definition in long double with expm1l (from memory: expm1 avoids the
  // cancellation of e^x − 1 near 0).
  for (Complex d :
       {Complex(1e-14, 0.0), Complex(-3e-9, 2e-9), Complex(0.7, -4.0), Complex(-30.0, 0.0), Complex(0.0, 1e-12)}) {
    for (double s : {1e-6, 0.3, 2.0}) {
      Term t{1.0, 0.0, 0, true, d};
      const Complex got = phi(d, s);
      const LongComplex want = term_long(t, s);
      INFO("d = " << d << ", s = " << s);
      CHECK_REL(got.real(), static_cast<double>(want.real()), 1e-15);
      CHECK(std::fabs(got.imag() - static_cast<double>(want.imag())) <= 1e-15 * std::abs(got));
    }
  }
  CHECK(phi(0.0, 1.5) == Complex(1.5, 0.0));
}

TEST_CASE("a one-state Wave becomes a Response with the same values, slopes, integrals and steady state",
          "[response]") {
  // Reference: the existing Wave closed form (include/netfold/closed_form.hpp), an independent
  // implementation; the drift with a = 0 is the ramp s (its definition).
  Drive forcing;
  forcing.dc = 3.0;
  forcing.add_phasor(50.0, {2.0, -1.0});
  for (double a : {-200.0, -1e-13, 0.0}) {
    const Wave w = state_wave(0.01, 0.05, a, 1.5, forcing);
    const Response r = response_of_wave(w);
    INFO("a = " << a);
    for (double t : {0.01, 0.0137, 0.029, 0.05}) {
      CHECK_REL(r.value(t), w.value(t), 1e-13);
      CHECK_REL(r.derivative(t), w.derivative(t), 1e-12);
    }
    CHECK_REL(integral(r, 0.012, 0.047), integral(w, 0.012, 0.047), 1e-12);
    CHECK_REL(integral_of_product(r, r, 0.01, 0.05), integral_of_product(w, w, 0.01, 0.05), 1e-12);
    const auto want = w.steady_state();
    const auto got = r.steady_state();
    REQUIRE(got.has_value() == want.has_value());
    if (want) CHECK_REL(got->dc, want->dc, 1e-12);
  }
}

TEST_CASE("the derivatives of every kind of term match long-double differences of its value", "[response]") {
  // Reference: a fourth-order central difference of the long-double value (from memory:
  // f' ≈ (−f(t+2h) + 8f(t+h) − 8f(t−h) + f(t−2h))/(12h), error O(h⁴)).
  const Response y = mixed_response();
  const long double h = 1e-4L;
  for (double t : {0.4, 1.0, 2.0}) {
    auto f = [&](long double x) { return response_long(y, x); };
    auto diff = [&](auto g, long double x) {
      return (-g(x + 2 * h) + 8 * g(x + h) - 8 * g(x - h) + g(x - 2 * h)) / (12 * h);
    };
    const long double d1 = diff(f, t);
    const long double d2 = diff([&](long double x) { return diff(f, x); }, t);
    INFO("t = " << t);
    CHECK_REL(y.value(t), static_cast<double>(f(t)), 1e-13);
    CHECK_REL(y.derivative(t), static_cast<double>(d1), 1e-9);
    CHECK_REL(y.second_derivative(t), static_cast<double>(d2), 1e-6);
  }
}

TEST_CASE("the integral of s^k e^{zs} is exact for small and large |z h| against long-double quadrature",
          "[response]") {
  // Reference: 20-point Gauss–Legendre over 4000 panels in long double (textbook quadrature).
  // The tolerance is relative to ∫|s^k e^{zs}| ds, the scale the integral's rounding lives on.
  for (int k : {0, 1, 3, 8, 20}) {
    for (Complex z :
         {Complex(0.0, 0.0), Complex(1e-9, 0.0), Complex(-0.5, 0.0), Complex(3.0, 0.0), Complex(-40.0, 0.0),
          Complex(0.0, 25.0), Complex(-3.0, 40.0), Complex(18.0, -7.0), Complex(-200.0, 0.0), Complex(-15.0, 12.0)}) {
      for (auto [s0, s1] : {std::pair{0.0, 1.0}, std::pair{0.3, 1.7}}) {
        const LongComplex zl(z.real(), z.imag());
        auto f = [&](long double s) { return std::pow(s, static_cast<long double>(k)) * std::exp(zl * s); };
        const LongComplex want = integrate_long(f, s0, s1, 4000);
        const long double scale =
            integrate_long([&](long double s) { return std::abs(f(s)); }, static_cast<long double>(s0), s1, 4000);
        const Complex got = moment(k, z, s0, s1);
        INFO("k = " << k << ", z = " << z << ", [" << s0 << ", " << s1 << "]: got " << got << ", want "
                    << static_cast<double>(want.real()) << " " << static_cast<double>(want.imag()));
        CHECK(std::abs(LongComplex(got.real(), got.imag()) - want) <= 1e-14L * scale);
      }
    }
  }
}

TEST_CASE("integrals of a response and of a product of two responses are exact", "[response]") {
  // Reference: long-double quadrature of the responses' own definitions.
  const Response f = mixed_response();
  Response g = constant_response(f.t0, f.t1, -0.3);
  g.add_term({{0.0, 1.0}, {-1.0, 9.0}, 1, false, 0.0});
  g.add_term({{1.0, 0.0}, {0.0, 0.0}, 0, true, {2e-7, 0.0}});
  g.periodic.add_phasor(3.0, {0.1, 0.1});
  for (auto [a, b] : {std::pair{0.25, 2.25}, std::pair{0.6, 0.61}, std::pair{1.0, 2.0}}) {
    const long double want_f = integrate_long([&](long double t) { return response_long(f, t); }, a, b, 2000);
    const long double want_fg =
        integrate_long([&](long double t) { return response_long(f, t) * response_long(g, t); }, a, b, 2000);
    INFO("[" << a << ", " << b << "]");
    CHECK_REL(integral(f, a, b), static_cast<double>(want_f), 1e-13);
    CHECK_REL(integral_of_product(f, g, a, b), static_cast<double>(want_fg), 1e-12);
  }
}

TEST_CASE("the steady state keeps undamped terms and refuses drifts, growth and local series", "[response]") {
  // Reference: the limits of each term as s → ∞ (calculus).
  Response y = constant_response(1.0, 2.0, 2.0);
  y.add_term({{3.0, 0.0}, {-1.0, 0.0}, 4, false, 0.0});        // decays
  y.add_term({{0.0, 2.0}, {0.0, -10.0}, 0, false, 0.0});       // lossless mode, written with Im z < 0
  y.add_term({{0.5, 0.0}, {0.0, 0.0}, 0, true, {-4.0, 0.0}});  // drift towards 0.5/4
  auto s = y.steady_state();
  REQUIRE(s.has_value());
  CHECK_REL(s->dc, 2.0 + 0.5 / 4.0, 1e-15);
  REQUIRE(s->phasors.size() == 1);
  CHECK_REL(s->phasors[0].frequency, 10.0 / (2 * kPi), 1e-15);
  for (double t : {1.0, 1.3})
    CHECK_REL(s->value(t) - 2.125, Complex(Complex(0.0, 2.0) * std::exp(Complex(0.0, -10.0) * (t - 1.0))).real(),
              1e-13);

  Response ramp = y;
  ramp.add_term({{1.0, 0.0}, {0.0, 0.0}, 0, true, 0.0});  // φ(0, s) = s
  CHECK_FALSE(ramp.steady_state().has_value());
  Response secular = y;
  secular.add_term({{1.0, 0.0}, {0.0, 10.0}, 1, false, 0.0});
  CHECK_FALSE(secular.steady_state().has_value());
  Response growing = y;
  growing.add_term({{1.0, 0.0}, {1e-6, 0.0}, 0, false, 0.0});
  CHECK_FALSE(growing.steady_state().has_value());
  Response local = y;
  local.local = true;
  CHECK_FALSE(local.steady_state().has_value());
}

TEST_CASE("conjugate halves of a mode merge into one term and linear combinations add pointwise", "[response]") {
  // Reference: Re(w) = Re(conj w) (definition of the real part).
  Response a = constant_response(0.0, 1.0, 1.0);
  a.add_term({{1.0, 2.0}, {-1.0, 3.0}, 0, false, 0.0});
  a.add_term({{0.5, -1.0}, {-1.0, -3.0}, 0, false, 0.0});
  REQUIRE(a.terms.size() == 1);
  CHECK(a.terms[0].z == Complex(-1.0, 3.0));
  CHECK(a.terms[0].c == Complex(1.5, 3.0));
  const Response b = mixed_response();
  Response b0 = b;
  b0.t0 = 0.0;
  Drive direct;
  direct.dc = 0.25;
  direct.add_phasor(7.0, {1.0, 0.0});
  const Response y = combine({&a, &b0}, {2.0, -0.5}, direct);
  for (double t : {0.0, 0.2, 0.9}) CHECK_REL(y.value(t), 2.0 * a.value(t) - 0.5 * b0.value(t) + direct.value(t), 1e-14);
}

TEST_CASE("extremes are found where calculus puts them, for a response and for a product", "[response]") {
  // Reference: s·e^{−s/τ} peaks at s = τ with value τ/e; sin·cos = ½·sin 2ωt peaks at ½ when
  // 2ωt = π/2 (calculus, common practice, no source).
  const double tau = 2e-3;
  Response y;
  y.t0 = 0.0;
  y.t1 = 1.0;
  y.add_term({{1.0, 0.0}, {-1.0 / tau, 0.0}, 1, false, 0.0});
  const Extremes e = find_extremes(y, 0.0, 1.0);
  CHECK_REL(e.t_max, tau, 1e-12);
  CHECK_REL(e.max, tau / std::exp(1.0), 1e-15);
  CHECK(e.min == 0.0);

  const double f = 50.0, w = 2 * kPi * f;
  Response sine = constant_response(0.0, 0.02, 0.0), cosine = sine;
  sine.periodic.add_phasor(f, {0.0, -1.0});
  cosine.periodic.add_phasor(f, {1.0, 0.0});
  const Extremes p = find_extremes_of_product(sine, cosine, 0.0, 0.0099);
  CHECK_REL(p.max, 0.5, 1e-15);
  CHECK_REL(p.t_max, kPi / (4 * w), 1e-12);
  CHECK_REL(p.min, -0.5, 1e-15);
  CHECK_REL(p.t_min, 3 * kPi / (4 * w), 1e-12);
}

TEST_CASE("every local extreme of a fast decay riding on a slow oscillation is bracketed", "[response]") {
  // Reference: the largest value of a dense long-double scan refined by golden-section search
  // (an independent search); a damped 2 kHz ring on a 50 Hz wave over 40 ms.
  const Response y = [] {
    Response r = constant_response(0.0, 0.04, 0.1);
    r.periodic.add_phasor(50.0, {1.0, 0.3});
    r.add_term({{2.0, -1.0}, {-300.0, 2 * kPi * 2000.0}, 0, false, 0.0});
    r.add_term({{-4.0, 0.0}, {-5e4, 0.0}, 1, false, 0.0});
    return r;
  }();
  long double best = -1e30L, best_t = 0;
  for (int i = 0; i <= 400000; ++i) {
    const long double t = 0.04L * i / 400000;
    const long double v = response_long(y, t);
    if (v > best) best = v, best_t = t;
  }
  long double lo = best_t - 1e-7L, hi = best_t + 1e-7L;  // golden-section search on the bracket
  const long double g = 0.6180339887498948482L;
  for (int i = 0; i < 100; ++i) {
    const long double a = hi - g * (hi - lo), b = lo + g * (hi - lo);
    (response_long(y, a) > response_long(y, b) ? hi : lo) = (response_long(y, a) > response_long(y, b) ? b : a);
  }
  best_t = 0.5L * (lo + hi);
  best = response_long(y, best_t);
  const Extremes e = find_extremes(y, 0.0, 0.04);
  CHECK_REL(e.max, static_cast<double>(best), 1e-14);
  CHECK(std::fabs(e.t_max - static_cast<double>(best_t)) <= 1e-9);
}

TEST_CASE("sampling on a uniform grid gives the direct values to a few dozen roundings", "[response]") {
  // Reference: Response::value at the same times (the definition).
  const Response y = mixed_response();
  const auto v = sample(y, 0.3, 2.2, 10'000);
  REQUIRE(v.size() == 10'001);
  double scale = 0.0, err = 0.0;
  for (std::size_t i = 0; i < v.size(); ++i) {
    const double t = i == 10'000 ? 2.2 : 0.3 + 1.9 * static_cast<double>(i) / 10'000;
    scale = std::max(scale, std::fabs(y.value(t)));
    err = std::max(err, std::fabs(v[i] - y.value(t)));
  }
  INFO("max difference " << err << ", scale " << scale);
  CHECK(err <= 1e-13 * scale);
}
