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
///
/// (v2) A sweep line with several targets, or any sweep in a circuit with tolerances, is a
/// search over a box (the targets' ranges times every toleranced value's bounds): a grid, then
/// Nelder–Mead refinement inside the box from the best grid points that are local maxima
/// (docs/worst-case.md says what this guarantees). The peak's distribution over the range
/// (and box), each uniform, is given for every sweep: from the grid by default, from seeded
/// Monte Carlo samples with WorstOptions::samples.

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "netfold/distribution.hpp"
#include "netfold/ratings.hpp"
#include "netfold/solve.hpp"

namespace netfold {

/// The peak's distribution over a sweep's range (and tolerance box), each uniform.
struct PeakDistribution {
  double p50 = 0.0;  ///< median
  double p90 = 0.0;  ///< 90th percentile
  double p99 = 0.0;  ///< 99th percentile
  /// Monte Carlo only: a 95 % distribution-free interval for p99 (order statistics, Conover
  /// §3.2); a bound is missing when the sample count is too small for it.
  std::optional<double> p99_lo, p99_hi;
};

/// One toleranced value at a point of the search: an element's value or a source's factor.
struct CornerValue {
  ElementId element = kNone;
  std::string name;        ///< the element's name
  double value = 0.0;      ///< ohm, F or H; a source's factor (dimensionless)
  bool is_factor = false;  ///< true for a source
};

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
  /// (v2) Every target's argument at the worst (worst_at is the first) and at the best.
  std::vector<double> worst_point, best_point;
  /// (v2) With tolerances: each toleranced value at the worst, and at the best.
  std::vector<CornerValue> corner, best_corner;
  /// (v2) Observables: the peak's distribution over the sweep.
  PeakDistribution distribution;
};

/// (v2) The share of a sweep in which an observable's peak exceeds a level (a `share` claim).
struct LevelShare {
  std::string observable;  ///< observable text
  double level = 0.0;      ///< SI
  double share = 0.0;      ///< fraction of the range (and box), 0..1
};

/// One sweep's results.
struct SweepResult {
  Sweep sweep;                                     ///< the first target (the only one in the first edition)
  std::vector<Sweep> targets;                      ///< (v2) every target of the sweep line; empty for a search of the tolerance box alone
  std::vector<CornerValue> tolerances;             ///< (v2) the toleranced values searched (at their nominal values)
  std::vector<std::pair<double, double>> tolerance_bounds;  ///< (v2) each toleranced value's range
  /// The grid of the first target (the profile drawn and written to CSV: the argument).
  std::vector<double> grid;
  std::size_t grid_points = 0;                     ///< (v2) points of the whole search grid
  std::vector<SweepExtreme> observables;           ///< one per watched observable
  /// [observable][grid point]: peak |y| along `grid`; for a joint or toleranced search, the
  /// profile through the worst point of each observable (the other arguments at their worst).
  std::vector<std::vector<double>> grid_peaks;
  /// (v2) A line of two targets: the second target's grid, and per observable the peak at every
  /// point of the two targets' grid, [observable][i + j·grid.size()] (i along `grid`, j along
  /// `map_grid`); with tolerances, the largest over the tolerance box's grid at that point.
  /// Empty otherwise.
  std::vector<double> map_grid;
  std::vector<std::vector<double>> map_peaks;      ///< see map_grid
  std::vector<SweepExtreme> ratings;               ///< one per rating of the circuit
  std::vector<std::size_t> rating_index;           ///< index into check_ratings order
  std::vector<double> exceeded_share;              ///< (v2) per rating: the share in which it is exceeded
  std::vector<LevelShare> shares;                  ///< (v2) the shares asked for by WorstOptions::share_levels
  std::size_t samples = 0;                         ///< (v2) Monte Carlo sample count (0: from the grid)
  std::uint64_t seed = 0;                          ///< (v2) Monte Carlo seed
  /// True for a joint or toleranced search (the box search), false for the one-target search.
  bool box = false;
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
/// (v2) Default grid intervals of each target of a joint sweep without `step`.
inline constexpr int kDefaultJointIntervals = 36;
/// (v2) Grid intervals of each toleranced value (low, nominal-side points, high).
inline constexpr int kToleranceIntervals = 4;

/// What a search covers.
enum class WorstScope : std::uint8_t {
  everything,    ///< every watched observable and every rating
  ratings_only,  ///< the ratings alone (what `solve` and `check` judge)
};

/// (v2) A level whose exceeded share is wanted for every sweep (a `share peak OBS > LEVEL` claim).
struct ShareLevel {
  std::string observable;  ///< observable text, as in Observable::text
  double level = 0.0;      ///< SI
};

/// (v2) What a search covers and how its distribution is estimated.
struct WorstOptions {
  WorstScope scope = WorstScope::everything;
  /// 0: the distribution from the search grid; N > 0: from N Monte Carlo samples.
  std::size_t samples = 0;
  std::uint64_t seed = kDefaultSeed;
  std::vector<ShareLevel> share_levels;
};

/// The sweep lines of `sweeps`: consecutive targets with the same Sweep::line form one line.
std::vector<std::vector<Sweep>> sweep_lines(const std::vector<Sweep>& sweeps);

/// (v2) True when some element of the circuit declares a tolerance with a non-empty range.
bool has_tolerances(const Circuit& circuit);

/// Searches every sweep line (with tolerances and no sweep line, the tolerance box alone).
WorstReport find_worst_case(const Circuit& circuit, const std::vector<Sweep>& sweeps, const WorstOptions& options);

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
/// (v2) The SVG of `worst --svg`: per sweep, the peak of every watched quantity against the
/// first target's argument (a joint or toleranced sweep: with the other values at the worst
/// point of that quantity), its steady-state peak and rating as labelled dashed lines, worst
/// and best marked and labelled; for a line of two targets, a map of each quantity's peak over
/// both arguments with a colour scale, the worst and best marked.
std::string worst_svg(const WorstReport& report, const Circuit& circuit);

}  // namespace netfold
