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
#include <iterator>
#include <numbers>
#include <vector>

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
        if (std::norm(term) < 1e-36) break;  // |term| < 1e-18, without a hypot
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

std::vector<Complex> moments(int k_max, Complex z, double s0, double s1) {
  std::vector<Complex> out(static_cast<std::size_t>(k_max) + 1, Complex(0.0, 0.0));
  const double h = s1 - s0;
  if (!(h > 0.0)) return out;
  const auto e = unit_moments(k_max, z * h);
  // ∫_{s0}^{s1} s^k e^{zs} ds = e^{z·s0}·Σ_j C(k, j)·s0^{k−j}·h^{j+1}·E_j(z·h).
  std::vector<double> h_power(static_cast<std::size_t>(k_max) + 2, h), s0_power(static_cast<std::size_t>(k_max) + 1, 1.0);
  for (std::size_t j = 1; j < h_power.size(); ++j) h_power[j] = h_power[j - 1] * h;
  for (std::size_t j = 1; j < s0_power.size(); ++j) s0_power[j] = s0_power[j - 1] * s0;
  const Complex shift = s0 == 0.0 ? Complex(1.0, 0.0) : std::exp(z * s0);
  for (int k = 0; k <= k_max; ++k) {
    Complex sum = 0.0;
    double binom = 1.0;
    for (int j = 0; j <= k; ++j) {
      if (j > 0) binom *= static_cast<double>(k - j + 1) / j;
      const double s0_k_j = s0_power[static_cast<std::size_t>(k - j)];
      if (s0_k_j == 0.0) continue;
      sum += binom * s0_k_j * h_power[static_cast<std::size_t>(j)] * e[static_cast<std::size_t>(j)];
    }
    out[static_cast<std::size_t>(k)] = shift * sum;
  }
  return out;
}

Complex moment(int k, Complex z, double s0, double s1) { return moments(k, z, s0, s1)[static_cast<std::size_t>(k)]; }

namespace {

// Monomials gathered by their exponent: Σ_k c[k]·s^k·e^{z·s} for each distinct z. The products
// of two expanded φ terms share one z across dozens of powers; one moments() call serves them all.
class MonomialSum {
 public:
  void add(Complex z, int k, Complex c) {
    auto it = std::find_if(groups_.begin(), groups_.end(), [&](const Group& g) { return g.z == z; });
    if (it == groups_.end()) {
      groups_.push_back({z, {}});
      it = std::prev(groups_.end());
    }
    if (it->c.size() <= static_cast<std::size_t>(k)) it->c.resize(static_cast<std::size_t>(k) + 1, Complex(0.0, 0.0));
    it->c[static_cast<std::size_t>(k)] += c;
  }

  // The real part of the sum's integral over [s0, s1].
  double integral(double s0, double s1) const {
    double sum = 0.0;
    for (const auto& g : groups_) {
      const auto m = moments(static_cast<int>(g.c.size()) - 1, g.z, s0, s1);
      for (std::size_t k = 0; k < g.c.size(); ++k) sum += (g.c[k] * m[k]).real();
    }
    return sum;
  }

 private:
  struct Group {
    Complex z;
    std::vector<Complex> c;
  };
  std::vector<Group> groups_;
};

}  // namespace

double integral(const Response& y, double from, double to) {
  if (!(to > from)) return 0.0;
  const double s0 = from - y.t0, s1 = to - y.t0;
  MonomialSum sum;
  for (const auto& m : monomials(y, s1)) sum.add(m.z, m.k, m.c);
  return sum.integral(s0, s1);
}

double integral_of_product(const Response& f, const Response& g, double from, double to) {
  if (!(to > from)) return 0.0;
  const double s0 = from - f.t0, s1 = to - f.t0;
  const auto mf = monomials(f, s1), mg = monomials(g, s1);
  // Re(A)·Re(B) = ½·Re(A·B) + ½·Re(A·conj B).
  MonomialSum sum;
  for (const auto& a : mf)
    for (const auto& b : mg) {
      const int k = a.k + b.k;
      sum.add(a.z + b.z, k, 0.5 * a.c * b.c);
      sum.add(a.z + std::conj(b.z), k, 0.5 * a.c * std::conj(b.c));
    }
  return sum.integral(s0, s1);
}

}  // namespace netfold::response
