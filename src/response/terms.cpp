#include "response/terms.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <tuple>

namespace netfold::response {

namespace {

constexpr double kTwoPi = 2.0 * std::numbers::pi;

// e^w − 1 for complex w without cancellation: e^x·cos y − 1 = expm1(x)·cos y − 2·sin²(y/2).
Complex expm1_complex(Complex w) {
  const double x = w.real(), y = w.imag();
  if (y == 0.0) return {std::expm1(x), 0.0};
  const double half = std::sin(0.5 * y);
  return {std::expm1(x) * std::cos(y) - 2.0 * half * half, std::exp(x) * std::sin(y)};
}

// s^n for n ≥ 0, and 0 for n < 0 (the derivative of a constant power).
double power(double s, int n) {
  if (n < 0) return 0.0;
  if (n == 0) return 1.0;
  return std::pow(s, n);
}

// The sort key of a term: terms with equal keys add up.
auto key_of(const Term& t) { return std::make_tuple(t.z.real(), t.z.imag(), t.k, t.has_phi, t.d.real(), t.d.imag()); }

// Re(w) = Re(conj w): keep the representative with Im z ≥ 0 (then Im d ≥ 0 for real z), and
// write φ(0, s)·s^k as the plain s^{k+1}.
Term canonical(Term t) {
  if (!t.has_phi) t.d = 0.0;
  if (t.has_phi && t.d == Complex(0.0, 0.0)) {
    t.has_phi = false;
    ++t.k;
  }
  if (t.z.imag() < 0.0 || (t.z.imag() == 0.0 && t.has_phi && t.d.imag() < 0.0)) {
    t.c = std::conj(t.c);
    t.z = std::conj(t.z);
    t.d = std::conj(t.d);
  }
  return t;
}

// The value of Re(P·e^{jωt}) and its first two derivatives in t.
double phasor_derivative(const Phasor& p, double t, int order) {
  const double w = kTwoPi * p.frequency;
  Complex v = p.value * std::polar(1.0, w * t);
  for (int i = 0; i < order; ++i) v *= Complex(0.0, w);
  return v.real();
}

}  // namespace

Complex phi(Complex d, double s) {
  if (d == Complex(0.0, 0.0)) return s;
  return expm1_complex(d * s) / d;
}

Complex Term::value(double s) const {
  Complex v = c * power(s, k) * std::exp(z * s);
  return has_phi ? v * phi(d, s) : v;
}

Complex Term::derivative(double s) const {
  const Complex e = std::exp(z * s);
  const double p = power(s, k), p1 = k * power(s, k - 1);
  const Complex f = has_phi ? phi(d, s) : 1.0;
  const Complex f1 = has_phi ? std::exp(d * s) : 0.0;
  return c * e * (p1 * f + p * z * f + p * f1);
}

Complex Term::second_derivative(double s) const {
  const Complex e = std::exp(z * s);
  const double p = power(s, k), p1 = k * power(s, k - 1), p2 = k * (k - 1) * power(s, k - 2);
  const Complex f = has_phi ? phi(d, s) : 1.0;
  const Complex f1 = has_phi ? std::exp(d * s) : 0.0;
  const Complex f2 = has_phi ? d * f1 : 0.0;
  // (P·E·F)'' = P''EF + PE''F + PEF'' + 2(P'E'F + P'EF' + PE'F'), E' = zE.
  return c * e * (p2 * f + p * z * z * f + p * f2 + 2.0 * (p1 * z * f + p1 * f1 + p * z * f1));
}

double Response::value(double t) const {
  const double s = t - t0;
  double v = periodic.value(t);
  for (const auto& term : terms) v += term.value(s).real();
  return v;
}

double Response::derivative(double t) const {
  const double s = t - t0;
  double v = 0.0;
  for (const auto& p : periodic.phasors) v += phasor_derivative(p, t, 1);
  for (const auto& term : terms) v += term.derivative(s).real();
  return v;
}

double Response::second_derivative(double t) const {
  const double s = t - t0;
  double v = 0.0;
  for (const auto& p : periodic.phasors) v += phasor_derivative(p, t, 2);
  for (const auto& term : terms) v += term.second_derivative(s).real();
  return v;
}

std::optional<Drive> Response::steady_state() const {
  if (local) return std::nullopt;
  Drive steady = periodic;
  // Each term as plain exponentials: φ(d, s)·e^{zs} = (e^{(z+d)s} − e^{zs})/d (d ≠ 0 here).
  auto add_part = [&](Complex c, Complex rate, int k) {
    if (c == Complex(0.0, 0.0) || rate.real() < 0.0) return true;
    if (rate.real() > 0.0 || k > 0) return false;
    double w = rate.imag();
    if (w == 0.0) {
      steady.dc += c.real();
      return true;
    }
    Complex v = c * std::polar(1.0, -w * t0);  // e^{jω(t − t0)} in absolute time
    if (w < 0.0) {
      v = std::conj(v);
      w = -w;
    }
    steady.add_phasor(w / kTwoPi, v);
    return true;
  };
  for (const auto& t : terms) {
    bool ok =
        t.has_phi ? add_part(t.c / t.d, t.z + t.d, t.k) && add_part(-t.c / t.d, t.z, t.k) : add_part(t.c, t.z, t.k);
    if (!ok) return std::nullopt;
  }
  return steady;
}

void Response::add_term(Term term) {
  term = canonical(term);
  for (auto& t : terms) {
    if (key_of(t) == key_of(term)) {
      t.c += term.c;
      return;
    }
  }
  terms.push_back(term);
}

void Response::add(const Response& other, double coef) {
  periodic.add(other.periodic, coef);
  for (Term t : other.terms) {
    t.c *= coef;
    terms.push_back(t);
  }
  local = local || other.local;
  normalise();
}

void Response::add(const Drive& drive, double coef) { periodic.add(drive, coef); }

void Response::normalise() {
  for (auto& t : terms) t = canonical(t);
  std::sort(terms.begin(), terms.end(), [](const Term& a, const Term& b) { return key_of(a) < key_of(b); });
  std::vector<Term> merged;
  merged.reserve(terms.size());
  for (const auto& t : terms) {
    if (!merged.empty() && key_of(merged.back()) == key_of(t)) {
      merged.back().c += t.c;
    } else {
      merged.push_back(t);
    }
  }
  std::erase_if(merged, [](const Term& t) { return t.c == Complex(0.0, 0.0); });
  terms = std::move(merged);
}

double Response::fastest_angular_frequency() const {
  double w = 0.0;
  for (const auto& t : terms) {
    w = std::max(w, std::fabs(t.z.imag()));
    if (t.has_phi) w = std::max(w, std::fabs((t.z + t.d).imag()));
  }
  for (const auto& p : periodic.phasors) w = std::max(w, kTwoPi * p.frequency);
  return w;
}

std::vector<double> sample(const Response& y, double from, double to, std::size_t intervals) {
  constexpr std::size_t kExactEvery = 128;      // samples per block
  constexpr std::size_t kBlocksExactEvery = 8;  // blocks per exactly computed start
  constexpr std::size_t kTableExactEvery = 16;
  const std::size_t count = intervals + 1;
  const double h = intervals > 0 ? (to - from) / static_cast<double>(intervals) : 0.0;
  std::vector<double> out(count, y.periodic.dc);
  // c·e^{r·(x0 + i·h)}·s_i^k. Within a block of 128 samples e^{r·j·h} comes from a table of the
  // step's powers (at most 15 products from an exact value), and a block's start from the
  // previous one's (at most 7 products from an exact value): within ~25 roundings, the samples
  // independent (no chain of products to wait on), the inner loop two products and a sum in real
  // arithmetic.
  std::vector<double> pr(kExactEvery), pi(kExactEvery);
  auto accumulate = [&](Complex c, Complex rate, double x0, int k) {
    const Complex step = std::exp(rate * h);
    Complex p = 1.0;
    for (std::size_t j = 0; j < kExactEvery; ++j, p *= step) {
      if (j % kTableExactEvery == 0) p = std::exp(rate * (h * static_cast<double>(j)));
      pr[j] = p.real();
      pi[j] = p.imag();
    }
    const Complex block_step = std::exp(rate * (h * static_cast<double>(kExactEvery)));
    Complex anchor = 0.0;
    for (std::size_t start = 0, block = 0; start < count; start += kExactEvery, ++block) {
      anchor =
          block % kBlocksExactEvery == 0 ? std::exp(rate * (x0 + h * static_cast<double>(start))) : anchor * block_step;
      const Complex a = c * anchor;
      const double ar = a.real(), ai = a.imag();
      const std::size_t len = std::min(count - start, kExactEvery);
      double* o = out.data() + start;
      if (k == 0) {
        for (std::size_t j = 0; j < len; ++j) o[j] += ar * pr[j] - ai * pi[j];
      } else {
        for (std::size_t j = 0; j < len; ++j)
          o[j] += (ar * pr[j] - ai * pi[j]) * power(x0 + h * static_cast<double>(start + j), k);
      }
    }
  };
  for (const auto& p : y.periodic.phasors)
    accumulate(p.value * std::polar(1.0, kTwoPi * p.frequency * from), {0.0, kTwoPi * p.frequency}, 0.0, 0);
  for (const auto& t : y.terms) {
    if (t.has_phi) {  // φ needs its expm1: evaluated directly
      for (std::size_t i = 0; i < count; ++i) out[i] += t.value(from - y.t0 + h * static_cast<double>(i)).real();
    } else {
      accumulate(t.c, t.z, from - y.t0, t.k);
    }
  }
  return out;
}

Response response_of_wave(const Wave& wave) {
  Response r;
  r.t0 = wave.t0;
  r.t1 = wave.t1;
  r.periodic.dc = wave.offset;
  r.periodic.phasors = wave.phasors;
  if (wave.drift != 0.0) r.add_term({wave.drift, 0.0, 0, true, wave.a});
  if (wave.transient != 0.0) r.add_term({wave.transient, wave.a, 0, false, 0.0});
  return r;
}

Response constant_response(double t0, double t1, double value) {
  Response r;
  r.t0 = t0;
  r.t1 = t1;
  r.periodic.dc = value;
  return r;
}

Response combine(const std::vector<const Response*>& xs, const std::vector<double>& coefs, const Drive& direct) {
  Response r;
  if (!xs.empty()) {
    r.t0 = xs.front()->t0;
    r.t1 = xs.front()->t1;
  }
  r.periodic = direct;
  for (std::size_t j = 0; j < xs.size() && j < coefs.size(); ++j) {
    const double coef = coefs[j];
    if (coef == 0.0) continue;
    r.periodic.add(xs[j]->periodic, coef);
    for (Term t : xs[j]->terms) {
      t.c *= coef;
      r.terms.push_back(t);
    }
    r.local = r.local || xs[j]->local;
  }
  r.normalise();
  std::erase_if(r.periodic.phasors, [](const Phasor& p) { return p.value == Complex(0.0, 0.0); });
  return r;
}

}  // namespace netfold::response
