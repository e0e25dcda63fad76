#pragma once
/// \file verify.hpp
/// Stage 5 of the pipeline: the closed form checked against an independent numerical
/// integration of the same network (integrate.hpp) on the sample grid.
///
/// For each observable y (Solution::observables()), over the compared instants t_k of the
/// window (NumericalRun::times: the sample grid, or a documented subset of a very long one):
///
///     e_y = max_k |y_closed(t_k) − y_numeric(t_k)| / N_y,
///     N_y = max(max_k |y_numeric(t_k)|, 1e-6·S_D, 2.2e-308)
///
/// (v2) With diodes or contacts that act at a zero, the event instants are compared too: every
/// instant of the integrator's events (located by its own root finding) must lie within
/// rtol × (the window's span from t = 0) of one of the closed form's, and the other way round.
///
/// with S_D the largest bound B_y that the circuit puts on the observables of the same dimension
/// D (V, A or W) — from the sources' magnitudes, the state's and the network's gains, on the
/// numerical path (NumericalRun::observable_bound); where those are all 0, the bound on any
/// element's voltage or current. Nothing of the closed form enters N_y: a closed form cannot
/// enlarge its own yardstick, and an observable that is exactly zero (a capacitor current at
/// rest) is judged at the resolution of what the circuit can make of it, not relatively to its
/// own rounding noise. The check passes when max_y e_y ≤ rtol (dimensionless, default 1e-6).
///
/// Example (an RC charging from 10 V through 1 kΩ, 1 µF, from 0 V; its default window):
/// \code
///   netfold::Solution s = netfold::solve(circuit);
///   netfold::VerifyReport r = netfold::verify_closed_form(s);
///   // r.passed == true
///   // r.message == "max rel error 1.1e-12 <= rtol 1e-06 at t = 54 µs in C1.v"
///   // r.stats.steps == 4053 (one step end per sample of the 4001, plus the start-up)
/// \endcode

#include <limits>
#include <string>
#include <vector>

#include "netfold/integrate.hpp"
#include "netfold/solve.hpp"

namespace netfold {

/// Options of verify_closed_form.
struct VerifyOptions {
  /// Pass threshold on max |closed − numeric| / N_y (dimensionless, see the file comment), > 0.
  double rtol = 1e-6;
  /// CVODE's own relative tolerance; ≤ 0 means "from rtol" (integrator_rtol_for).
  double integrator_rtol = 0.0;
  /// Step budget of the integration (see IntegrateOptions::max_steps).
  long max_steps = 5'000'000;
};

/// Share of S_D (the circuit's bound on the observables of a dimension) below which an
/// observable's own magnitude no longer normalizes its error (see the file comment).
inline constexpr double kZeroFloorFraction = 1e-6;
/// Smallest N_y: the smallest normal double, below which no relative error is resolved.
inline constexpr double kSmallestNormalization = std::numeric_limits<double>::min();

/// The comparison for one observable.
struct ObservableError {
  std::string name;            ///< as in the CSV header: `coil_l.i`, `@a`
  Dimension dimension = Dimension::voltage;
  double max_abs_error = 0.0;  ///< max |closed − numeric| (V, A or W)
  double t_at = 0.0;           ///< where it occurs, s
  double max_closed = 0.0;     ///< max |closed| over the samples (reported, not compared against)
  double max_numeric = 0.0;    ///< max |numeric| over the samples
  double normalization = 0.0;  ///< N_y (see the file comment)
  double max_rel_error = 0.0;  ///< max_abs_error / N_y, finite
};

/// The result of the cross-check.
struct VerifyReport {
  std::string method = "cvode-bdf";  ///< the numerical method, for the JSON
  double rtol = 1e-6;                ///< the pass threshold used
  bool passed = false;               ///< integration finished and max_rel_error ≤ rtol
  double max_rel_error = 0.0;        ///< largest ObservableError::max_rel_error, finite
  double t_at = 0.0;                 ///< where it occurs, s
  std::string worst_observable;      ///< which observable ("" when none)
  std::vector<ObservableError> observables;  ///< one per Solution::observables(), in order
  std::size_t samples = 0;           ///< samples compared
  double integrator_rtol = 0.0;      ///< CVODE's relative tolerance
  std::vector<double> integrator_atol;  ///< per state: CVODE's absolute tolerance (V or A)
  IntegrationStats stats;            ///< CVODE's work
  /// One line with the numbers compared: "max rel error 3.1e-05 > rtol 1e-06 at t = 12 ms in
  /// coil_l.i", or why the integration stopped.
  std::string message;
  std::vector<std::string> notes;    ///< how the initial state was found, samples skipped
  /// (v2) The state-dependent events (diodes, contacts at a zero) in the window: how many
  /// instants the closed form found (Solution::schedule(), read after both have run) and the
  /// largest distance, s, from an event instant of either list to the nearest of the other's
  /// (infinite when only one list has any); the integrator's own are NumericalRun::events.
  std::size_t closed_events = 0;
  double max_event_time_error = 0.0;
  double event_time_at = 0.0;        ///< the instant where it occurs, s
  /// The largest distance allowed: rtol × the window's span from t = 0 (s).
  double event_time_tolerance = 0.0;
  NumericalRun numerical;            ///< the numerical waveforms (times, state, values)
};

/// The schedule the numerical path integrates over: build_schedule of the circuit under the
/// solution's scenario as given (SolveOptions::scenario, applied here again), over the
/// solution's window (an input of the schedule, not a result of the closed form).
Schedule numerical_schedule(const Solution& solution);

/// integrate_network on a solution's inputs only — its circuit, its scenario as given, the
/// numerical_schedule and its observables — none of its results.
NumericalRun integrate_inputs(const Solution& solution, const IntegrateOptions& options = {});

/// Integrates the network of `solution`'s inputs numerically (integrate_inputs) and compares it with the closed form at
/// the compared instants (see the file comment). A threshold the integrator cannot reach, or a run
/// that cannot finish, is a failed report, not an exception. Throws InputError for rtol ≤ 0 and
/// for an observable undefined in some segment; NumericError when CVODE cannot be set up.
VerifyReport verify_closed_form(const Solution& solution, const VerifyOptions& options = {});

/// CVODE's relative tolerance for a pass threshold: rtol·1e-4 within [1e-13, 1e-6]. The sample
/// grid, where every sample is a step's end, sets most of the step count, so the margin of 1e-4
/// (rather than 1e-3) costs about a third more steps and keeps observables that are small
/// differences of large terms (a capacitor current 1e-6 of V/R) well inside the threshold.
double integrator_rtol_for(double rtol);

}  // namespace netfold
