#include "netfold/closed_form.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <optional>

#include <fmt/format.h>

#include "netfold/diagnostics.hpp"
#include "response/piece_terms.hpp"

namespace netfold {

namespace {

constexpr double kTwoPi = 2.0 * std::numbers::pi;

double phi(double a, double s) { return a == 0.0 ? s : std::expm1(a * s) / a; }

double phasor_value(const Phasor& p, double t) {
  double wt = kTwoPi * p.frequency * t;
  return p.value.real() * std::cos(wt) - p.value.imag() * std::sin(wt);
}

double phasor_derivative(const Phasor& p, double t) {
  double w = kTwoPi * p.frequency;
  double wt = w * t;
  return -w * (p.value.real() * std::sin(wt) + p.value.imag() * std::cos(wt));
}

void merge_phasor(std::vector<Phasor>& phasors, double frequency, std::complex<double> value) {
  auto it = std::lower_bound(phasors.begin(), phasors.end(), frequency,
                             [](const Phasor& p, double f) { return p.frequency < f; });
  if (it != phasors.end() && it->frequency == frequency) {
    it->value += value;
  } else {
    phasors.insert(it, Phasor{frequency, value});
  }
}

}  // namespace

double Drive::value(double t) const {
  double v = dc;
  for (const auto& p : phasors) v += phasor_value(p, t);
  return v;
}

void Drive::add_phasor(double frequency, std::complex<double> value) { merge_phasor(phasors, frequency, value); }

void Drive::add(const Drive& other, double coef) {
  dc += coef * other.dc;
  for (const auto& p : other.phasors) merge_phasor(phasors, p.frequency, coef * p.value);
}

double Wave::value(double t) const {
  double s = t - t0;
  double v = offset;
  if (drift != 0.0) v += drift * phi(a, s);
  if (transient != 0.0) v += transient * std::exp(a * s);
  for (const auto& p : phasors) v += phasor_value(p, t);
  return v;
}

double Wave::derivative(double t) const {
  double s = t - t0;
  double e = std::exp(a * s);
  double d = drift * e + transient * a * e;
  for (const auto& p : phasors) d += phasor_derivative(p, t);
  return d;
}

std::optional<Drive> Wave::steady_state() const {
  Drive d;
  d.phasors = phasors;
  if (a < 0.0) {
    d.dc = offset - drift / a;
  } else if (drift == 0.0 && (a == 0.0 || transient == 0.0)) {
    d.dc = offset + (a == 0.0 ? transient : 0.0);
  } else {
    return std::nullopt;
  }
  return d;
}

Wave state_wave(double t0, double t1, double a, double x0, const Drive& forcing) {
  Wave w;
  w.t0 = t0;
  w.t1 = t1;
  w.a = a;
  w.drift = forcing.dc;
  w.transient = x0;
  for (const auto& f : forcing.phasors) {
    // Particular solution of dx/dt = a·x + Re(F·e^{jωt}): Re(F/(jω − a)·e^{jωt}).
    double omega = kTwoPi * f.frequency;
    std::complex<double> p = f.value / std::complex<double>(-a, omega);
    w.phasors.push_back({f.frequency, p});
    w.transient -= phasor_value({f.frequency, p}, t0);
  }
  return w;
}

Wave affine_wave(const Wave& x, double gain, const Drive& direct) {
  Wave w;
  w.t0 = x.t0;
  w.t1 = x.t1;
  w.a = x.a;
  w.offset = gain * x.offset + direct.dc;
  w.drift = gain * x.drift;
  w.transient = gain * x.transient;
  if (gain != 0.0)
    for (const auto& p : x.phasors) merge_phasor(w.phasors, p.frequency, gain * p.value);
  for (const auto& p : direct.phasors) merge_phasor(w.phasors, p.frequency, p.value);
  std::erase_if(w.phasors, [](const Phasor& p) { return p.value == std::complex<double>(0.0, 0.0); });
  return w;
}

Wave constant_wave(double t0, double t1, double value) {
  Wave w;
  w.t0 = t0;
  w.t1 = t1;
  w.offset = value;
  return w;
}

namespace {

// Brent's method (R. P. Brent, Algorithms for Minimization without Derivatives, 1973, ch. 4)
// for a root of `f` in [a, b] with f(a)·f(b) ≤ 0.
template <typename F>
double brent_root(F&& f, double a, double b, double fa, double fb, double tol) {
  if (fa == 0.0) return a;
  if (fb == 0.0) return b;
  double c = a, fc = fa, d = b - a, e = d;
  for (int iter = 0; iter < 200; ++iter) {
    if ((fb > 0) == (fc > 0)) {
      c = a;
      fc = fa;
      d = e = b - a;
    }
    if (std::fabs(fc) < std::fabs(fb)) {
      a = b;
      b = c;
      c = a;
      fa = fb;
      fb = fc;
      fc = fa;
    }
    double tol1 = 2.0 * std::numeric_limits<double>::epsilon() * std::fabs(b) + 0.5 * tol;
    double m = 0.5 * (c - b);
    if (std::fabs(m) <= tol1 || fb == 0.0) return b;
    if (std::fabs(e) >= tol1 && std::fabs(fa) > std::fabs(fb)) {
      double s = fb / fa, p, q;
      if (a == c) {
        p = 2.0 * m * s;
        q = 1.0 - s;
      } else {
        double qq = fa / fc, r = fb / fc;
        p = s * (2.0 * m * qq * (qq - r) - (b - a) * (r - 1.0));
        q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
      }
      if (p > 0) q = -q;
      p = std::fabs(p);
      if (2.0 * p < std::min(3.0 * m * q - std::fabs(tol1 * q), std::fabs(e * q))) {
        e = d;
        d = p / q;
      } else {
        d = m;
        e = m;
      }
    } else {
      d = m;
      e = m;
    }
    a = b;
    fa = fb;
    b += std::fabs(d) > tol1 ? d : (m > 0 ? tol1 : -tol1);
    fb = f(b);
  }
  return b;
}

double fastest_frequency(const Wave& w) {
  double f = 0.0;
  for (const auto& p : w.phasors) f = std::max(f, p.frequency);
  return f;
}

// The grid must have several points per period of the fastest sinusoid so that every
// local extreme falls between two samples whose derivatives differ in sign; the cap keeps
// very long windows bounded (about a second of work).
constexpr double kPointsPerPeriod = 24.0;
constexpr std::size_t kMinPoints = 64;
constexpr std::size_t kMaxPoints = 2'000'000;
// A window that would need more points than this (and whose tail is not periodic) is refused:
// a sampled peak there could miss the true one by orders of magnitude.
constexpr double kHardMaxPoints = 5e7;

// The common period of a set of frequencies: 1/f_g with every f_i an integer multiple of f_g
// (to 1e-12), the multiples at most kMaxHarmonicRatio; nothing where there is none (a rounded
// frequency, or two with no common period within reach).
constexpr double kMaxHarmonicRatio = 1e9;

std::optional<double> common_frequency(const std::vector<double>& frequencies) {
  double g = 0.0;
  for (double f : frequencies) {
    if (!(f > 0.0)) continue;
    if (g == 0.0) {
      g = f;
      continue;
    }
    // Best rational approximation p/q of f/g by continued fractions; then g/q divides both.
    const double x = f / g;
    double h0 = 1, h1 = std::floor(x), k0 = 0, k1 = 1, r = x - std::floor(x);
    while (std::fabs(h1 / k1 - x) > 1e-12 * x && k1 <= kMaxHarmonicRatio && r > 1e-300) {
      const double a = std::floor(1.0 / r);
      r = 1.0 / r - a;
      const double h2 = a * h1 + h0, k2 = a * k1 + k0;
      h0 = h1, h1 = h2, k0 = k1, k1 = k2;
    }
    if (std::fabs(h1 / k1 - x) > 1e-12 * x || k1 > kMaxHarmonicRatio) return std::nullopt;
    g /= k1;
  }
  if (g == 0.0) return std::nullopt;
  return g;
}

// The time after which a segment's transient is below rounding of its steady state, or
// nothing where the response does not settle (a drift, a growing term).
std::optional<double> transient_end(const Wave& w) {
  const auto steady = w.steady_state();
  if (!steady) return std::nullopt;
  const double rest = std::fabs(w.transient) + (w.a < 0.0 ? std::fabs(w.drift / w.a) : 0.0);
  if (rest == 0.0 || w.a == 0.0) return w.t0;
  if (w.a > 0.0) return std::nullopt;
  double scale = std::fabs(steady->dc);
  for (const auto& p : steady->phasors) scale += std::abs(p.value);
  const double decades = std::log(std::max(rest / (1e-17 * std::max(scale, 1e-300)), 1.0));
  return w.t0 + std::max(40.0, decades) / -w.a;
}

Wave steady_wave(const Wave& w) {
  Wave s = w;
  const Drive d = *w.steady_state();
  s.a = 0.0;
  s.offset = d.dc;
  s.drift = 0.0;
  s.transient = 0.0;
  return s;
}

}  // namespace

namespace {

Extremes sampled_extremes(const Piece& piece, double from, double to, std::size_t n);
Extremes long_window_extremes(const Piece& piece, double from, double to, double wanted);

Extremes merge(Extremes a, const Extremes& b) {
  if (b.max > a.max) a.max = b.max, a.t_max = b.t_max;
  if (b.min < a.min) a.min = b.min, a.t_min = b.t_min;
  return a;
}

// A window of more than kMaxPoints/24 periods of the fastest sinusoid: once the transient is
// below rounding the response is periodic, so its extremes over the rest of the window are
// those of one common period of its sinusoids (first reached within that period); only the
// settling head is searched point by point. Where the response has no such period (a drift,
// frequencies with no common period) the window is searched in full up to kHardMaxPoints and
// refused beyond, rather than sampled too coarsely.
Extremes long_window_extremes(const Piece& piece, double from, double to, double wanted) {
  const auto f_end = transient_end(piece.f);
  const auto g_end = piece.g ? transient_end(*piece.g) : std::optional<double>(from);
  std::vector<double> frequencies;
  for (const Wave* w : {&piece.f, piece.g ? &*piece.g : nullptr})
    if (w)
      for (const auto& p : w->phasors) frequencies.push_back(p.frequency);
  // Products of two sinusoids hold sums and differences of their frequencies: multiples of
  // the common frequency of the factors all the same.
  const auto f_common = common_frequency(frequencies);
  const double f_max = fastest_frequency(piece.f) + (piece.g ? fastest_frequency(*piece.g) : 0.0);
  if (f_end && g_end && f_common) {
    const double settle = std::clamp(std::max(*f_end, *g_end), from, to);
    const double period = 1.0 / *f_common;
    const double head_points = (settle - from) * f_max * kPointsPerPeriod;
    const double period_points = period * f_max * kPointsPerPeriod;
    if (head_points <= kHardMaxPoints && period_points <= kHardMaxPoints) {
      Extremes ex = settle > from ? find_extremes(piece, from, settle) : find_extremes(piece, from, from);
      if (settle < to) {
        Piece steady{steady_wave(piece.f), piece.g ? std::optional<Wave>(steady_wave(*piece.g)) : std::nullopt};
        ex = merge(ex, find_extremes(steady, settle, std::min(to, settle + period)));
      }
      return ex;
    }
  }
  if (wanted > kHardMaxPoints)
    throw NumericError(fmt::format(
        "the window holds {:.3g} periods of the fastest sinusoid ({:.6g} Hz) and the response is not periodic "
        "over it (a drift, a slow transient, or frequencies with no common period): its peak cannot be found "
        "exactly; shorten the window",
        (to - from) * f_max, f_max));
  return sampled_extremes(piece, from, to, static_cast<std::size_t>(wanted));
}

}  // namespace

Extremes find_extremes(const Piece& piece, double from, double to) {
  if (piece.has_terms()) return terms_extremes(piece, from, to);
  const double span = to - from;
  const double f_max = fastest_frequency(piece.f) + (piece.g ? fastest_frequency(*piece.g) : 0.0);
  std::size_t n = kMinPoints;
  if (f_max > 0.0 && span > 0.0) {
    const double wanted = std::ceil(span * f_max * kPointsPerPeriod);
    if (wanted > static_cast<double>(kMaxPoints)) return long_window_extremes(piece, from, to, wanted);
    n = static_cast<std::size_t>(std::max(wanted, static_cast<double>(kMinPoints)));
  }
  return sampled_extremes(piece, from, to, n);
}

namespace {

// Values and derivatives of a Wave on the uniform grid t_i = from + i·h, i = first .. first +
// count − 1. The sinusoids turn by a rotation per step instead of a sin/cos each (a supply of
// 3000 harmonics took a minute in sin/cos alone), re-anchored every kRotationRun points so
// that the rounding of the product stays near 100 ε of the amplitude: good for bracketing
// extremes; every value that becomes a candidate extreme is evaluated again exactly.
constexpr std::size_t kRotationRun = 64;

void wave_on_grid(const Wave& w, double from, double h, std::size_t first, std::size_t count, double* v, double* d) {
  for (std::size_t i = 0; i < count; ++i) {
    const double s = from + h * static_cast<double>(first + i) - w.t0;
    const double e = std::exp(w.a * s);
    v[i] = w.offset + (w.drift != 0.0 ? w.drift * phi(w.a, s) : 0.0) + w.transient * e;
    d[i] = w.drift * e + w.transient * w.a * e;
  }
  for (const auto& p : w.phasors) {
    const double omega = kTwoPi * p.frequency;
    const std::complex<double> turn = std::polar(1.0, omega * h);
    std::complex<double> z;
    for (std::size_t i = 0; i < count; ++i) {
      if (i % kRotationRun == 0) z = p.value * std::polar(1.0, omega * (from + h * static_cast<double>(first + i)));
      v[i] += z.real();
      d[i] -= omega * z.imag();
      z *= turn;
    }
  }
}

// Bounds of |y|, |y'| and |y''| of a Wave over its segment (nothing for a growing term).
struct WaveBounds {
  double b0 = 0.0, b1 = 0.0, b2 = 0.0;
};

std::optional<WaveBounds> wave_bounds(const Wave& w) {
  if (w.a > 0.0) return std::nullopt;
  WaveBounds b;
  const double a = std::fabs(w.a);
  b.b0 = std::fabs(w.offset) + std::fabs(w.transient) + std::fabs(w.drift) * (w.t1 - w.t0);
  b.b1 = std::fabs(w.transient) * a + std::fabs(w.drift);
  b.b2 = std::fabs(w.transient) * a * a + std::fabs(w.drift) * a;
  for (const auto& p : w.phasors) {
    const double m = std::abs(p.value), omega = kTwoPi * p.frequency;
    b.b0 += m;
    b.b1 += m * omega;
    b.b2 += m * omega * omega;
  }
  return b;
}

// A bound of |y''| of a piece (the product rule for powers), or nothing.
std::optional<double> curvature_bound(const Piece& piece) {
  const auto f = wave_bounds(piece.f);
  if (!f) return std::nullopt;
  if (!piece.g) return f->b2;
  const auto g = wave_bounds(*piece.g);
  if (!g) return std::nullopt;
  return f->b2 * g->b0 + 2.0 * f->b1 * g->b1 + f->b0 * g->b2;
}

// Follows a sequence of samples (t, approximate value, approximate derivative) in time
// order: keeps the extremes (re-evaluated exactly where one improves) and refines every sign
// change of the derivative by Brent's method on the exact derivative — except where the
// curvature bound M shows that the local extreme between two samples Δt apart, at most
// M·Δt²/8 beyond the larger (smaller) of them, cannot pass the extreme already found.
class ExtremeScan {
 public:
  ExtremeScan(const Piece& piece, Extremes& ex, double tol)
      : piece_(piece), ex_(ex), tol_(tol), curvature_(curvature_bound(piece)) {}
  void add(double t, double v, double d) {
    if (v > ex_.max || v < ex_.min) consider(t, piece_.value(t));
    const bool rises_then_falls = d_prev_ > 0.0 && d <= 0.0, falls_then_rises = d_prev_ < 0.0 && d >= 0.0;
    if (started_ && (rises_then_falls || falls_then_rises) && could_pass(t, v, rises_then_falls)) {
      auto deriv = [&](double x) { return piece_.derivative(x); };
      const double root = brent_root(deriv, t_prev_, t, deriv(t_prev_), deriv(t), tol_);
      consider(root, piece_.value(root));
    }
    started_ = true;
    t_prev_ = t;
    v_prev_ = v;
    d_prev_ = d;
  }

