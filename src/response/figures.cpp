#include "netfold/solve.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <set>
#include <unordered_map>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "netfold/units.hpp"
#include "response/range.hpp"
#include "response/terms.hpp"
#include "response/solve_support.hpp"
#include "response/test_seams.hpp"


namespace netfold {

using namespace detail;

namespace {

// Extremes of a list of pieces over [from, to].
Extremes extremes_over(const std::vector<Piece>& pieces, double from, double to) {
  Extremes ex;
  bool first = true;
  for (const auto& p : pieces) {
    double a = std::max(from, p.t0()), b = std::min(to, p.t1());
    if (a > b) continue;
    Extremes e = find_extremes(p, a, b);
    if (first || e.max > ex.max) {
      ex.max = e.max;
      ex.t_max = e.t_max;
    }
    if (first || e.min < ex.min) {
      ex.min = e.min;
      ex.t_min = e.t_min;
    }
    first = false;
  }
  return ex;
}

double lowest_frequency(const Circuit& c) { return slowest_frequency(c); }

// Diodes with a sinusoidal source: conduction intervals repeat every period, so no segment's
// own steady state is the circuit's.
bool switches_periodically(const Solution& solution) {
  return !solution.segments().empty() && !solution.segments().back().positions.diodes.empty() &&
         lowest_frequency(solution.circuit()) > 0.0;
}

double steady_peak(const Drive& d) {
  if (d.phasors.empty()) return std::fabs(d.dc);
  Wave w;
  w.offset = d.dc;
  w.phasors = d.phasors;
  double f0 = d.phasors.front().frequency;
  w.t0 = 0.0;
  w.t1 = 1.0 / f0;
  Extremes e = find_extremes(Piece{w, std::nullopt}, 0.0, w.t1);
  return std::max(std::fabs(e.max), std::fabs(e.min));
}

}  // namespace

Peak find_peak(const Solution& solution, const Observable& obs) {
  Extremes ex = extremes_over(solution.pieces(obs), solution.window().from, solution.window().to);
  if (std::fabs(ex.max) >= std::fabs(ex.min)) return {std::fabs(ex.max), ex.t_max};
  return {std::fabs(ex.min), ex.t_min};
}

Figures compute_figures(const Solution& solution, const Observable& obs) {
  Figures f;
  const Window& win = solution.window();
  std::vector<Piece> pieces = solution.pieces(obs);
  Extremes ex = extremes_over(pieces, win.from, win.to);
  f.max = ex.max;
  f.t_max = ex.t_max;
  f.min = ex.min;
  f.t_min = ex.t_min;
  if (std::fabs(ex.max) >= std::fabs(ex.min)) {
    f.peak = std::fabs(ex.max);
    f.t_peak = ex.t_max;
  } else {
    f.peak = std::fabs(ex.min);
    f.t_peak = ex.t_min;
  }
  f.final_value = pieces.back().value(win.to);
  for (double v : {f.max, f.min, f.final_value})
    if (!std::isfinite(v)) {
      const Circuit& c = solution.circuit();
      SourceLoc loc = obs.loc.line > 0 ? obs.loc
                                       : (solution.storage() != kNone ? c.element(solution.storage()).loc : SourceLoc{1, 1});
      throw InputError(c.diagnostic(loc, fmt::format("'{}' reaches values beyond the range of double precision in "
                                                     "the window; check the element values (a near-zero or "
                                                     "near-infinite resistance, capacitance or inductance)",
                                                     obs.text)));
    }
  if (obs.kind == ObservableKind::element_power) return f;

  // Diodes on an AC supply keep changing state: the last segment's own steady state is not the
  // circuit's (that is periodic, with conduction intervals), so none is reported.
  if (switches_periodically(solution)) return f;
  const Wave& last = pieces.back().f;
  f.steady = steady_state_of(pieces.back());
  if (f.steady) {
    f.dc = f.steady->dc;
    double f0 = lowest_frequency(solution.circuit());
    if (f0 > 0.0) {
      std::complex<double> p = 0.0;
      for (const auto& ph : f.steady->phasors)
        if (ph.frequency == f0) p = ph.value;
      f.amplitude = std::abs(p);
      if (std::abs(p) > 0.0) f.phase = std::arg(p);
    }
    double reference = steady_peak(*f.steady);
    f.steady_peak = reference;
    // A steady state that is zero but for rounding (a capacitor current under DC) would make
    // the 1 % criterion measure noise: such a steady state counts as zero.
    if (reference <= 1e-9 * f.peak) reference = f.peak;
    double threshold = 0.01 * reference;
    // Several storage elements: the last time |y − y_ss| reaches the band, found on the terms.
    if (pieces.back().has_terms()) {
      if (threshold > 0.0)
        if (auto e = response::transient_part(*pieces.back().terms_f)) f.settling_time = response::settling_time(*e, threshold);
      return f;
    }
    // Settling: after the last event, y − y_ss = D·e^{a(t − t0)}.
    double d = last.a < 0.0 ? last.transient + last.drift / last.a : (last.a == 0.0 ? 0.0 : last.transient);
    if (d == 0.0 || std::fabs(d) <= threshold) {
      f.settling_time = 0.0;
    } else if (last.a < 0.0 && threshold > 0.0) {
      f.settling_time = std::log(std::fabs(d) / threshold) / -last.a;
    }
  }
  return f;
}

namespace {


// An integral of a product overflows long before its factors do (a 1e300 V source): refuse it
// in circuit terms rather than print a number that is not one.
double finite_or_refuse(const Solution& solution, ElementId id, double value, const char* what) {
  if (std::isfinite(value)) return value;
  const Circuit& c = solution.circuit();
  throw InputError(c.diagnostic(c.element(id).loc,
                                fmt::format("the {} of {} over the window is beyond the range of double precision; "
                                            "check the element values (a source or a capacitance, inductance or "
                                            "resistance many decades from any real part)",
                                            what, c.element(id).name)));
}

}  // namespace

// The share of Σ|∫v·i| over the segments below which a net energy is rounding (each segment's
// integral is exact to a few hundred ε of its terms).
constexpr double kEnergyRounding = 1e-10;

double element_energy(const Solution& solution, ElementId id, double* scale) {
  const Circuit& c = solution.circuit();
  auto v = solution.pieces(element_observable(c, id, ObservableKind::element_voltage));
  auto i = solution.pieces(element_observable(c, id, ObservableKind::element_current));
  const Window& win = solution.window();
  double sum = 0.0, magnitude = 0.0;
  for (std::size_t k = 0; k < v.size(); ++k) {
    double a = std::max(win.from, v[k].t0()), b = std::min(win.to, v[k].t1());
    if (a >= b) continue;
    double part = integral_of_product(v[k], i[k], a, b);
    sum += part;
    magnitude += std::fabs(part);
  }
  if (scale) *scale = finite_or_refuse(solution, id, magnitude, "energy");
  // An element that gives back all it took (an inductor over a full cycle) nets zero: what is
  // left of a sum far below the integrals that made it is rounding, and every path (text, JSON,
  // claims, ratings) must show the same 0 J.
  if (std::fabs(sum) <= kEnergyRounding * magnitude) return 0.0;
  return finite_or_refuse(solution, id, sum, "energy");
}

double element_i2t(const Solution& solution, ElementId id) {
  const Circuit& c = solution.circuit();
  auto i = solution.pieces(element_observable(c, id, ObservableKind::element_current));
  const Window& win = solution.window();
  double sum = 0.0;
  for (const auto& p : i) {
    double a = std::max(win.from, p.t0()), b = std::min(win.to, p.t1());
    if (a < b) sum += integral_of_product(p, p, a, b);
  }
  return std::max(0.0, finite_or_refuse(solution, id, sum, "I²t"));
}

double element_mean_power(const Solution& solution, ElementId id, int* segment) {
  const Circuit& c = solution.circuit();
  const Window& win = solution.window();
  auto v = solution.pieces(element_observable(c, id, ObservableKind::element_voltage));
  auto i = solution.pieces(element_observable(c, id, ObservableKind::element_current));
  if (switches_periodically(solution)) {
    // Diodes on an AC supply: the sustained dissipation is the mean over the window's last
    // whole period of the fundamental (the whole window where it is shorter than a period).
    const double from = std::max(win.from, win.to - 1.0 / lowest_frequency(c));
    double energy = 0.0;
    for (std::size_t k = 0; k < v.size(); ++k) {
      const double a = std::max(from, v[k].t0()), b = std::min(win.to, v[k].t1());
      if (a < b) energy += integral_of_product(v[k], i[k], a, b);
    }
    if (segment) *segment = static_cast<int>(v.size());
    return win.to > from ? energy / (win.to - from) : 0.0;
  }
  // Sustained dissipation (spec v2, "Ratings"): the largest over the segments of each one's
  // steady-state mean, whatever the window, so that a resistor that dissipates only while a
  // contact is closed is judged by that dissipation, not by the last segment or the window.
  std::optional<double> best;
  int best_segment = 0;
  for (std::size_t k = 0; k < v.size(); ++k) {
    double p = 0.0;
    auto vs = steady_state_of(v[k]), is = steady_state_of(i[k]);
    if (vs && is) {
      // Mean of a product of sinusoids: DC·DC + ½·Σ Re(V·conj(I)) at equal frequencies.
      p = vs->dc * is->dc;
      for (const auto& pv : vs->phasors)
        for (const auto& pi : is->phasors)
          if (pv.frequency == pi.frequency) p += 0.5 * (pv.value * std::conj(pi.value)).real();
    } else {
      // No steady state (a ramp, a growing response): the mean over the segment's part of
      // the window, where there is one.
      double a = std::max(win.from, v[k].t0()), b = std::min(win.to, v[k].t1());
      if (!(a < b)) continue;
      p = integral_of_product(v[k], i[k], a, b) / (b - a);
    }
    if (!best || p > *best) {
      best = p;
      best_segment = static_cast<int>(k + 1);
    }
  }
  if (segment) *segment = best ? best_segment : 0;
  return finite_or_refuse(solution, id, best.value_or(0.0), "mean power");
}

}  // namespace netfold
