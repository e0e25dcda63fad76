#pragma once
/// \file integrate.hpp
/// The independent numerical path: the network's state equation integrated by SUNDIALS CVODE
/// (BDF, Newton), segment by segment, on the full nodal equations of each switch configuration.
///
/// Within a segment the n storage elements' states x (capacitor voltages in V, inductor
/// currents in A, in file order) obey
///
///     C_k·dv_k/dt = i_Ck(t, x)      or      L_k·di_k/dt = v_Lk(t, x)
///
/// where i_Ck (A) or v_Lk (V) is the k-th port quantity of the segment's MNA system
/// G·x = B·u(t, x) (see mna.hpp), solved in full at every right-hand-side evaluation with
/// u[0 .. n−1] = the states and u[n + k] = the k-th source's waveform at t under the scenario.
/// Each configuration's G is factored once (dense LU or KLU, equilibrated) and the
/// factorization is reused for every evaluation. The Newton matrix I − γ·A is dense n×n; A, the
/// Jacobian of dx/dt = A·x + B·u(t), comes from n full nodal solves with a unit state each.
///
/// The network is linear, so the run is carried out in units of S, a power of two near the
/// largest magnitude of the sources and of the given initial states (every input divided by S,
/// every result multiplied by S, both exact): a circuit driven by 1e-300 V is integrated as one
/// driven by about 1 V, and its tolerances are not lost below the smallest double.
///
/// CVODE restarts (CVodeReInit) at every event with the state carried over, and never steps
/// past one; its steps are its own (no fixed step; at most a quarter period of the fastest
/// sinusoid). Every sample is the end of a step (CVodeSetStopTime at the sample), not an
/// interpolation between steps, which would lose digits in observables that are small
/// differences of large terms.
///
/// Diodes and contacts that act at a current or voltage zero (the format's state-dependent
/// events, v2): the configuration includes every diode's state, and the diodes' drops enter as
/// the unit input (mna.hpp). Within a segment of the schedule CVODE's root finding
/// (CVodeRootInit) watches, per diode, the conducting one's current, the blocking one's voltage
/// against its drop and its breakdown, and per armed contact its current or voltage; at a root
/// the run stops, picks the consistent configuration by its own search, and restarts there
/// (NumericalRun::events lists what it found). Before t = 0 such a circuit starts from the DC
/// steady state of its consistent configuration, or with sinusoids from its periodic steady
/// state, by its own shooting over one period with root finding.
///
/// Nothing of the closed form is used: the run reads the circuit, the schedule (build_schedule:
/// segments, switch positions, window, resolution), the scenario (applied here with
/// apply_scenario: each source's waveform, each residual state) and the observables to
/// evaluate. From the circuit it takes the storage elements, the sources in the network
/// stage's input order, which inductors are held at zero in a configuration (their loop open:
/// the format's rule) and the states at t = 0−: each element's `initial` or the scenario's
/// residual state, else the steady state of the network before t = 0, found here (the DC
/// operating point plus, for each group of harmonically related sinusoids, the periodic
/// response found by shooting with the monodromy matrix; see InitialStateMethod), with the
/// states the network leaves undetermined from 0 (least norm) as the format says. A seam that
/// falsifies the closed form (src/response/test_seams.hpp) leaves this path's results bit for
/// bit unchanged (tested).
///
/// Example:
/// \code
///   netfold::AppliedScenario applied = netfold::apply_scenario(circuit, {});
///   netfold::Schedule schedule = netfold::build_schedule(applied, {0.0, 0.01, {}});
///   netfold::NumericalRun run = netfold::integrate_network(circuit, schedule, {}, observables);
///   // run.times[k], run.states[j][k] (V or A), run.values[i][k] for observables[i]
/// \endcode

#include <cstdint>
#include <string>
#include <vector>

#include "netfold/netlist.hpp"
#include "netfold/scenario.hpp"
#include "netfold/schedule.hpp"

