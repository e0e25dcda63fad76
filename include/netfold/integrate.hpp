#pragma once
/// \file integrate.hpp
/// The independent numerical path: the network's state equation integrated by SUNDIALS CVODE
/// (BDF, Newton), segment by segment, on the full nodal equations of each switch configuration.
///
/// Within a segment the storage element's state x (capacitor voltage v_C in V, or inductor
/// current i_L in A) obeys
///
///     C·dv_C/dt = i_C(t, v_C)      or      L·di_L/dt = v_L(t, i_L)
///
/// where i_C (A) or v_L (V) is the port quantity of the segment's MNA system G·x = B·u(t, x)
/// (see mna.hpp), solved in full at every right-hand-side evaluation with u[0] = x and
/// u[1 + k] = the k-th source's raw waveform at t. Each configuration's G is factored once
/// (dense LU or KLU, equilibrated) and the factorization is reused for every evaluation.
///
/// CVODE restarts (CVodeReInit) at every event with the state carried over, and never steps
/// past one; its steps are its own (no fixed step; at most a quarter period of the fastest
/// sinusoid). Every sample is the end of a step (CVodeSetStopTime at the sample), not an
/// interpolation between steps, which would lose digits in observables that are small
/// differences of large terms.
///
/// Nothing of the closed form is used: no Thevenin equivalent, no time constant, no phasor
/// (Drive/Wave), no Solution::pieces/value. Only the schedule of a Solution is read — the
/// segments' times, switch positions and port modes, the window, the resolution, the
/// observables and the options — together with the circuit itself. The one exception is
/// documented where it applies: when the sources before t = 0 have no common period, the
/// steady state at t = 0− is Solution::initial_state() (InitialStateMethod::engine_fallback).
///
/// Example:
/// \code
///   netfold::Solution s = netfold::solve(circuit);
///   netfold::NumericalRun run = netfold::integrate_network(s);
///   // run.times[k], run.state[k] (V or A), run.values[i][k] for s.observables()[i]
/// \endcode

#include <cstdint>
#include <string>
#include <vector>

#include "netfold/solve.hpp"

