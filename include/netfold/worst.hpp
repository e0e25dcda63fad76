#pragma once
/// \file worst.hpp
/// The worst case over a swept argument: a source's phase (the closing angle), the storage
/// element's residual state, or a switch's closing time. Arguments are in the user's terms
/// (spec v2): a phase is the value of the source's `phase` attribute as written, and each
/// point of a sweep is solved under the Scenario that sets it (scenario.hpp). For a fixed argument the response
/// is an exact expression, so the search needs no time stepping: a grid of the argument fine
/// enough to bracket every local maximum of the peak, then golden-section refinement of each
/// bracket to 1e-9 of the range; within each response, the peak in time is found by
/// bracketing the derivative (closed_form.hpp, find_extremes).

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "netfold/ratings.hpp"
#include "netfold/solve.hpp"

namespace netfold {

/// The worst (and best) value of one quantity over one sweep.
struct SweepExtreme {
  std::string name;        ///< observable text, or "K1 peak current" for a rating
  std::string unit;        ///< "V", "A", "W", "J", "A²s"; a rating's report unit ("V/µs": its values stay SI, printed by rating_value_text)
  double worst = 0.0;      ///< largest value (peak |y| for observables)
  double worst_at = 0.0;   ///< the argument where it occurs (rad, V, A or s)
  double t_peak = 0.0;     ///< time of the peak at worst_at (observables)
  std::string where;       ///< ratings: where the stress at worst_at occurs (RatingCheck::where)
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

/// What a search covers.
enum class WorstScope : std::uint8_t {
  everything,    ///< every watched observable and every rating
  ratings_only,  ///< the ratings alone (what `solve` and `check` judge)
};

/// Searches every sweep. Throws InputError for a sweep range the circuit cannot take (a
/// `closes` time that would pass the switch's neighbouring events or the end of a declared
/// window), and for an argument at which the circuit cannot be solved: both at the sweep's line.
WorstReport find_worst_case(const Circuit& circuit, const std::vector<Sweep>& sweeps,
                            WorstScope scope = WorstScope::everything);

/// The circuit's ratings judged at the worst case over `sweeps` (spec v2: with sweeps
/// declared every command rates the worst case), or at the nominal solution when there is no
/// sweep or no rating.
std::vector<RatingCheck> worst_case_ratings(const Circuit& circuit, const std::vector<Sweep>& sweeps);

/// A sweep argument as text with its unit: "-90°" (a phase, in degrees), "2 A", "5 ms".
std::string sweep_argument_text(const Circuit& circuit, const Sweep& sweep, double x, int digits = 5);
/// The unit of a sweep's arguments in JSON: "rad", "V", "A" or "s".
const char* sweep_argument_unit(const Circuit& circuit, const Sweep& sweep);

/// The grid of a sweep: from, from + step, ..., to (to always included).
std::vector<double> sweep_grid(const Sweep& sweep, const Solution& nominal);

/// Text, JSON and CSV of `worst`.
void write_worst_text(std::ostream& out, const WorstReport& report, const Solution& nominal);
std::string worst_json(const WorstReport& report, const Circuit& circuit);
std::string worst_csv(const WorstReport& report);

}  // namespace netfold
