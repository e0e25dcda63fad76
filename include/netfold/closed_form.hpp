#pragma once
/// \file closed_form.hpp
/// Stage 4 of the pipeline: exact expressions of the response within each segment.
///
/// Within a segment [t0, t1] the state x (capacitor voltage or inductor current) obeys
///
///     dx/dt = a·x + f(t),   f(t) = f_dc + Σ_k Re(F_k·e^{jω_k t})
///
/// with a = −1/τ (1/s) and f from the sources. Its solution, and every voltage and current
/// (each an affine function of x and the sources), has the form of a Wave:
///
///     y(t) = offset + drift·φ(a, t−t0) + transient·e^{a(t−t0)} + Σ_k Re(P_k·e^{jω_k t})
///
/// where φ(a, s) = (e^{a·s} − 1)/a, and φ(0, s) = s (the ramp of an infinite time constant).
/// φ is evaluated with expm1, so a time constant far longer than the window loses nothing.
/// Powers are products of two Waves. Peaks, integrals (energy, I²t) and settling times are
/// computed from these expressions, never from time stepping.

#include <complex>
#include <memory>
#include <optional>
#include <vector>

namespace netfold {

namespace response {
struct Response;
}  // namespace response

/// A sinusoid Re(value·e^{j·2π·frequency·t}), t absolute: magnitude = peak, arg = phase
/// against a cosine.
struct Phasor {
  double frequency = 0.0;           ///< Hz, > 0
  std::complex<double> value;       ///< peak magnitude and phase (rad)
};

/// A sum of a constant and sinusoids: the part of a signal the sources impose directly.
struct Drive {
  double dc = 0.0;
  std::vector<Phasor> phasors;  ///< sorted by frequency, one per frequency

  /// Value at time t.
  double value(double t) const;
  /// Adds coef·Re(value·e^{jωt}) at `frequency`, merging equal frequencies.
  void add_phasor(double frequency, std::complex<double> value);
  /// this + coef·other.
  void add(const Drive& other, double coef);
};

/// A closed-form signal over one segment (see the file comment).
struct Wave {
  double t0 = 0.0, t1 = 0.0;  ///< the segment, s
  double a = 0.0;             ///< 1/s: −1/τ; 0 for an infinite time constant; > 0 unstable
  double offset = 0.0;
  double drift = 0.0;         ///< coefficient of φ(a, t − t0)
  double transient = 0.0;     ///< coefficient of e^{a(t − t0)}
  std::vector<Phasor> phasors;

  double value(double t) const;
  double derivative(double t) const;
  /// The steady state this segment tends to (offset − drift/a plus the phasors); nothing when
  /// a ≥ 0 and there is a drift (a ramp or an unstable response has no steady state).
  std::optional<Drive> steady_state() const;
};

/// The response of the state over [t0, t1]: dx/dt = a·x + forcing(t), x(t0) = x0.
Wave state_wave(double t0, double t1, double a, double x0, const Drive& forcing);

/// y = gain·x + direct(t), for the state wave x of the same segment.
Wave affine_wave(const Wave& x, double gain, const Drive& direct);

/// A constant signal over [t0, t1] (a quantity held at a value, or at zero).
Wave constant_wave(double t0, double t1, double value);

/// One segment of an observable: a Wave, or the product of two (powers). In a segment with
/// several storage elements the factors are sums of modal terms instead (`terms_f`, `terms_g`;
/// response/terms.hpp), and f and g carry only the segment's span.
struct Piece {
  Piece() = default;
  Piece(Wave wave, std::optional<Wave> factor = std::nullopt) : f(std::move(wave)), g(std::move(factor)) {}
  Wave f;
  std::optional<Wave> g;  ///< when set, the value is f·g
  std::shared_ptr<const response::Response> terms_f;  ///< several states: the first factor
  std::shared_ptr<const response::Response> terms_g;  ///< several states: the current of a power
  bool has_terms() const { return terms_f != nullptr; }
  bool is_product() const { return g.has_value() || terms_g != nullptr; }
  double value(double t) const;
  double derivative(double t) const;
  double t0() const { return f.t0; }
  double t1() const { return f.t1; }
};

/// The steady state that a piece's first factor tends to (Wave::steady_state, or the terms').
std::optional<Drive> steady_state_of(const Piece& piece);

/// ∫ a(t)·b(t) dt over [from, to] of the first factors of two pieces of the same segment.
double integral_of_product(const Piece& a, const Piece& b, double from, double to);

/// Largest and smallest value of a piece over [from, to] ⊆ [t0, t1], with their times.
struct Extremes {
  double max = 0.0, t_max = 0.0;
  double min = 0.0, t_min = 0.0;
};

/// Finds the extremes of a piece: samples a grid dense enough to bracket every local
/// extreme (≥ 24 points per period of the fastest sinusoid, a cluster over the first 30 time
/// constants), then refines each bracket by Brent's method on the derivative to 1e-12 of the
/// interval.
Extremes find_extremes(const Piece& piece, double from, double to);

/// ∫ f(t)·g(t) dt over [from, to] ⊆ [t0, t1] of two Waves of the same segment, exactly
/// (products of exponentials, ramps and sinusoids integrated term by term).
double integral_of_product(const Wave& f, const Wave& g, double from, double to);

/// ∫ f(t) dt over [from, to].
double integral(const Wave& f, double from, double to);

}  // namespace netfold
