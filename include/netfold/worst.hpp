#pragma once
/// \file worst.hpp
/// The worst case over a swept argument: a source's phase (the closing angle), the storage
/// element's residual state, or a switch's closing time. For a fixed argument the response
/// is an exact expression, so the search needs no time stepping: a grid of the argument fine
/// enough to bracket every local maximum of the peak, then golden-section refinement of each
/// bracket to 1e-9 of the range; within each response, the peak in time is found by
/// bracketing the derivative (closed_form.hpp, find_extremes).

#include <optional>
#include <string>
#include <vector>

#include "netfold/report.hpp"
#include "netfold/solve.hpp"

namespace netfold {

/// The worst (and best) value of one quantity over one sweep.
struct SweepExtreme {
  std::string name;        ///< observable text, or "K1 peak current" for a rating
  std::string unit;        ///< "V", "A", "W", "J", "A²s"
  double worst = 0.0;      ///< largest value (peak |y| for observables)
  double worst_at = 0.0;   ///< the argument where it occurs (rad, V, A or s)
  double t_peak = 0.0;     ///< time of the peak at worst_at (observables)
  double best = 0.0;       ///< smallest value over the sweep
  double best_at = 0.0;
  std::optional<double> steady_peak;  ///< peak of the steady state (observables), when it exists
};

/// One sweep's results.
struct SweepResult {
  Sweep sweep;
  std::vector<double> grid;                        ///< the search grid of the argument
  std::vector<SweepExtreme> observables;           ///< one per watched observable
  std::vector<std::vector<double>> grid_peaks;     ///< [observable][grid point]: peak |y|
  std::vector<SweepExtreme> ratings;               ///< one per rating of the circuit
  std::vector<std::size_t> rating_index;           ///< index into check_ratings order
};

/// Everything `worst` reports.
struct WorstReport {
  std::vector<SweepResult> sweeps;
  /// Every rating checked against the worst stress over all sweeps (the nominal value when
  /// there is no sweep).
  std::vector<RatingCheck> ratings;
};

/// Default number of grid intervals of a sweep without `step`.
inline constexpr int kDefaultSweepIntervals = 360;

/// Searches every sweep. `base` is the circuit's nominal solution (it fixes the window).
/// Throws InputError for a sweep range the circuit cannot take (a `closes` time that would
/// pass the switch's neighbouring events).
WorstReport find_worst_case(const Circuit& circuit, const std::vector<Sweep>& sweeps);

/// The grid of a sweep: from, from + step, ..., to (to always included).
std::vector<double> sweep_grid(const Sweep& sweep, const Solution& nominal);

/// Text, JSON and CSV of `worst`.
void write_worst_text(std::ostream& out, const WorstReport& report, const Solution& nominal);
std::string worst_json(const WorstReport& report, const Circuit& circuit);
std::string worst_csv(const WorstReport& report);

}  // namespace netfold
