// Extremes of a response, or of the product of two, over an interval (terms.hpp).
//
// A local extreme lies where the derivative changes sign. The grid must put two samples on
// either side of every such point: ≥ 24 samples per period of the fastest oscillation (a sum of
// sinusoids and decays has at most a few derivative zeros per period), and, where a decay is
// faster than the interval, 8 samples per time constant over its first 30 time constants (the
// polynomial factors s^k·e^{−s/τ} have their humps at s = k·τ there). Each bracket is refined by
// Newton's method on the derivative (the second derivative is exact), kept inside the bracket and
// falling back to bisection, to a few units of rounding in t.

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <set>

#include "response/terms.hpp"

namespace netfold::response {

namespace {

constexpr double kPointsPerPeriod = 24.0;
constexpr double kMinPoints = 64.0;
constexpr double kMaxPoints = 2'000'000.0;  // bounds very long windows (about a second of work)
constexpr int kPointsPerTau = 8;
constexpr int kTausClustered = 30;

// f, or f·g, with its first two derivatives.
struct Signal {
  const Response& f;
  const Response* g = nullptr;

  double value(double t) const { return g ? f.value(t) * g->value(t) : f.value(t); }
  double d1(double t) const {
    return g ? f.derivative(t) * g->value(t) + f.value(t) * g->derivative(t) : f.derivative(t);
  }
  double d2(double t) const {
    if (!g) return f.second_derivative(t);
    return f.second_derivative(t) * g->value(t) + 2.0 * f.derivative(t) * g->derivative(t) +
           f.value(t) * g->second_derivative(t);
  }
};

// Decay rates (1/s) of a response's terms, one per quarter octave.
void collect_decays(const Response& y, std::set<long>& buckets, std::vector<double>& rates) {
  auto add = [&](double rate) {
    if (!(rate > 0.0) || !std::isfinite(rate)) return;
    const long bucket = std::lround(std::floor(4.0 * std::log2(rate)));
    if (buckets.insert(bucket).second) rates.push_back(rate);
  };
  for (const auto& t : y.terms) {
    add(-t.z.real());
    if (t.has_phi) add(-(t.z + t.d).real());
  }
}

// An oscillation the grid must resolve (rad/s) until an absolute time (+∞: for good).
struct Oscillation {
  double w = 0.0, until = 0.0;
};

// Each term's oscillation, resolved only while its bound |c|·s^k'·e^{r·s} is above
// kNegligibleShare of the response's size: past that, it moves the extremes by less than
// rounding and the grid follows the slower terms (a fast ring that dies within the first
// percent of a long window no longer sets the density of the whole window).
constexpr double kNegligibleShare = 1e-17;

void collect_oscillations(const Response& y, std::vector<Oscillation>& out) {
  const double inf = std::numeric_limits<double>::infinity();
  double size = std::fabs(y.periodic.dc);
  for (const auto& p : y.periodic.phasors) {
    size += std::abs(p.value);
    out.push_back({2.0 * std::numbers::pi * p.frequency, inf});
  }
  struct Bound {
    double c, r, w;
    int k;
    double at(double s) const { return c * std::pow(s, k) * std::exp(r * s); }
  };
  std::vector<Bound> bounds;
  for (const auto& t : y.terms) {
    Bound b{std::abs(t.c), t.has_phi ? std::max(t.z.real(), (t.z + t.d).real()) : t.z.real(),
            std::max(std::fabs(t.z.imag()), t.has_phi ? std::fabs((t.z + t.d).imag()) : 0.0), t.k + (t.has_phi ? 1 : 0)};
    const double hump = b.r < 0.0 ? b.k / -b.r : 0.0;
    size += b.r < 0.0 ? b.at(hump) : b.at(std::max(y.t1 - y.t0, 0.0));
    bounds.push_back(b);
  }
  for (const auto& b : bounds) {
    if (b.w == 0.0) continue;
    if (!(b.r < 0.0) || !std::isfinite(size)) {
      out.push_back({b.w, inf});
      continue;
    }
    double s = std::max(b.k / -b.r, 1.0 / -b.r);  // past the hump: the bound decreases
    int i = 0;
    while (b.at(s) >= kNegligibleShare * size && i++ < 200) s *= 2.0;
    out.push_back({b.w, i > 200 ? inf : y.t0 + s});
  }
}

std::vector<double> sample_times(const Signal& sig, double from, double to) {
  const double span = to - from;
  std::vector<Oscillation> osc_f, osc_g;
  collect_oscillations(sig.f, osc_f);
  if (sig.g) collect_oscillations(*sig.g, osc_g);
  // The grid's density is a step function of t: the fastest oscillation still resolved. A product
  // f·g oscillates at the sum of its factors' fastest frequencies.
  std::vector<double> cuts = {from, to};
  for (const auto* list : {&osc_f, &osc_g})
    for (const auto& o : *list)
      if (o.until > from && o.until < to) cuts.push_back(o.until);
  std::sort(cuts.begin(), cuts.end());
  cuts.erase(std::unique(cuts.begin(), cuts.end()), cuts.end());
  auto fastest = [](const std::vector<Oscillation>& list, double at) {
    double w = 0.0;
    for (const auto& o : list)
      if (o.until > at) w = std::max(w, o.w);
    return w;
  };
  std::vector<double> ts;
  // The whole interval on a grid of at least kMinPoints, as before.
  const auto n_min = static_cast<std::size_t>(kMinPoints);
  for (std::size_t i = 0; i <= n_min; ++i) ts.push_back(from + span * static_cast<double>(i) / static_cast<double>(n_min));
  double budget = kMaxPoints;
  for (std::size_t c = 0; c + 1 < cuts.size(); ++c) {
    const double a = cuts[c], b = cuts[c + 1];
    const double w = fastest(osc_f, a) + fastest(osc_g, a);
    const double wanted = std::ceil((b - a) * w / (2.0 * std::numbers::pi) * kPointsPerPeriod);
    const auto n = static_cast<std::size_t>(std::clamp(wanted, 1.0, std::max(budget, 1.0)));
    budget -= static_cast<double>(n);
    for (std::size_t i = 0; i < n; ++i) ts.push_back(a + (b - a) * static_cast<double>(i) / static_cast<double>(n));
  }
  ts.push_back(to);
  std::set<long> buckets;
  std::vector<double> rates;
  collect_decays(sig.f, buckets, rates);
  if (sig.g) collect_decays(*sig.g, buckets, rates);
  const double start = std::max(from, sig.f.t0);
  for (double rate : rates) {
    const double tau = 1.0 / rate;
    if (tau >= span) continue;  // the uniform grid already resolves it
    for (int k = 1; k <= kPointsPerTau * kTausClustered; ++k) {
      const double t = start + tau * k / kPointsPerTau;
      if (t >= to) break;
      if (t > from) ts.push_back(t);
    }
  }
  std::sort(ts.begin(), ts.end());
  ts.erase(std::unique(ts.begin(), ts.end()), ts.end());
  while (!ts.empty() && ts.back() > to) ts.pop_back();
  return ts;
}

// A zero of the derivative in [a, b], where it changes sign.
double refine(const Signal& sig, double a, double b, double da) {
  const double tol = 4.0 * std::numeric_limits<double>::epsilon() * std::max(std::fabs(a), std::fabs(b)) +
                     std::numeric_limits<double>::min();
  double x = 0.5 * (a + b);
  for (int iter = 0; iter < 200; ++iter) {
    const double dx = sig.d1(x);
    if (dx == 0.0) return x;
    if ((dx > 0.0) == (da > 0.0)) {
      a = x;
      da = dx;
    } else {
      b = x;
    }
    if (b - a <= tol) return x;
    const double curvature = sig.d2(x);
    double next = x - dx / curvature;
    if (!(next > a && next < b)) next = 0.5 * (a + b);
    if (std::fabs(next - x) <= tol) return next;
    x = next;
  }
  return x;
}

Extremes scan(const Signal& sig, double from, double to) {
  Extremes ex;
  ex.max = ex.min = sig.value(from);
  ex.t_max = ex.t_min = from;
  auto consider = [&](double t, double v) {
    if (v > ex.max) {
      ex.max = v;
      ex.t_max = t;
    }
    if (v < ex.min) {
      ex.min = v;
      ex.t_min = t;
    }
  };
  consider(to, sig.value(to));
  if (!(to > from)) return ex;
  const auto ts = sample_times(sig, from, to);
  double t_prev = ts.front(), d_prev = sig.d1(t_prev);
  for (std::size_t i = 1; i < ts.size(); ++i) {
    const double t = ts[i], d = sig.d1(t);
    consider(t, sig.value(t));
    if ((d_prev > 0.0 && d <= 0.0) || (d_prev < 0.0 && d >= 0.0)) {
      const double root = refine(sig, t_prev, t, d_prev);
      consider(root, sig.value(root));
    }
    t_prev = t;
    d_prev = d;
  }
  return ex;
}

}  // namespace

Extremes find_extremes(const Response& y, double from, double to) { return scan(Signal{y}, from, to); }

std::vector<double> bracketing_grid(const Response& y, double from, double to) {
  return sample_times(Signal{y}, from, to);
}

Extremes find_extremes_of_product(const Response& f, const Response& g, double from, double to) {
  return scan(Signal{f, &g}, from, to);
}

}  // namespace netfold::response

