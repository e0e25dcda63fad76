#include "netfold/stress.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <memory>
#include <numbers>
#include <stdexcept>
#include <vector>

#include <fmt/format.h>

#include "netfold/diagnostics.hpp"
#include "response/terms.hpp"

namespace netfold {

namespace {

constexpr double kTwoPi = 2.0 * std::numbers::pi;

// The grid of the rms search: as find_extremes, several points per period of the fastest
// sinusoid of y² (twice that of y), and a cluster over the first 30 time constants of each
// transient; beyond kMaxRmsPoints the search refuses rather than sample too coarsely.
constexpr double kPointsPerPeriod = 24.0;
constexpr std::size_t kMinPoints = 64;
constexpr double kMaxRmsPoints = 2e7;
// A change of ∫y² over a period smaller than this share of y²'s size is rounding: in the
// periodic steady state the integral is constant and its derivative is noise.
constexpr double kRmsDeadBand = 1e-9;

// The fastest frequency (Hz) of a one-factor piece and the decay rates (1/s, < 0) of its
// transients, for the grid of the rms search.
double fastest(const Piece& p) {
  if (p.terms_f) return p.terms_f->fastest_angular_frequency() / kTwoPi;
  double f = 0.0;
  for (const auto& ph : p.f.phasors) f = std::max(f, ph.frequency);
  return f;
}

std::vector<double> decay_rates(const Piece& p) {
  if (!p.terms_f) return {p.f.a};
  std::vector<double> rates;
  for (const auto& t : p.terms_f->terms) rates.push_back(t.z.real());
  return rates;
}

// d/dt of a term response: d/ds [c·s^k·e^{z·s}·φ(d, s)] = c·(k·s^{k−1} + z·s^k)·e^{z·s}·φ +
// c·s^k·e^{z·s}·e^{d·s}, with e^{d·s} = 1 + d·φ(d, s); phasors times jω, the constant gone.
response::Response derivative_of_terms(const response::Response& y) {
  response::Response d;
  d.t0 = y.t0;
  d.t1 = y.t1;
  d.local = y.local;
  for (const auto& p : y.periodic.phasors) {
    const std::complex<double> v = p.value * std::complex<double>(0.0, kTwoPi * p.frequency);
    if (v != std::complex<double>(0.0, 0.0)) d.periodic.phasors.push_back({p.frequency, v});
  }
  for (const auto& t : y.terms) {
    if (t.k > 0) d.add_term({t.c * static_cast<double>(t.k), t.z, t.k - 1, t.has_phi, t.d});
    if (t.has_phi) {
      d.add_term({t.c * (t.z + t.d), t.z, t.k, true, t.d});
      d.add_term({t.c, t.z, t.k, false, {}});
    } else {
      d.add_term({t.c * t.z, t.z, t.k, false, {}});
    }
  }
  d.normalise();
  return d;
}

void require_single_wave(const Observable& observable, const char* what) {
  if (observable.kind == ObservableKind::element_power)
    throw std::invalid_argument(fmt::format("the {} of a power ({}) is not computed", what, observable.text));
}

// The piece that holds t (the last one starting at or before t).
const Piece& piece_at(const std::vector<Piece>& pieces, double t) {
  auto it = std::upper_bound(pieces.begin(), pieces.end(), t, [](double x, const Piece& p) { return x < p.t0(); });
  return it == pieces.begin() ? pieces.front() : *(it - 1);
}

// ∫ y² dt over [from, to], exactly, segment by segment.
double integral_of_square(const std::vector<Piece>& pieces, double from, double to) {
  double sum = 0.0;
  for (const auto& p : pieces) {
    const double a = std::max(from, p.t0()), b = std::min(to, p.t1());
    if (a < b) sum += integral_of_product(p, p, a, b);
  }
  return std::max(sum, 0.0);
}

// The maxima of F(τ) = ∫_τ^{τ+T} y² dt inside (b0, b1), where the pieces that hold τ and τ + T
// do not change: the roots where F'(τ) = y²(τ + T) − y²(τ) turns from + to −.
void rms_maxima_between(const Piece& p, const Piece& q, double period, double b0, double b1,
                        std::vector<double>& candidates) {
  auto slope = [&](double tau) {
    const double yq = q.value(tau + period), yp = p.value(tau);
    return yq * yq - yp * yp;
  };
  const double span = b1 - b0;
  const double f_max = std::max(fastest(p), fastest(q));
  const double wanted = std::ceil(span * 2.0 * f_max * kPointsPerPeriod);
  if (wanted > kMaxRmsPoints)
    throw NumericError(fmt::format("the rms search would need {:.3g} points to follow the fastest sinusoid "
                                   "({:.6g} Hz) over the window; shorten the window",
                                   wanted, f_max));
  const auto n = static_cast<std::size_t>(std::max(wanted, static_cast<double>(kMinPoints)));
  std::vector<double> ts;
  ts.reserve(n + 1);
  for (std::size_t k = 0; k <= n; ++k) ts.push_back(k == n ? b1 : b0 + span * static_cast<double>(k) / static_cast<double>(n));
  std::vector<double> rates = decay_rates(p);
  for (double r : decay_rates(q)) rates.push_back(r);
  for (double a : rates) {
    if (a >= 0.0 || -1.0 / a >= span) continue;
    for (int k = 1; k <= 240; ++k) {
      const double t = b0 + (-1.0 / a) * k / 8.0;
      if (t >= b1) break;
      ts.push_back(t);
    }
  }
  std::sort(ts.begin(), ts.end());
  ts.erase(std::unique(ts.begin(), ts.end()), ts.end());
  std::vector<double> d(ts.size());
  double scale = 0.0;
  for (std::size_t k = 0; k < ts.size(); ++k) {
    const double yq = q.value(ts[k] + period), yp = p.value(ts[k]);
    d[k] = yq * yq - yp * yp;
    scale = std::max({scale, yq * yq, yp * yp});
  }
  const double dead = kRmsDeadBand * scale;
  // The last sample whose slope was clearly positive; a clearly negative one after it brackets
  // a maximum (a root, or a kink where a transient starts).
  constexpr std::size_t kNoSample = static_cast<std::size_t>(-1);
  std::size_t rising = kNoSample;
  for (std::size_t k = 0; k < ts.size(); ++k) {
    if (d[k] > dead) {
      rising = k;
    } else if (d[k] < -dead && rising != kNoSample) {
      double lo = ts[rising], hi = ts[k];
      for (int it = 0; it < 100 && hi - lo > 1e-15 * std::max(std::fabs(hi), span); ++it) {
        const double mid = 0.5 * (lo + hi);
        (slope(mid) > 0.0 ? lo : hi) = mid;
      }
      candidates.push_back(0.5 * (lo + hi));
      rising = kNoSample;
    }
  }
}

// Narrows [lo, hi] of a piece, where max |y| ≥ level somewhere and |y(hi)| < level, to the last
// instant at which |y| reaches the level.
double last_reach(const Piece& p, double lo, double hi, double level) {
  for (int it = 0; it < 200 && hi - lo > 1e-14 * std::max(std::fabs(hi), 1e-300); ++it) {
    const double mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    const Extremes ex = find_extremes(p, mid, hi);
    if (std::max(std::fabs(ex.max), std::fabs(ex.min)) >= level)
      lo = mid;
    else
      hi = mid;
  }
  return hi;
}

}  // namespace

Wave derivative_of(const Wave& w) {
  Wave d;
  d.t0 = w.t0;
  d.t1 = w.t1;
  d.a = w.a;
  // drift·φ'(a, s) = drift·e^{a·s}: with the transient's a·transient·e^{a·s}, one exponential.
  d.transient = w.drift + w.a * w.transient;
  for (const auto& p : w.phasors) {
    const double omega = kTwoPi * p.frequency;
    const std::complex<double> v = p.value * std::complex<double>(0.0, omega);
    if (v != std::complex<double>(0.0, 0.0)) d.phasors.push_back({p.frequency, v});
  }
  return d;
}

Piece derivative_of(const Piece& piece) {
  if (piece.is_product()) throw std::invalid_argument("the derivative of a product piece (a power) is not a single wave");
  Piece d{derivative_of(piece.f), std::nullopt};
  if (piece.terms_f) d.terms_f = std::make_shared<const response::Response>(derivative_of_terms(*piece.terms_f));
  return d;
}

RateFigure largest_rate(const Solution& solution, const Observable& observable) {
  require_single_wave(observable, "rate of change");
  const Window& w = solution.window();
  RateFigure best;
  bool found = false;
  for (const Piece& p : solution.pieces(observable)) {
    const double a = std::max(w.from, p.t0()), b = std::min(w.to, p.t1());
    if (a > b) continue;
    const Extremes ex = find_extremes(derivative_of(p), a, b);
    const bool max_wins = std::fabs(ex.max) >= std::fabs(ex.min);
    const double value = max_wins ? std::fabs(ex.max) : std::fabs(ex.min);
    const double time = max_wins ? ex.t_max : ex.t_min;
    // The end of a segment that an event ends is the left limit at that event.
    const bool before = time == b && b < w.to;
    // At an event where the derivative does not jump, the value after it (the right limit) is
    // named rather than the equal one before it.
    const bool same_event = found && best.before_event && time == best.time && value >= best.value * (1.0 - 1e-12);
    if (!found || value > best.value || same_event) {
      best = {value, time, before};
      found = true;
    }
  }
  return best;
}

double fundamental_frequency(const Circuit& circuit) {
  double f = 0.0;
  for (const auto& e : circuit.elements())
    for (const auto& s : e.waveform.sinusoids)
      if (s.amplitude != 0.0 && (f == 0.0 || s.frequency < f)) f = s.frequency;
  return f;
}

RmsFigure largest_rms(const Solution& solution, const Observable& observable) {
  require_single_wave(observable, "rms");
  const Window& w = solution.window();
  const std::vector<Piece> pieces = solution.pieces(observable);
  const double f1 = fundamental_frequency(solution.circuit());
  const double length = w.to - w.from;
  if (!(f1 > 0.0) || !(length > 1.0 / f1)) {
    const double mean = length > 0.0 ? integral_of_square(pieces, w.from, w.to) / length : 0.0;
    const double at = w.from;
    return {std::sqrt(length > 0.0 ? mean : std::pow(solution.value(observable, at), 2)), w.from, length, true};
  }
  const double period = 1.0 / f1;
  const double last = w.to - period;
  // F(τ) has kinks where τ or τ + T crosses an event: those, the ends, and the maxima between.
  std::vector<double> breaks{w.from, last};
  for (const auto& p : pieces)
    for (double t : {p.t0(), p.t0() - period})
      if (t > w.from && t < last) breaks.push_back(t);
  std::sort(breaks.begin(), breaks.end());
  breaks.erase(std::unique(breaks.begin(), breaks.end()), breaks.end());
  std::vector<double> candidates = breaks;
  for (std::size_t k = 0; k + 1 < breaks.size(); ++k) {
    const double b0 = breaks[k], b1 = breaks[k + 1], mid = 0.5 * (b0 + b1);
    rms_maxima_between(piece_at(pieces, mid), piece_at(pieces, mid + period), period, b0, b1, candidates);
  }
  RmsFigure best{0.0, w.from, period, false};
  double best_integral = -1.0;
  for (double tau : candidates) {
    const double integral = integral_of_square(pieces, tau, tau + period);
    if (integral > best_integral) {
      best_integral = integral;
      best.from = tau;
    }
  }
  best.value = std::sqrt(best_integral / period);
  if (!std::isfinite(best.value))
    throw NumericError(fmt::format("the rms of {} is beyond the range of double precision", observable.text));
  return best;
}

Peak largest_signed(const Solution& solution, const Observable& observable, double sign) {
  const Window& w = solution.window();
  Peak best{0.0, w.from};
  for (const Piece& p : solution.pieces(observable)) {
    const double a = std::max(w.from, p.t0()), b = std::min(w.to, p.t1());
    if (a > b) continue;
    const Extremes ex = find_extremes(p, a, b);
    const double value = sign > 0.0 ? ex.max : -ex.min;
    if (value > best.value) best = {value, sign > 0.0 ? ex.t_max : ex.t_min};
  }
  return best;
}

double last_event_time(const Solution& solution) {
  const Window& w = solution.window();
  double t = w.from;
  for (const auto& e : solution.schedule().events)
    if (e.time < w.to && e.time > t) t = e.time;
  return t;
}

TimeBelow time_below(const Solution& solution, const Observable& observable, double level,
                     std::optional<double> from) {
  const Window& w = solution.window();
  const double start = from.value_or(last_event_time(solution));
  if (!(start >= 0.0 && start <= w.to))
    throw std::invalid_argument(fmt::format("the start of a time-below figure ({} s) lies outside 0 .. {} s", start, w.to));
  TimeBelow out;
  out.from = start;
  const std::vector<Piece> pieces = solution.pieces(observable);
  if (!(std::fabs(pieces.back().value(w.to)) < level)) return out;
  out.stays_below = true;
  for (auto it = pieces.rbegin(); it != pieces.rend(); ++it) {
    const Piece& p = *it;
    const double a = std::max(start, p.t0()), b = std::min(w.to, p.t1());
    // A piece that ends where the measurement starts contributes only its left limit there,
    // which is before the start.
    if (!(a < b) && !(a == b && b == w.to)) continue;
    const Extremes ex = find_extremes(p, a, b);
    if (std::max(std::fabs(ex.max), std::fabs(ex.min)) < level) continue;
    // The left limit at the event that ends this piece counts as reached at that event.
    const double t = std::fabs(p.value(b)) >= level ? b : last_reach(p, a, b, level);
    out.time = t - start;
    return out;
  }
  return out;
}

}  // namespace netfold