namespace netfold {

/// Options of integrate_network.
struct IntegrateOptions {
  /// CVODE's relative tolerance (dimensionless). verify_closed_form sets it from its pass threshold.
  double rtol = 1e-9;
  /// CVODE's absolute tolerance on every state (V or A); ≤ 0 means "from the problem's
  /// magnitude": atol_k = rtol · kAtolFraction · X_k, X_k the state scale estimated through the
  /// MNA (see NumericalRun).
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
  given,               ///< every state given: its element's `initial` or the scenario's residual state
  dc_operating_point,  ///< DC sources before t = 0: A·x = −B·u solved on the pre-t=0 MNA system
  /// Sinusoids before t = 0: the DC operating point plus, per group of harmonically related
  /// frequencies, the periodic steady state of that group alone, found by shooting over the
  /// group's period with the monodromy matrix (superposition: the network is linear)
  shooting,
  /// The network before t = 0 leaves a state not given undetermined (floating, isolated) or has no
  /// steady state (degenerate, growing, a lossless resonance): those states start from 0 (least norm)
  undetermined,
  none,                ///< no storage element
};

/// "given", "dc_operating_point", "shooting", "undetermined", "none" (the JSON's spelling).
const char* initial_state_method_name(InitialStateMethod method);

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
  /// Index into Schedule::segments of the segment each instant belongs to (a sample at an
  /// event time belongs to the segment the event starts: it holds the value just after it).
  std::vector<std::uint32_t> segment_of;
  /// states[j][k]: the numerical state j (Circuit::storage_elements() order) at times[k] (V or
  /// A); empty without a storage element.
  std::vector<std::vector<double>> states;
  /// values[i][k]: observable i (the observables given) at times[k], in V, A or W.
  std::vector<std::vector<double>> values;
  /// state_gain[i][j]: the largest |∂y_i/∂x_j| over the samples (y per unit of state j, e.g.
  /// A/V for a capacitor current): how much of state j's error reaches y_i.
  std::vector<std::vector<double>> state_gain;
  /// Per observable: B_y, a bound on |y| from the circuit alone, Σ_j |∂y/∂u_j|·U_j at its
  /// largest over the segments' configurations (for a power, the product of its factors'
  /// bounds): U_j = the largest |x_j| of the run for a state, source k's largest possible
  /// |value| (|dc| + Σ|steps| + Σ|amplitudes|) for its input; ∂y/∂u_j from the full nodal
  /// solve with u = e_j.
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

  std::vector<std::string> state_names;  ///< the storage elements' names, in state order
  std::vector<double> initial_states;  ///< per state: its value at t = 0− used (V or A)
  InitialStateMethod initial_method = InitialStateMethod::none;
  std::string initial_note;    ///< how the initial states were found, for the report
  /// Newton corrections of the periodic steady state's shooting (the most over the groups; 0
  /// without shooting).
  int shooting_iterations = 0;

  /// The state-dependent events the run located itself (diodes changing state at a root of
  /// CVODE's root functions, contacts at their zero), in time order, t ≥ 0; a diode the
  /// configuration search changed at the same instant is listed too.
  std::vector<ScheduledEvent> events;
  /// The diodes' states at t = 0− (element order; empty without diodes).
  std::vector<DiodeState> initial_diodes;

  double input_scale = 1.0;    ///< S: the power of two the run's inputs were divided by
  double rtol = 0.0;           ///< CVODE's relative tolerance used
  std::vector<double> atol;    ///< per state: CVODE's absolute tolerance used (V or A)
  /// Per state: its estimated magnitude over the window (V or A): the largest of |x(0−)| and,
  /// per segment and source term, Σ_k |B_jk|·|term| / max(ρ, ω, 1/window), with B the
  /// sources' columns of the state equation and ρ the smallest |eigenvalue| of its A, both from
  /// the MNA solution.
  std::vector<double> state_scale;
  IntegrationStats stats;
};

/// The sample grid of a window: FROM + k·resolution, k = 0, 1, … while ≤ TO (with a relative
/// slack of 1e-9 of a step, so that rounding does not drop the last sample).
std::vector<double> sample_times(const Window& window, double resolution);

/// Integrates `circuit` under `scenario` over `schedule` (see the file comment; the schedule
/// must be built from the same circuit) and evaluates every observable of `observables` at the
/// compared instants from the numerical states by the same full MNA solve
/// (x = G⁻¹·B·u(t, states), then the observable's linear form; a power is v·i). A run that
/// cannot finish (step budget, CVODE error) returns with status ≠ ok and a message; throws
/// NumericError only when CVODE cannot be set up at all or a configuration the engine would
/// have refused is met, and InputError when an observable is undefined (a floating node) in
/// some segment or the scenario does not fit the circuit.
NumericalRun integrate_network(const Circuit& circuit, const Schedule& schedule, const Scenario& scenario,
                               const std::vector<Observable>& observables, const IntegrateOptions& options = {});

}  // namespace netfold