namespace netfold::response {

std::optional<Response> transient_part(const Response& y) {
  if (!y.steady_state()) return std::nullopt;
  Response e;
  e.t0 = y.t0;
  e.t1 = y.t1;
  for (const auto& t : y.terms) {
    if (!t.has_phi) {
      if (t.z.real() < 0.0) e.terms.push_back(t);
      continue;
    }
    // c·φ(d, s)·e^{zs} = (c/d)·e^{(z+d)s} − (c/d)·e^{zs}: both parts decay, or one of them is
    // part of the steady state (then d ≠ 0: the two rates differ).
    const bool fast = (t.z + t.d).real() < 0.0, slow = t.z.real() < 0.0;
    if (fast && slow) {
      e.terms.push_back(t);
    } else if (fast) {
      e.terms.push_back(Term{t.c / t.d, t.z + t.d, t.k, false, {}});
    } else if (slow) {
      e.terms.push_back(Term{-t.c / t.d, t.z, t.k, false, {}});
    }
  }
  return e;
}

namespace {

// A term's bound |c|·s^k·e^{r·s} (r < 0): |φ(d, s)| ≤ s·max(1, e^{Re d·s}).
struct Envelope {
  double c = 0.0, r = 0.0;
  int k = 0;
  double at(double s) const { return c * std::pow(s, k) * std::exp(r * s); }
};

}  // namespace

std::optional<double> settling_time(const Response& e, double level) {
  std::vector<Envelope> env;
  double last_hump = 0.0, slowest = 0.0;
  for (const auto& t : e.terms) {
    Envelope b{std::abs(t.c), t.has_phi ? std::max(t.z.real(), (t.z + t.d).real()) : t.z.real(), t.k + (t.has_phi ? 1 : 0)};
    if (!(b.r < 0.0)) return std::nullopt;
    last_hump = std::max(last_hump, b.k / -b.r);  // each bound decreases from its hump on
    slowest = std::max(slowest, 1.0 / -b.r);
    env.push_back(b);
  }
  auto bound = [&](double s) {
    double sum = 0.0;
    for (const auto& b : env) sum += b.at(s);
    return sum;
  };
  if (env.empty()) return 0.0;
  // The span beyond which the bound (decreasing there) stays below the level.
  double span = std::max(last_hump, slowest);
  for (int i = 0; bound(span) >= level; ++i) {
    if (i > 200) return std::nullopt;
    span *= 2.0;
  }
  const double from = e.t0, to = e.t0 + span;
  // The grid's samples and local extremes from the end backwards: the first one where |e|
  // reaches the level is the last excursion's last point there (the decays' clusters, which
  // make most of the grid, lie early and are seldom visited).
  const Signal sig{e};
  const std::vector<double> ts = sample_times(sig, from, to);
  double hit = std::nan(""), after = to;
  double t_next = ts.back(), d_next = sig.d1(t_next);
  for (std::size_t i = ts.size() - 1; i-- > 0;) {
    const double t = ts[i], d = sig.d1(t);
    double later = t_next;  // the next considered point after t
    if ((d > 0.0 && d_next <= 0.0) || (d < 0.0 && d_next >= 0.0)) {
      const double root = refine(sig, t, t_next, d);
      if (std::fabs(sig.value(root)) >= level) {
        hit = root;
        after = t_next;
        break;
      }
      later = root;
    }
    if (std::fabs(sig.value(t)) >= level) {
      hit = t;
      after = later;
      break;
    }
    t_next = t;
    d_next = d;
  }
  if (std::isnan(hit)) return 0.0;
  // e is monotone on [hit, after]: |e| − level changes sign once there.
  double a = hit, b = after;
  for (int iter = 0; iter < 200 && b - a > 2.0 * std::numeric_limits<double>::epsilon() * std::fabs(b); ++iter) {
    const double m = 0.5 * (a + b);
    (std::fabs(sig.value(m)) >= level ? a : b) = m;
  }
  return 0.5 * (a + b) - e.t0;
}

}  // namespace netfold::response