 private:
  void consider(double t, double v) {
    if (v > ex_.max) ex_.max = v, ex_.t_max = t;
    if (v < ex_.min) ex_.min = v, ex_.t_min = t;
  }
  bool could_pass(double t, double v, bool maximum) const {
    if (!curvature_) return true;
    const double dt = t - t_prev_;
    const double reach = *curvature_ * dt * dt / 8.0;
    // The samples are approximate (rotations): a margin of 1e-9 of their size keeps the test safe.
    const double margin = 1e-9 * (std::fabs(v) + std::fabs(v_prev_)) + reach;
    return maximum ? std::max(v, v_prev_) + margin >= ex_.max : std::min(v, v_prev_) - margin <= ex_.min;
  }
  const Piece& piece_;
  Extremes& ex_;
  double tol_;
  std::optional<double> curvature_;
  bool started_ = false;
  double t_prev_ = 0.0, v_prev_ = 0.0, d_prev_ = 0.0;
};

Extremes sampled_extremes(const Piece& piece, double from, double to, std::size_t n) {
  Extremes ex;
  ex.max = ex.min = piece.value(from);
  ex.t_max = ex.t_min = from;
  const double v_to = piece.value(to);
  if (v_to > ex.max) ex.max = v_to, ex.t_max = to;
  if (v_to < ex.min) ex.min = v_to, ex.t_min = to;
  const double span = to - from;
  if (!(span > 0.0)) return ex;
  const double tol = 1e-12 * std::max(span, std::fabs(to));

  // The uniform grid, in chunks so that memory stays small for a long window.
  const double h = span / static_cast<double>(n);
  constexpr std::size_t kChunk = 4096;
  std::vector<double> fv(kChunk), fd(kChunk), gv(kChunk), gd(kChunk);
  ExtremeScan uniform(piece, ex, tol);
  for (std::size_t first = 0; first <= n; first += kChunk) {
    const std::size_t count = std::min(kChunk, n + 1 - first);
    wave_on_grid(piece.f, from, h, first, count, fv.data(), fd.data());
    if (piece.g) wave_on_grid(*piece.g, from, h, first, count, gv.data(), gd.data());
    for (std::size_t i = 0; i < count; ++i) {
      const double t = first + i == n ? to : from + h * static_cast<double>(first + i);
      if (piece.g)
        uniform.add(t, fv[i] * gv[i], fd[i] * gv[i] + fv[i] * gd[i]);
      else
        uniform.add(t, fv[i], fd[i]);
    }
  }
  // Transients live near the segment start: a second pass over their first 30 time constants.
  std::vector<double> ts;
  for (double a : {piece.f.a, piece.g ? piece.g->a : 0.0}) {
    if (a >= 0.0) continue;
    const double tau = -1.0 / a;
    if (tau >= span) continue;  // the uniform grid already resolves it
    for (int k = 0; k <= 240; ++k) {
      const double t = std::max(from, piece.t0()) + tau * k / 8.0;
      if (t > to) break;
      ts.push_back(t);
    }
  }
  std::sort(ts.begin(), ts.end());
  ts.erase(std::unique(ts.begin(), ts.end()), ts.end());
  ExtremeScan cluster(piece, ex, tol);
  for (double t : ts) cluster.add(t, piece.value(t), piece.derivative(t));
  return ex;
}

}  // namespace

namespace {

// A term c·s^k·e^{z·s} of a complex expansion in s = t − t0; the real signal is the real part.
struct Term {
  std::complex<double> c;
  std::complex<double> z;
  int k = 0;
};

// Rate·span below which φ(a, s) is expanded as a polynomial, so that the two halves of
// (e^{as} − 1)/a do not cancel in integrals.
constexpr double kSmallRate = 1e-2;
constexpr int kPhiTerms = 12;

std::vector<Term> terms_of(const Wave& w) {
  std::vector<Term> terms;
  if (w.offset != 0.0) terms.push_back({w.offset, 0.0, 0});
  if (w.drift != 0.0) {
    double span = w.t1 - w.t0;
    if (w.a == 0.0 || std::fabs(w.a * span) < kSmallRate) {
      // φ(a, s) = Σ_{n≥1} a^{n−1}·s^n/n!
      double coef = w.drift;
      for (int n = 1; n <= kPhiTerms; ++n) {
        coef /= n;
        terms.push_back({coef, 0.0, n});
        coef *= w.a;
        if (coef == 0.0) break;
      }
    } else {
      terms.push_back({w.drift / w.a, w.a, 0});
      terms.push_back({-w.drift / w.a, 0.0, 0});
    }
  }
  if (w.transient != 0.0) terms.push_back({w.transient, w.a, 0});
  for (const auto& p : w.phasors) {
    double omega = kTwoPi * p.frequency;
    terms.push_back({p.value * std::polar(1.0, omega * w.t0), {0.0, omega}, 0});
  }
  return terms;
}

// ∫_0^L s^k·e^{z·s} ds.
std::complex<double> moment(int k, std::complex<double> z, double L) {
  std::complex<double> zl = z * L;
  double lk1 = std::pow(L, k + 1);
  if (std::abs(zl) < 1.0) {
    // Series: L^{k+1}·Σ_n (zL)^n / (n!·(n+k+1)).
    std::complex<double> sum = 0.0, term = 1.0;
    for (int n = 0; n < 80; ++n) {
      if (n > 0) term *= zl / static_cast<double>(n);
      std::complex<double> add = term / static_cast<double>(n + k + 1);
      sum += add;
      if (std::abs(add) < 1e-18 * std::abs(sum)) break;
    }
    return lk1 * sum;
  }
  // I_0 = (e^{zL} − 1)/z; I_k = (L^k·e^{zL} − k·I_{k−1})/z.
  std::complex<double> ezl = std::exp(zl);
  std::complex<double> ik = (ezl - 1.0) / z;
  double lk = 1.0;
  for (int j = 1; j <= k; ++j) {
    lk *= L;
    ik = (lk * ezl - static_cast<double>(j) * ik) / z;
  }
  return ik;
}

std::complex<double> term_integral(const Term& t, double s0, double s1) {
  return t.c * (moment(t.k, t.z, s1) - moment(t.k, t.z, s0));
}

}  // namespace

double integral_of_product(const Wave& f, const Wave& g, double from, double to) {
  if (!(to > from)) return 0.0;
  auto tf = terms_of(f), tg = terms_of(g);
  double s0 = from - f.t0, s1 = to - f.t0;
  // Re(A)·Re(B) = ½·Re(A·B) + ½·Re(A·conj(B)).
  double sum = 0.0;
  for (const auto& a : tf)
    for (const auto& b : tg) {
      Term ab{a.c * b.c, a.z + b.z, a.k + b.k};
      Term abc{a.c * std::conj(b.c), a.z + std::conj(b.z), a.k + b.k};
      sum += 0.5 * (term_integral(ab, s0, s1).real() + term_integral(abc, s0, s1).real());
    }
  return sum;
}

double integral(const Wave& f, double from, double to) {
  if (!(to > from)) return 0.0;
  double s0 = from - f.t0, s1 = to - f.t0;
  double sum = 0.0;
  for (const auto& a : terms_of(f)) sum += term_integral(a, s0, s1).real();
  return sum;
}

}  // namespace netfold
