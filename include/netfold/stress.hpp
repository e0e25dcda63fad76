#pragma once
/// \file stress.hpp
/// Exact stress figures of a solution beyond peaks and integrals (spec v2, "Ratings" and the
/// claims `dvdt`, `didt`, `rms`, `time-below`): the largest rate of change, the largest rms
/// over one fundamental period, the largest value of one sign, and the time after which a
/// quantity stays below a level. Each is found from the closed form of every segment (the
/// extreme search of closed_form.hpp on exact expressions), never from samples of a waveform.
///
/// Example:
/// \code
///   // 10 V through 1 kohm onto 1 uF, closed at 0 s: dv/dt = V/(R·C) at t = 0+
///   netfold::RateFigure r = netfold::largest_rate(s, netfold::element_observable(c, c1, netfold::ObservableKind::element_voltage));
///   // r.value == 10000 (V/s), r.time == 0, r.before_event == false
/// \endcode

#include <optional>

#include "netfold/closed_form.hpp"
#include "netfold/netlist.hpp"
#include "netfold/solve.hpp"

namespace netfold {

/// dy/dt of a Wave, as a Wave of the same segment: with s = t − t0,
///   y  = offset + drift·φ(a, s) + transient·e^{a·s} + Σ Re(P·e^{jωt})
///   y' = (drift + a·transient)·e^{a·s} + Σ Re(jω·P·e^{jωt})
/// (y' in the unit of y per second).
Wave derivative_of(const Wave& wave);

/// dy/dt of a piece that is one Wave (a voltage or a current). A product piece (a power) has
/// no derivative of this form: std::invalid_argument.
Piece derivative_of(const Piece& piece);

/// The largest |dy/dt| of an observable over the window and when it occurs. At an event the
/// derivative may jump: the value just after the event (the right limit) is the derivative at
/// the event; the value just before it (the left limit) is the supremum of the segment that
/// ends there, reported at the event's time with `before_event` set.
struct RateFigure {
  double value = 0.0;         ///< largest |dy/dt|: V/s or A/s
  double time = 0.0;          ///< s
  bool before_event = false;  ///< the figure is the left limit at an event at `time`
};

/// Largest |dy/dt| of a voltage or current observable over the window (throws
/// std::invalid_argument for a power).
RateFigure largest_rate(const Solution& solution, const Observable& observable);

/// The lowest frequency of the circuit's sinusoids (Hz), the fundamental; 0 when there is none.
double fundamental_frequency(const Circuit& circuit);

/// The largest rms of an observable over one fundamental period T = 1/f₁ within the window:
///   max over τ in [from, to − T] of sqrt((1/T)·∫_τ^{τ+T} y² dt),
/// each integral exact. Without a sinusoid, or when the window is shorter than one period, the
/// rms over the whole window.
struct RmsFigure {
  double value = 0.0;        ///< A (or V) rms
  double from = 0.0;         ///< s: start of the span of the figure
  double span = 0.0;         ///< s: its length (T, or the window's length)
  bool over_window = false;  ///< the span is the window (no sinusoid, or a window shorter than T)
};

/// See RmsFigure. Throws NumericError when the window holds too many periods of the fastest
/// sinusoid to bracket every maximum.
RmsFigure largest_rms(const Solution& solution, const Observable& observable);

/// The largest value of sign·y over the window (sign = +1: the largest value; −1: the
/// largest negative excursion, as a positive number), and when; 0 at the window's start when
/// sign·y is never positive (no stress of that polarity).
Peak largest_signed(const Solution& solution, const Observable& observable, double sign);

/// The time from `from` after which |y| stays below `level` to the end of the window.
struct TimeBelow {
  bool stays_below = false;  ///< false when |y| is at or above the level at the window's end
  double time = 0.0;         ///< s after `from` (0 when |y| < level throughout)
  double from = 0.0;         ///< s: the start of the measurement
};

/// The last event's time before the window's end, or the window's start when there is none.
double last_event_time(const Solution& solution);

/// See TimeBelow: the last instant in [from, window end] at which |y| reaches `level` (the
/// left limit at an event counts as reached there), found by bisection on the exact extremes
/// of each segment's expression. `from` defaults to last_event_time; it must lie in
/// [0, window end] (std::invalid_argument otherwise).
TimeBelow time_below(const Solution& solution, const Observable& observable, double level,
                     std::optional<double> from = std::nullopt);

}  // namespace netfold
