// Exact integrals of responses and of products of two responses (terms.hpp).
//
// Every term is expanded into monomials c·s^k·e^{z·s}; ∫_{s0}^{s1} s^k·e^{z·s} ds is reduced,
// by s = s0 + h·v and the binomial theorem (all weights ≥ 0 since s0 ≥ 0), to
//
//     E_j(w) = ∫_0^1 v^j·e^{w·v} dv,   w = z·h,
//
// which is computed by whichever form is stable for the pair (j, w):
//   |w| ≤ 1        the series Σ_n wⁿ/(n!·(n + j + 1)): at most e² of cancellation;
//   j ≤ |w|        the upward recurrence E_j = (e^w − j·E_{j−1})/w from E_0 = expm1(w)/w:
//                  an error is multiplied by j/|w| ≤ 1 per step;
//   j > |w| > 1    the downward recurrence E_{j−1} = (e^w − w·E_j)/j from a start J₀ far
//                  enough that the start's error is damped by Π |w|/i below 1e-18 (Miller).
// (See W. Gautschi, "Computational aspects of three-term recurrence relations", SIAM Review 9,
// 1967, for the stability of the two directions; from memory.)

#include <algorithm>
#include <cmath>
#include <numbers>

#include "response/terms.hpp"

namespace netfold::response {

namespace {

struct Monomial {
  Complex c;
  Complex z;
  int k = 0;
};

Complex expm1_of(Complex w) {
  const double x = w.real(), y = w.imag();
  if (y == 0.0) return {std::expm1(x), 0.0};
  const double half = std::sin(0.5 * y);
  return {std::expm1(x) * std::cos(y) - 2.0 * half * half, std::exp(x) * std::sin(y)};
}

// E_j(w) for j = 0..k.
std::vector<Complex> unit_moments(int k, Complex w) {
  std::vector<Complex> e(static_cast<std::size_t>(k) + 1);
  const double aw = std::abs(w);
  if (aw <= 1.0) {
    for (int j = 0; j <= k; ++j) {
      Complex sum = 0.0, term = 1.0;  // term = wⁿ/n!
      for (int n = 0; n < 40; ++n) {
        if (n > 0) term *= w / static_cast<double>(n);
        sum += term / static_cast<double>(n + j + 1);
        if (std::abs(term) < 1e-18) break;
      }
      e[static_cast<std::size_t>(j)] = sum;
    }
    return e;
  }
  const Complex ew = std::exp(w);
  const int j_up = std::min(k, static_cast<int>(std::floor(aw)));
  e[0] = expm1_of(w) / w;
  for (int j = 1; j <= j_up; ++j)
    e[static_cast<std::size_t>(j)] = (ew - static_cast<double>(j) * e[static_cast<std::size_t>(j - 1)]) / w;
  if (j_up == k) return e;
  const int j_low = j_up + 1;  // > |w|
  // The start E_J0 ≈ e^w/(J0 + 1) is off by at most about e^{Re w}, the scale of E_j itself
  // (v^J·|e^{wv}| is largest at v = 1 once J > |w|): damp that error below 1e-18 by the time
  // it reaches E_k, the highest one kept.
  int j0 = k;
  double log_damping = 0.0;
  while (log_damping > -42.0) {
    ++j0;
    log_damping += std::log(aw / j0);
  }
  // E_J ≈ e^w/(J + 1) for J ≫ |w|; its error is damped away on the way down.
  Complex ej = ew / static_cast<double>(j0 + 1);
  for (int i = j0; i > j_low; --i) {
    ej = (ew - w * ej) / static_cast<double>(i);
    if (i - 1 <= k) e[static_cast<std::size_t>(i - 1)] = ej;
  }
  return e;
}

// The monomials of one term over s ∈ [0, s_max]. φ(d, s)·e^{zs} becomes its power series
// where |d|·s_max ≤ 1 (the two exponentials would cancel), the difference of exponentials
// (e^{(z+d)s} − e^{zs})/d otherwise.
void expand(const Term& t, double s_max, std::vector<Monomial>& out) {
  if (!t.has_phi) {
    out.push_back({t.c, t.z, t.k});
    return;
  }
  const double ds = std::abs(t.d) * s_max;
  if (ds > 1.0) {
    out.push_back({t.c / t.d, t.z + t.d, t.k});
    out.push_back({-t.c / t.d, t.z, t.k});
    return;
  }
  // φ(d, s) = Σ_{n≥1} d^{n−1}·sⁿ/n!.
  Complex coef = t.c;
  double bound = 1.0;
  for (int n = 1; n < 40; ++n) {
    coef /= static_cast<double>(n);
    bound /= static_cast<double>(n);
    out.push_back({coef, t.z, t.k + n});
    coef *= t.d;
    bound *= ds;
    if (bound < 1e-18 || coef == Complex(0.0, 0.0)) break;
  }
}

std::vector<Monomial> monomials(const Response& y, double s_max) {
  std::vector<Monomial> out;
  if (y.periodic.dc != 0.0) out.push_back({y.periodic.dc, 0.0, 0});
  for (const auto& p : y.periodic.phasors) {
    const double w = 2.0 * std::numbers::pi * p.frequency;
    out.push_back({p.value * std::polar(1.0, w * y.t0), {0.0, w}, 0});
  }
  for (const auto& t : y.terms) expand(t, s_max, out);
  return out;
}

}  // namespace

Complex moment(int k, Complex z, double s0, double s1) {
  const double h = s1 - s0;
  if (!(h > 0.0)) return 0.0;
  const auto e = unit_moments(k, z * h);
  // ∫_{s0}^{s1} s^k e^{zs} ds = e^{z·s0}·Σ_j C(k, j)·s0^{k−j}·h^{j+1}·E_j(z·h).
  Complex sum = 0.0;
  double binom = 1.0;
  for (int j = 0; j <= k; ++j) {
    if (j > 0) binom *= static_cast<double>(k - j + 1) / j;
    const double s0_power = (k - j == 0) ? 1.0 : std::pow(s0, k - j);
    if (s0_power == 0.0) continue;
    sum += binom * s0_power * std::pow(h, j + 1) * e[static_cast<std::size_t>(j)];
  }
  return s0 == 0.0 ? sum : std::exp(z * s0) * sum;
}

double integral(const Response& y, double from, double to) {
  if (!(to > from)) return 0.0;
  const double s0 = from - y.t0, s1 = to - y.t0;
  double sum = 0.0;
  for (const auto& m : monomials(y, s1)) sum += (m.c * moment(m.k, m.z, s0, s1)).real();
  return sum;
}

double integral_of_product(const Response& f, const Response& g, double from, double to) {
  if (!(to > from)) return 0.0;
  const double s0 = from - f.t0, s1 = to - f.t0;
  const auto mf = monomials(f, s1), mg = monomials(g, s1);
  // Re(A)·Re(B) = ½·Re(A·B) + ½·Re(A·conj B).
  double sum = 0.0;
  for (const auto& a : mf)
    for (const auto& b : mg) {
      const int k = a.k + b.k;
      sum += 0.5 * (a.c * b.c * moment(k, a.z + b.z, s0, s1)).real();
      sum += 0.5 * (a.c * std::conj(b.c) * moment(k, a.z + std::conj(b.z), s0, s1)).real();
    }
  return sum;
}

}  // namespace netfold::response
