// The first crossing of a level by a response (terms.hpp): how a segment's state-dependent
// events (a diode's current falling through zero, its voltage reaching its drop, a contact's
// current zero) are found exactly, as roots of the segment's closed form.
//
// The grid is the one that brackets extremes (terms_extremes.cpp: ≥ 24 samples per period of
// the fastest oscillation, samples clustered over every fast decay), so that between two samples
// the response has at most one extreme. A crossing is then either a sign change between two
// samples, or a dip below the level between two samples above it — found at the cell's extreme,
// where the derivative changes sign. Either bracket is refined by bisection to the last bit of t.

#include <algorithm>
#include <cmath>
#include <limits>

#include "response/terms.hpp"

namespace netfold::response {

namespace {

// The root of g in [a, b] where g(a) > 0 ≥ g(b), to the last representable bit of t.
double bisect(const Response& y, double level, double a, double b) {
  for (int iter = 0; iter < 200; ++iter) {
    const double mid = 0.5 * (a + b);
    if (mid <= a || mid >= b) break;
    if (y.value(mid) - level > 0.0) a = mid;
    else b = mid;
  }
  return b;
}

// The zero of y' in [a, b] where y' changes sign from negative to positive (a minimum).
double minimum_in(const Response& y, double a, double b) {
  for (int iter = 0; iter < 200; ++iter) {
    const double mid = 0.5 * (a + b);
    if (mid <= a || mid >= b) break;
    if (y.derivative(mid) < 0.0) a = mid;
    else b = mid;
  }
  return 0.5 * (a + b);
}

}  // namespace

namespace {

std::optional<double> first_fall_in(const Response& y, double level, double from, double to, double tolerance) {
  const std::vector<double> ts = bracketing_grid(y, from, to);
  double t_prev = ts.front();
  double g_prev = y.value(t_prev) - level, d_prev = y.derivative(t_prev);
  for (std::size_t i = 1; i < ts.size(); ++i) {
    const double t = ts[i];
    const double g = y.value(t) - level, d = y.derivative(t);
    if (g_prev > 0.0 && g <= 0.0 && (g_prev > tolerance || g < -tolerance)) return bisect(y, level, t_prev, t);
    if (g_prev > 0.0 && g > 0.0 && d_prev < 0.0 && d > 0.0) {
      // A dip between two samples above the level: a crossing when its bottom is below.
      const double bottom = minimum_in(y, t_prev, t);
      if (y.value(bottom) - level < -tolerance) return bisect(y, level, t_prev, bottom);
    }
    t_prev = t;
    g_prev = g;
    d_prev = d;
  }
  return std::nullopt;
}

// The span scanned at a time: one period of the slowest sinusoid, or all of it without one.
double scan_chunk(const Response& y, double span) {
  double f_min = 0.0;
  for (const auto& p : y.periodic.phasors)
    if (p.frequency > 0.0 && (f_min == 0.0 || p.frequency < f_min)) f_min = p.frequency;
  return f_min > 0.0 ? std::min(span, 1.0 / f_min) : span;
}

}  // namespace

std::optional<double> first_fall(const Response& y, double level, double from, double to, double tolerance) {
  if (!(to > from)) return std::nullopt;
  // A period at a time: the first crossing is usually in the first one, and a long segment (a
  // rectifier's last, or a window of fifty periods) need not be gridded whole to find it. The
  // grid of each period is as fine as the whole one's, so no crossing is missed.
  const double chunk = scan_chunk(y, to - from);
  for (std::size_t k = 0;; ++k) {
    const double a = from + static_cast<double>(k) * chunk;
    const double b = std::min(to, from + static_cast<double>(k + 1) * chunk);
    if (to - b < 1e-9 * chunk) {
      return first_fall_in(y, level, a, to, tolerance);
    }
    if (auto t = first_fall_in(y, level, a, b, tolerance)) return t;
  }
}

}  // namespace netfold::response
