#pragma once
// A response over one segment as a finite sum of terms: the n-state successor of `Wave`
// (include/netfold/closed_form.hpp). Private to the library.
//
// Over a segment [t0, t1], with s = t − t0 (s) and t absolute (s):
//
//     y(t) = Σ_i Re(c_i · s^{k_i} · e^{z_i·s} · [φ(d_i, s)])  +  C  +  Σ_m Re(P_m · e^{j·2π·f_m·t})
//
//   c_i   complex coefficient (unit of y)          z_i  complex rate, 1/s (Re: decay/growth,
//   k_i   power of s, ≥ 0 (repeated eigenvalues,        Im: angular frequency)
//         secular growth s·e^{jωs}, ramps s·e^0)   d_i  optional second rate, 1/s
//   φ(d, s) = (e^{d·s} − 1)/d, and s at d = 0     C    constant;  P_m, f_m: phasors (Hz) in
//                                                      absolute time, as today's `Drive`
//
// The optional φ factor carries what a difference of two exponentials cannot carry in double
// precision: today's drift φ(a, s) with |a·s| tiny (an infinite or very long time constant),
// and a forcing whose frequency nearly coincides with a natural mode (the resonant growth
// s·e^{jωs} is its limit d → 0). φ is evaluated with a complex expm1, so the term is exact to
// rounding for every d, including 0.
//
// Terms are normalised to Im z ≥ 0 (Re(w) = Re(conj w)), and equal (z, k, d) merge, so the two
// halves of a complex-conjugate mode appear as one term.
//
// Integrals (energy, I²t) are exact: every term is expanded into monomials c·s^k·e^{z·s} and
// ∫ s^k·e^{z·s} ds is evaluated in closed form (series for |z·h| ≤ 1, the upward recurrence where
// it is stable, k ≤ |z·h|, and the downward recurrence from a far start otherwise). Extremes are
// bracketed on a grid that resolves the fastest oscillation and clusters where decays are fast,
// then refined by a safeguarded Newton iteration on the derivative.

#include <complex>
#include <optional>
#include <vector>

#include "netfold/closed_form.hpp"

namespace netfold::response {

using Complex = std::complex<double>;

/// φ(d, s) = (e^{d·s} − 1)/d, and s at d = 0; accurate to rounding for tiny |d·s|.
Complex phi(Complex d, double s);

/// One term c·s^k·e^{z·s}·[φ(d, s)] (complex; the response takes its real part).
struct Term {
  Complex c;             ///< coefficient, unit of the response
  Complex z;             ///< rate, 1/s
  int k = 0;             ///< power of s
  bool has_phi = false;  ///< whether the factor φ(d, s) is present
  Complex d;             ///< second rate, 1/s (only with has_phi)

  /// The complex value at s.
  Complex value(double s) const;
  /// The complex first derivative in s.
  Complex derivative(double s) const;
  /// The complex second derivative in s.
  Complex second_derivative(double s) const;
};

/// A response over one segment (see the file comment).
struct Response {
  double t0 = 0.0, t1 = 0.0;  ///< the segment, s
  Drive periodic;             ///< the constant C and the phasors P_m (absolute time)
  std::vector<Term> terms;    ///< normalised (Im z ≥ 0) and merged
  /// Set when some terms are a series valid over [t0, t1] only (a forcing merged with a cluster
  /// of natural modes): the response then claims no steady state.
  bool local = false;

  /// Value at time t (absolute).
  double value(double t) const;
  /// dy/dt at t.
  double derivative(double t) const;
  /// d²y/dt² at t.
  double second_derivative(double t) const;
  /// What the response tends to as t → ∞ if the same expression held: the constant, the
  /// phasors and every undamped term with k = 0; nothing when a term grows or drifts (Re z > 0,
  /// or Re z = 0 with k > 0), or when the response is `local`.
  std::optional<Drive> steady_state() const;
  /// Adds a term (normalised and merged with an equal one).
  void add_term(Term term);
  /// this += coef·other (same segment).
  void add(const Response& other, double coef);
  /// this += coef·drive(t).
  void add(const Drive& drive, double coef);
  /// Sorts the terms and merges equal ones, dropping zero coefficients.
  void normalise();
  /// The largest |Im| of any rate or phasor, rad/s: the fastest oscillation.
  double fastest_angular_frequency() const;
};

/// y at from + i·(to − from)/intervals, i = 0..intervals: a fast evaluation on a uniform grid,
/// each exponential taken from a table of its one-step factor's powers between exact values, so
/// that the error stays within a few dozen roundings of the direct `value`.
std::vector<double> sample(const Response& y, double from, double to, std::size_t intervals);

/// Today's one-state Wave as a Response, exactly: offset → C, drift → drift·φ(a, s),
/// transient → transient·e^{a·s}, phasors unchanged.
Response response_of_wave(const Wave& wave);

/// A constant over [t0, t1].
Response constant_response(double t0, double t1, double value);

/// y = Σ_j coefs[j]·x_j + direct(t), the x_j of one segment.
Response combine(const std::vector<const Response*>& xs, const std::vector<double>& coefs, const Drive& direct);

/// ∫_{s0}^{s1} s^k·e^{z·s} ds, 0 ≤ s0 ≤ s1, in closed form.
Complex moment(int k, Complex z, double s0, double s1);

/// The same for every k = 0..k_max at once (one recurrence serves them all).
std::vector<Complex> moments(int k_max, Complex z, double s0, double s1);

/// ∫ y(t) dt over [from, to] ⊆ [t0, t1], exactly.
double integral(const Response& y, double from, double to);

/// ∫ f(t)·g(t) dt over [from, to] ⊆ [t0, t1], exactly; f and g of the same segment.
double integral_of_product(const Response& f, const Response& g, double from, double to);

/// Largest and smallest value of y over [from, to] ⊆ [t0, t1], with their times: every local
/// extreme is bracketed on a grid (≥ 24 points per period of the fastest oscillation, 8 points
/// per time constant over the first 30 of every decay faster than the interval), then refined
/// on the derivative to double precision. The end points count.
Extremes find_extremes(const Response& y, double from, double to);

/// The times find_extremes samples over [from, to] (from and to included): between two of
/// them y has at most one extreme.
std::vector<double> bracketing_grid(const Response& y, double from, double to);

/// The first time in (from, to] at which y falls through `level`: y above it before, at or
/// below it after, found to the last bit of t (terms_roots.cpp). A crossing counts when y
/// leaves the band level ± tolerance on either side (rounding about the level at the start of
/// a segment, where an event has just put y there, is no crossing). Nothing when y stays above.
std::optional<double> first_fall(const Response& y, double level, double from, double to, double tolerance);

/// The same for the product f·g (an instantaneous power).
Extremes find_extremes_of_product(const Response& f, const Response& g, double from, double to);

/// y − y_ss: the decaying terms of y alone (the constant, the phasors and the undamped terms
/// with k = 0 are its steady state); nothing when y has no steady state (Response::steady_state).
std::optional<Response> transient_part(const Response& y);

/// The settling time of a decaying response e (transient_part): the time after e.t0 from which
/// |e| stays below `level` > 0 for good. It is 0 when |e| < level from the start. The search
/// runs to where a bound on |e| (Σ|c|·s^k·e^{Re z·s}) falls below the level for good, brackets
/// the last excursion to the level on find_extremes' grid, and refines the crossing by bisection
/// to rounding. Nothing when a term does not decay.
std::optional<double> settling_time(const Response& e, double level);

}  // namespace netfold::response
