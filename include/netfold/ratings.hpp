#pragma once
/// \file ratings.hpp
/// Stage "ratings": the stress each rating attribute limits, measured on a solution, and the
/// comparison with the rated value. Which definition each rating uses is the format's (spec
/// v2, "Ratings"; docs/ratings.md):
///
/// | attribute | kind | stress |
/// |---|---|---|
/// | capacitor `rated V` | peak_voltage | peak \|v\| over the window |
/// | inductor, switch, voltage-source `rated A` | peak_current | peak \|i\| over the window |
/// | resistor `rated P W` | mean_power | largest steady-state mean power over the segments, whatever the window |
/// | resistor `pulse-rated E J` | energy | ∫v·i dt over the window |
/// | `rated-i2t X A2s` (any element, v2) | i2t | ∫i² dt over the window |
/// | capacitor `rated-dvdt` (v2) | dvdt | largest \|dv/dt\| over the window (stress.hpp) |
/// | inductor, switch, diode `rated-didt` (v2) | didt | largest \|di/dt\| over the window |
/// | capacitor `rated-rms` (v2) | rms_current | largest rms current over one fundamental period |
/// | switch `rated V` (v2) | peak_voltage | peak \|v\| across the contact (open or closed) |
/// | diode `rated X V` (v2) | peak_reverse_voltage | largest −v over the window |
/// | diode `rated X A` (v2) | peak_forward_current | largest +i over the window |
///
/// Rates are reported in V/µs and A/µs (the datasheets' unit) and held in SI (V/s, A/s).
///
/// With sweeps declared, the worst case over them is what is rated: worst.hpp searches it
/// (find_worst_case, worst_case_ratings) with rating_stress as its measure.
///
/// Example:
/// \code
///   netfold::Solution s = netfold::solve(c);
///   for (const auto& r : netfold::check_ratings(s))
///     std::cout << c.element(r.element).name << ' ' << r.quantity << ' ' << r.actual << ' ' << r.where << '\n';
///   // R_heater mean power 1966.36 segment 1, 0 s .. 100 ms   (netlists/heater_contactor.nf)
/// \endcode

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "netfold/netlist.hpp"
#include "netfold/solve.hpp"

namespace netfold {

/// The stress a rating limits, with where it occurs.
struct RatingStress {
  double value = 0.0;          ///< SI: V, A, W, J, A²s, V/s or A/s
  std::optional<double> time;  ///< s: when a peak occurs; the start of an rms or integral span
  std::optional<double> until; ///< s: the end of an rms or integral span
  int segment = 0;             ///< the segment of a mean-power figure (from 1; 0 when none)
  bool before_event = false;   ///< a rate: the left limit at an event at `time`
  bool over_window = false;    ///< an rms taken over the whole window (no sinusoid, or shorter than a period)
};

/// A rating compared with the solved (or worst-case) stress.
struct RatingCheck {
  ElementId element = kNone;
  RatingKind kind = RatingKind::peak_current;
  std::string quantity;     ///< "peak voltage", "peak current", "mean power", "energy", "I²t"
  double rated = 0.0;       ///< SI
  double actual = 0.0;      ///< SI
  double used_percent = 0.0;
  bool exceeded = false;
  bool worst_case = false;  ///< the actual value is the worst over the declared sweeps
  std::string unit;         ///< symbol for reports
  /// Where the figure comes from: "at 8.18 ms" (a peak), "segment 1, 0 s .. 35 ms" (a mean
  /// power: that segment's steady state), "over the window" (energy, I²t).
  std::string where;
  /// With sweeps: the argument of the worst case, "worst case at supply.phase = -90°", or "the
  /// same at every supply.phase" where the sweep does not change the figure (empty at the
  /// nominal values).
  std::string worst_argument;
  std::string worst_target;        ///< with sweeps: the sweep's target, "supply.phase"
  std::optional<double> worst_at;  ///< with sweeps: the argument in SI (rad, V, A or s)
  std::string worst_at_unit;       ///< "rad", "V", "A" or "s"
  SourceLoc loc;            ///< position of the rating attribute
};

/// The stress that a rating of `kind` on element `element` limits, measured on `solution`.
RatingStress rating_stress(const Solution& solution, ElementId element, RatingKind kind);

/// Compares every rating of the circuit with the solution's stress (the nominal values; see
/// worst_case_ratings in worst.hpp for the worst over the declared sweeps).
std::vector<RatingCheck> check_ratings(const Solution& solution);

/// Sets `check.actual` and fills used_percent and exceeded from its magnitude.
void judge_rating(RatingCheck& check, double actual);

/// "where" text of a stress on `solution` (see RatingCheck::where).
std::string stress_location(const Solution& solution, RatingKind kind, const RatingStress& stress);

/// "peak voltage", "peak current", "mean power", "energy", "I²t".
std::string_view rating_quantity(RatingKind kind);
/// The unit of reports: "V", "A", "W", "J", "A²s", "V/µs", "A/µs".
std::string_view rating_unit(RatingKind kind);

/// A rating's value (SI) in the unit of reports with `digits` significant digits: rates in
/// V/µs and A/µs without a prefix ("2500 V/µs"), far outside 1e-3 .. 1e6 in V/s with one;
/// every other kind as format_si does.
std::string rating_value_text(RatingKind kind, double value, int digits = 4);

/// One line of a rating in the text reports of `solve` and `worst`, without indentation:
/// "K1             peak current      325.1 A of      100 A  325.1 %  EXCEEDED  (at 5.1 ms;
/// worst case at supply.phase = -87.3°)".
std::string rating_line(const Circuit& circuit, const RatingCheck& check);

/// A share in percent for reports: one decimal below 10 000 % ("8.2 %", "325.0 %"), three
/// significant digits above ("3.25e+07 %"), so that an absurd ratio never prints hundreds of
/// digits.
std::string percent_text(double percent);

}  // namespace netfold
