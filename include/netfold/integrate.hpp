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
/// The network is linear, so the run is carried out in units of S, a power of two near the
/// largest magnitude of the sources and of a given initial state (every input divided by S,
/// every result multiplied by S, both exact): a circuit driven by 1e-300 V is integrated as one
/// driven by about 1 V, and its tolerances are not lost below the smallest double.
///
/// CVODE restarts (CVodeReInit) at every event with the state carried over, and never steps
/// past one; its steps are its own (no fixed step; at most a quarter period of the fastest
/// sinusoid). Every sample is the end of a step (CVodeSetStopTime at the sample), not an
/// interpolation between steps, which would lose digits in observables that are small
/// differences of large terms.
///
/// Nothing of the closed form is used: no Thevenin equivalent, no time constant, no phasor
/// (Drive/Wave), no Solution::pieces/value/initial_state, no segment's port mode. What is read of
/// a Solution is its schedule and scenario only — the segments' times and switch positions, the
/// window, the resolution, the observables and the options (a source's phase, an initial state)
/// — together with the circuit, from which the numerical path takes the storage element, the
/// sources in the network stage's input order, whether an inductor is held at zero in a
/// configuration (its loop open: the format's rule) and the state at t = 0−: the storage
/// element's `initial` or the option that overrides it, else the steady state of the network
/// before t = 0, found here (the DC operating point plus, for each group of harmonically related
/// sinusoids, one shooting over the group's period; see InitialStateMethod), or 0 where the
/// format says it is undetermined. A seam that falsifies the closed form (src/response/
/// test_seams.hpp) leaves this path's results bit for bit unchanged (tested).
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
/// Most instants compared on a sample grid that has more (see NumericalRun::times): every step
/// ends on a compared instant, so that a grid of 10⁷ samples would spend the step budget on
/// sampling alone.
inline constexpr std::size_t kMaxComparedSamples = 100'001;

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
  /// Sinusoids before t = 0: the DC operating point plus, per group of harmonically related
  /// frequencies, the periodic steady state of that group alone, found by shooting over the
  /// group's period (superposition: the network is linear)
  shooting,
  undetermined,        ///< the network before t = 0 has no steady state (isolated, floating, unstable): 0
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

/// The numerical solution at the compared instants.
struct NumericalRun {
  IntegrationStatus status = IntegrationStatus::ok;
  /// Why the run stopped early, with the numbers ("" when status is ok).
  std::string message;
  /// Compared instants, s, in time order: the sample grid FROM + k·resolution of the window, k =
  /// 0, 1, … while ≤ TO, from t = 0 on. When that grid has more than kMaxComparedSamples samples,
  /// a subset of it: every sample_stride-th sample and the last, plus every event instant inside
  /// the window twice — just before the event (in the segment it ends) and just after (in the
  /// segment it starts). Only those reached when the run stopped early.
  std::vector<double> times;
  /// Index into Solution::segments() of the segment each instant belongs to (a sample at an
  /// event time belongs to the segment the event starts: it holds the value just after it).
  std::vector<std::uint32_t> segment_of;
  /// The numerical state at each instant (V or A; 0 without a storage element).
  std::vector<double> state;
  /// values[i][k]: observable i (Solution::observables()[i]) at times[k], in V, A or W.
  std::vector<std::vector<double>> values;
  /// Per observable: the largest |∂y/∂x| over the samples (y per unit of state, e.g. A/V for a
  /// capacitor current): how much of the state's error reaches y.
  std::vector<double> state_gain;
  /// Per observable: B_y, a bound on |y| from the circuit alone, Σ_j |∂y/∂u_j|·U_j at its
  /// largest over the segments' configurations (for a power, the product of its factors'
  /// bounds): U_0 = the largest |x| of the run, U_{1+k} = source k's largest possible
  /// |value| (|dc| + Σ|steps| + Σ|amplitudes|); ∂y/∂u_j from the full nodal solve with u = e_j.
  std::vector<double> observable_bound;
  /// The same bound for the voltage across (V) and the current through (A) every element.
  double voltage_bound = 0.0;
  double current_bound = 0.0;
  /// Samples of the grid before t = 0 (a window that starts before 0), not computed.
  std::size_t skipped_before_zero = 0;
  /// Samples of the grid at or after t = 0.
  std::size_t grid_samples = 0;
  /// 1 when every grid sample is compared; k when every k-th is (see times).
  std::size_t sample_stride = 1;
  /// Instants planned (times.size() when the run finished).
  std::size_t planned_samples = 0;

  double initial_state = 0.0;  ///< state at t = 0− used (V or A)
  InitialStateMethod initial_method = InitialStateMethod::none;
  std::string initial_note;    ///< how the initial state was found, for the report

  double input_scale = 1.0;    ///< S: the power of two the run's inputs were divided by
  double rtol = 0.0;           ///< CVODE's relative tolerance used
  double atol = 0.0;           ///< CVODE's absolute tolerance on the state used (V or A)
  /// Estimated magnitude of the state over the window (V or A): the largest of |x(0−)| and, per
  /// segment and source term, |∂f/∂u_k|·|term| / max(|∂f/∂x|, ω, 1/window), with f the
  /// state equation's right-hand side, both derivatives taken from the MNA solution.
  double state_scale = 0.0;
  IntegrationStats stats;
};

/// The sample grid of a window: FROM + k·resolution, k = 0, 1, … while ≤ TO (with a relative
/// slack of 1e-9 of a step, so that rounding does not drop the last sample).
std::vector<double> sample_times(const Window& window, double resolution);

/// Integrates the network whose schedule `schedule` describes (see the file comment) and
/// evaluates every observable of schedule.observables() at the compared instants from the
/// numerical state by the same full MNA solve (x = G⁻¹·B·u(t, state), then the observable's
/// linear form; a power is v·i). A run that cannot finish (step budget, CVODE error) returns with
/// status ≠ ok and a message; throws NumericError only when CVODE cannot be set up at all, and
/// InputError when an observable is undefined (a floating node) in some segment.
NumericalRun integrate_network(const Solution& schedule, const IntegrateOptions& options = {});

}  // namespace netfold