namespace netfold {

/// Options of integrate_network.
struct IntegrateOptions {
  /// CVODE's relative tolerance (dimensionless). verify_closed_form sets it from its pass threshold.
  double rtol = 1e-9;
  /// CVODE's absolute tolerance on the state (V or A); ≤ 0 means "from the problem's magnitude":
  /// atol = rtol · kAtolFraction · X, X the state scale estimated through the MNA (see NumericalRun).
  double atol = 0.0;
  /// Step budget over the whole run (the shooting for the initial state included). When it is
  /// spent the run stops with IntegrationStatus::budget_exhausted: a request that needs too many
  /// steps ends with a message, never a hang.
  long max_steps = 5'000'000;
};

/// Fraction of rtol·X used as the default absolute tolerance (X: the state scale).
inline constexpr double kAtolFraction = 1e-3;
/// Tightest relative tolerance asked of CVODE over the window (a few hundred ulps); a tighter
/// IntegrateOptions::rtol is raised to it.
inline constexpr double kTightestIntegratorRtol = 1e-13;

/// How a run ended.
enum class IntegrationStatus : std::uint8_t {
  ok,                ///< every sample computed
  budget_exhausted,  ///< the step budget (IntegrateOptions::max_steps) was spent
  failed,            ///< CVODE reported an error (message has its flag and numbers)
};

/// Where the numerical path's state at t = 0− came from.
enum class InitialStateMethod : std::uint8_t {
  given,               ///< the storage element's `initial` or SolveOptions::initial_state
  dc_operating_point,  ///< DC sources before t = 0: dx/dt = 0 solved on the pre-t=0 MNA system
  shooting,            ///< periodic steady state before t = 0 found by integrating one common period
  engine_fallback,     ///< no common period (or no stable pre-t=0 network): Solution::initial_state()
  undetermined,        ///< the engine found no steady state; 0, as the engine does
  none,                ///< no storage element
};

/// CVODE's work counters, summed over every segment and the shooting runs.
struct IntegrationStats {
  long steps = 0;                    ///< internal steps
  long rhs_evals = 0;                ///< right-hand-side evaluations (each one full MNA solve)
  long error_test_failures = 0;      ///< local error test failures
  long nonlinear_conv_failures = 0;  ///< Newton convergence failures
  long linear_setups = 0;            ///< Newton matrix setups
  long restarts = 0;                 ///< CVodeInit/CVodeReInit calls (segments + shooting runs)
  long factorizations = 0;           ///< nodal matrices factored (one per distinct configuration)
  /// this += other.
  void add(const IntegrationStats& other);
};

/// The numerical solution on the sample grid.
struct NumericalRun {
  IntegrationStatus status = IntegrationStatus::ok;
  /// Why the run stopped early, with the numbers ("" when status is ok).
  std::string message;
  /// Sample times, s: FROM + k·resolution of the window, k = 0, 1, … while ≤ TO, from t = 0 on
  /// (only those reached when the run stopped early).
  std::vector<double> times;
  /// Index into Solution::segments() of the segment each sample belongs to (a sample at an
  /// event time belongs to the segment the event starts: it holds the value just after it).
  std::vector<std::uint32_t> segment_of;
  /// The numerical state at each sample (V or A; 0 without a storage element).
  std::vector<double> state;
  /// values[i][k]: observable i (Solution::observables()[i]) at times[k], in V, A or W.
  std::vector<std::vector<double>> values;
  /// Per observable: the largest |∂y/∂x| over the samples (y per unit of state, e.g. A/V for a
  /// capacitor current): how much of the state's error reaches y.
  std::vector<double> state_gain;
  /// Samples of the grid before t = 0 (a window that starts before 0), not computed.
  std::size_t skipped_before_zero = 0;
  /// Samples of the grid at or after t = 0: times.size() when the run finished.
  std::size_t planned_samples = 0;

  double initial_state = 0.0;  ///< state at t = 0− used (V or A)
  InitialStateMethod initial_method = InitialStateMethod::none;
  std::string initial_note;    ///< how the initial state was found, for the report

  double rtol = 0.0;           ///< CVODE's relative tolerance used
  double atol = 0.0;           ///< CVODE's absolute tolerance on the state used (V or A)
  /// Estimated magnitude of the state over the window (V or A): the largest of |x(0−)| and, per
  /// segment and source term, |∂f/∂u_k|·|term| / max(|∂f/∂x|, ω, 1/window), with f the
  /// state equation's right-hand side, both derivatives taken from the MNA solution.
  double state_scale = 0.0;
  /// Largest |voltage across| and |current through| any element over the samples (V, A),
  /// from the numerical solution: the network's own magnitudes.
  double voltage_scale = 0.0;
  double current_scale = 0.0;
  IntegrationStats stats;
};

/// The sample grid of a window: FROM + k·resolution, k = 0, 1, … while ≤ TO (with a relative
/// slack of 1e-9 of a step, so that rounding does not drop the last sample).
std::vector<double> sample_times(const Window& window, double resolution);

/// Integrates the network whose schedule `schedule` describes (see the file comment) and
/// evaluates every observable of schedule.observables() on the sample grid from the numerical
/// state by the same full MNA solve (x = G⁻¹·B·u(t, state), then the observable's linear form; a
/// power is v·i). The state at t = 0− is taken from `initial` / SolveOptions when given, else
/// found independently on the pre-t=0 network (DC operating point, or shooting over one common
/// period of the sources). A run that cannot finish (step budget, CVODE error) returns with
/// status ≠ ok and a message; throws NumericError only when CVODE cannot be set up at all, and
/// InputError when an observable is undefined (a floating node) in some segment.
NumericalRun integrate_network(const Solution& schedule, const IntegrateOptions& options = {});

}  // namespace netfold
