#include "netfold/integrate.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <limits>
#include <memory>
#include <numbers>
#include <optional>
#include <unordered_map>

#include <cvode/cvode.h>
#include <fmt/format.h>
#include <nvector/nvector_serial.h>
#include <sundials/sundials_context.h>
#include <sunlinsol/sunlinsol_dense.h>
#include <sunmatrix/sunmatrix_dense.h>

#include "network/linear_solver.hpp"
#include "netfold/units.hpp"

namespace netfold {

void IntegrationStats::add(const IntegrationStats& o) {
  steps += o.steps;
  rhs_evals += o.rhs_evals;
  error_test_failures += o.error_test_failures;
  nonlinear_conv_failures += o.nonlinear_conv_failures;
  linear_setups += o.linear_setups;
  restarts += o.restarts;
  factorizations += o.factorizations;
}

std::vector<double> sample_times(const Window& window, double resolution) {
  std::vector<double> out;
  const double span = window.to - window.from;
  if (!(resolution > 0.0) || !std::isfinite(resolution) || !(span >= 0.0)) {
    out.push_back(window.from);
    return out;
  }
  const double rows = std::floor(span / resolution + 1e-9);
  if (rows > 5e7)
    throw NumericError(fmt::format("the sample grid of {} .. {} at a resolution of {} has {:.3g} rows, more than "
                                   "the 5e7 the cross-check can hold",
                                   format_si(window.from, "s"), format_si(window.to, "s"), format_si(resolution, "s"),
                                   rows + 1));
  const auto n = static_cast<std::size_t>(rows);
  out.reserve(n + 1);
  for (std::size_t k = 0; k <= n; ++k)
    out.push_back(std::min(window.from + static_cast<double>(k) * resolution, window.to));
  return out;
}

namespace {

constexpr double kTwoPi = 2.0 * std::numbers::pi;
// Tightest one asked of the shooting's forced run, which is one period long and whose error
// the steady state amplifies by 1/(1 − α): a few ulps.
constexpr double kTightestShootingRtol = 1e-15;
// Smallest absolute tolerance: far below any physical state, far above the denormals, so that
// CVODE's error weights 1/(rtol·|x| + atol) stay finite where the state is exactly 0.
constexpr double kAtolFloor = 1e-280;
// Longest common period searched for the shooting: this many periods of the slowest sinusoid.
constexpr int kMaxCommonPeriods = 1000;

double evaluate(const LinearForm& form, const Eigen::VectorXd& x, const Eigen::VectorXd& u) {
  double y = 0.0;
  for (auto [i, c] : form.unknowns) y += c * x[static_cast<Eigen::Index>(i)];
  for (auto [j, c] : form.inputs) y += c * u[static_cast<Eigen::Index>(j)];
  return y;
}

// One source's waveform as the numerical path sees it. Within a segment its level (dc plus the
// steps taken) is the level at the segment's start: CVODE evaluates the right-hand side at the
// segment's end, where a step of the next segment must not count yet. Sinusoids are evaluated
// at whatever time CVODE asks.
struct SourceSignal {
  const Waveform* waveform = nullptr;
  double shift = 0.0;  // rad: SolveOptions::source_phase

  double sinusoids_at(double t) const {
    double v = 0.0;
    for (const auto& s : waveform->sinusoids) v += s.amplitude * std::cos(kTwoPi * s.frequency * t + s.phase + shift);
    return v;
  }
  // dc plus the steps at negative times: the level "for all t < 0" of the format.
  double level_before_zero() const {
    double v = waveform->dc;
    for (const auto& s : waveform->steps)
      if (s.time < 0.0) v += s.level;
    return v;
  }
};

std::vector<SourceSignal> source_signals(const Solution& s) {
  std::vector<SourceSignal> out;
  for (ElementId id : s.sources()) {
    const Element& e = s.circuit().element(id);
    SourceSignal sig{&e.waveform, 0.0};
    const auto& phase = s.options().source_phase;
    if (phase && phase->first == id && !e.waveform.sinusoids.empty())
      sig.shift = phase->second - e.waveform.sinusoids.front().phase;
    out.push_back(sig);
  }
  return out;
}

// Frequencies (Hz) of every sinusoid with a non-zero amplitude.
std::vector<double> source_frequencies(const std::vector<SourceSignal>& signals) {
  std::vector<double> f;
  for (const auto& sig : signals)
    for (const auto& s : sig.waveform->sinusoids)
      if (s.amplitude != 0.0) f.push_back(s.frequency);
  return f;
}

// The shortest T = n/f_min, n ≤ kMaxCommonPeriods, that is a whole number of periods of every
// frequency (to 1e-9 relative); nothing when there is none.
std::optional<double> common_period(const std::vector<double>& frequencies) {
  if (frequencies.empty()) return std::nullopt;
  const double f_min = *std::min_element(frequencies.begin(), frequencies.end());
  for (int n = 1; n <= kMaxCommonPeriods; ++n) {
    bool whole = true;
    for (double f : frequencies) {
      double cycles = f * n / f_min;
      if (std::fabs(cycles - std::round(cycles)) > 1e-9 * std::max(1.0, cycles)) {
        whole = false;
        break;
      }
    }
    if (whole) return n / f_min;
  }
  return std::nullopt;
}

// One switch configuration: its MNA system and one factorization of G, reused for every
// right-hand side evaluated in it.
struct Configuration {
  SwitchPositions positions;
  PortMode mode = PortMode::port;
  NodalSystem system;
  std::unique_ptr<LinearSolver> lu;
  LinearForm port;
  // Per observable: its form, and the current's form for a power (v·i).
  std::vector<std::pair<LinearForm, std::optional<LinearForm>>> observable_forms;
  // Per observable: ∂/∂x of each of the two forms above (per unit of state).
  std::vector<std::pair<double, double>> observable_gains;
  // Every element's voltage and current form (the defined ones), for the magnitude scales.
  std::vector<LinearForm> voltage_forms, current_forms;

  // x = G⁻¹·B·u.
  Eigen::VectorXd unknowns(const Eigen::VectorXd& u) const {
    Eigen::MatrixXd x = lu->solve(system.right_hand_side(u));
    return x.col(0);
  }
};

LinearForm observable_form(const NodalSystem& sys, const Observable& obs, bool current) {
  switch (obs.kind) {
    case ObservableKind::node_voltage: return sys.node_voltage(obs.node_a);
    case ObservableKind::node_difference: {
      LinearForm a = sys.node_voltage(obs.node_a), b = sys.node_voltage(obs.node_b);
      for (auto [x, c] : b.unknowns) a.unknowns.push_back({x, -c});
      for (auto [u, c] : b.inputs) a.inputs.push_back({u, -c});
      a.defined = sys.component_of(obs.node_a) == sys.component_of(obs.node_b);
      return a;
    }
    case ObservableKind::element_voltage: return sys.element_voltage(obs.element);
    case ObservableKind::element_current: return sys.element_current(obs.element);
    case ObservableKind::element_power:
      return current ? sys.element_current(obs.element) : sys.element_voltage(obs.element);
  }
  return {};
}

// Each distinct configuration (positions, port mode) is assembled and factored once.
class Configurations {
 public:
  Configurations(const Circuit& circuit, const std::vector<Observable>& observables)
      : circuit_(circuit), observables_(observables) {}

  const Configuration& get(const SwitchPositions& positions, PortMode mode, const std::string& where) {
    // Found by hash: a sequence of many events has as many configurations, and a linear
    // search over them made the cross-check quadratic in the events.
    std::vector<bool> key = positions.closed;
    key.push_back(mode == PortMode::held_at_zero);
    if (auto it = index_.find(key); it != index_.end()) return *items_[it->second];
    auto c = std::make_unique<Configuration>();
    c->positions = positions;
    c->mode = mode;
    c->system = build_nodal_system(circuit_, positions, BuildOptions{mode, std::nullopt});
    for (const auto& p : c->system.problems())
      if (!(mode == PortMode::port && p.kind == TopologyProblem::Kind::inductor_open))
        throw NumericError(fmt::format("cross-check: the nodal equations of {} have a structural problem the "
                                       "engine did not report",
                                       where));
    // The same solver choice as the engine (its agreement across solvers is tested in
    // test_solvers): independence comes from solving the full system at every step for the
    // state's own right-hand side, not from a different factorization.
    c->lu = factor_nodal_matrix(c->system.matrix(), c->system.symmetric_positive_definite());
    if (c->lu->rcond() < kSingularRcond)
      throw NumericError(fmt::format("cross-check: the nodal matrix of {} is singular (reciprocal condition "
                                     "{:.1e} < {:.0e})",
                                     where, c->lu->rcond(), kSingularRcond));
    c->port = c->system.port_quantity();
    for (const auto& obs : observables_) {
      LinearForm f = observable_form(c->system, obs, false);
      if (!f.defined)
        throw InputError(circuit_.diagnostic(obs.loc, fmt::format("'{}' is not defined in {}: the node has no "
                                                                  "path to the reference there",
                                                                  obs.text, where)));
      std::optional<LinearForm> g;
      if (obs.kind == ObservableKind::element_power) g = observable_form(c->system, obs, true);
      c->observable_forms.emplace_back(std::move(f), std::move(g));
    }
    const auto n_inputs = static_cast<Eigen::Index>(c->system.input_count());
    Eigen::VectorXd e0 = Eigen::VectorXd::Zero(n_inputs);
    e0[0] = 1.0;
    const Eigen::VectorXd x0 = c->unknowns(e0);
    for (const auto& [f, g] : c->observable_forms)
      c->observable_gains.emplace_back(evaluate(f, x0, e0), g ? evaluate(*g, x0, e0) : 0.0);
    for (ElementId id = 0; id < circuit_.elements().size(); ++id) {
      LinearForm v = c->system.element_voltage(id), i = c->system.element_current(id);
      if (v.defined) c->voltage_forms.push_back(std::move(v));
      if (i.defined) c->current_forms.push_back(std::move(i));
    }
    index_.emplace(std::move(key), items_.size());
    items_.push_back(std::move(c));
    return *items_.back();
  }
  long count() const { return static_cast<long>(items_.size()); }

 private:
  const Circuit& circuit_;
  const std::vector<Observable>& observables_;
  std::vector<std::unique_ptr<Configuration>> items_;
  std::unordered_map<std::vector<bool>, std::size_t> index_;  // positions + mode → items_
};

// The right-hand side CVODE integrates, dx/dt = f(t, x) = q(t, x)/S: q the port quantity
// (capacitor current, A, or inductor voltage, V) from the full solve of G·x = B·u(t, x), S the
// capacitance (F) or inductance (H). With `homogeneous`, the sources are zero and the state is
// offset: f(t, w + offset), which gives the shooting its deviation run.
class StateEquation {
 public:
  StateEquation(const Configuration& config, double storage_value, const std::vector<SourceSignal>& signals,
                std::vector<double> levels)
      : config_(&config), storage_value_(storage_value), signals_(&signals), levels_(std::move(levels)),
        u_(static_cast<Eigen::Index>(1 + signals.size())) {}

  void set_homogeneous(double offset) {
    homogeneous_ = true;
    offset_ = offset;
  }

  // u(t, x): u[0] = x, u[1 + k] = source k at t.
  const Eigen::VectorXd& inputs(double t, double x) {
    u_.setZero();
    if (homogeneous_) {
      u_[0] = x + offset_;
      return u_;
    }
    u_[0] = x;
    for (std::size_t k = 0; k < levels_.size(); ++k)
      u_[static_cast<Eigen::Index>(k + 1)] = levels_[k] + (*signals_)[k].sinusoids_at(t);
    return u_;
  }

  double rate(double t, double x) {
    const Eigen::VectorXd& u = inputs(t, x);
    return evaluate(config_->port, config_->unknowns(u), u) / storage_value_;
  }

  const Configuration& config() const { return *config_; }
  const std::vector<double>& levels() const { return levels_; }

 private:
  const Configuration* config_;
  double storage_value_;
  const std::vector<SourceSignal>* signals_;
  std::vector<double> levels_;
  bool homogeneous_ = false;
  double offset_ = 0.0;
  Eigen::VectorXd u_;
};

// ∂f/∂u_j for every input j (j = 0: the state, 1/s; j > 0: per unit of source j), each from a
// full MNA solve with u = e_j. Used to size tolerances and to find the DC operating point.
std::vector<double> sensitivities(const Configuration& config, double storage_value) {
  const auto n = static_cast<Eigen::Index>(config.system.input_count());
  std::vector<double> d(static_cast<std::size_t>(n), 0.0);
  for (Eigen::Index j = 0; j < n; ++j) {
    Eigen::VectorXd u = Eigen::VectorXd::Zero(n);
    u[j] = 1.0;
    d[static_cast<std::size_t>(j)] = evaluate(config.port, config.unknowns(u), u) / storage_value;
  }
  return d;
}

// Magnitude the forcing can give the state over a span `span` (s), term by term:
// |∂f/∂u_k|·|term| / max(|∂f/∂x|, ω, 1/span), with ω = 0 for the level.
double forcing_scale(const std::vector<double>& d, const std::vector<double>& levels,
                     const std::vector<SourceSignal>& signals, double span) {
  const double a = std::fabs(d.at(0));
  const double slow = span > 0.0 ? 1.0 / span : 0.0;
  double x = 0.0;
  for (std::size_t k = 0; k < signals.size(); ++k) {
    const double b = std::fabs(d.at(k + 1));
    if (b == 0.0) continue;
    const double rate = std::max(a, slow);
    if (rate > 0.0) x += b * std::fabs(levels.at(k)) / rate;
    for (const auto& s : signals[k].waveform->sinusoids) {
      double r = std::max(rate, kTwoPi * s.frequency);
      if (r > 0.0) x += b * std::fabs(s.amplitude) / r;
    }
  }
  return std::isfinite(x) ? x : 0.0;
}

// Largest step allowed: a quarter period of the fastest sinusoid, a guard against stepping
// over a whole period where the forcing happens to look flat (0 = no limit).
double step_limit(const std::vector<double>& frequencies) {
  if (frequencies.empty()) return 0.0;
  return 0.25 / *std::max_element(frequencies.begin(), frequencies.end());
}

int state_rhs(sunrealtype t, N_Vector y, N_Vector ydot, void* user_data) {
  try {
    auto* eq = static_cast<StateEquation*>(user_data);
    double r = eq->rate(t, NV_Ith_S(y, 0));
    NV_Ith_S(ydot, 0) = r;
    return std::isfinite(r) ? 0 : 1;  // 1: recoverable, CVODE retries with a smaller step
  } catch (...) {
    return -1;
  }
}

std::string flag_name(int flag) {
  char* name = CVodeGetReturnFlagName(flag);
  std::string out = name ? name : fmt::format("flag {}", flag);
  std::free(name);
  return out;
}

// CVODE with a 1×1 dense Newton matrix (the state is scalar); its Jacobian ∂f/∂x is CVODE's
// own difference quotient of the right-hand side, so nothing but f enters the integration.
class Integrator {
 public:
  explicit Integrator(long budget) : budget_(budget) {
    if (SUNContext_Create(nullptr, &ctx_) != 0) throw NumericError("cross-check: SUNContext_Create failed");
    y_ = N_VNew_Serial(1, ctx_);
    a_ = y_ ? SUNDenseMatrix(1, 1, ctx_) : nullptr;
    ls_ = a_ ? SUNLinSol_Dense(y_, a_, ctx_) : nullptr;
    mem_ = ls_ ? CVodeCreate(CV_BDF, ctx_) : nullptr;
    if (!mem_) {
      release();
      throw NumericError("cross-check: CVODE could not be created (out of memory)");
    }
    check(CVodeSetErrHandlerFn(mem_, &Integrator::on_error, this), "CVodeSetErrHandlerFn");
  }
  ~Integrator() { release(); }
  Integrator(const Integrator&) = delete;
  Integrator& operator=(const Integrator&) = delete;

  // (Re)starts at x(t0) = x0 on `eq`, never stepping past tstop.
  void start(StateEquation& eq, double t0, double x0, double tstop, double rtol, double atol, double hmax) {
    NV_Ith_S(y_, 0) = x0;
    if (!initialized_) {
      check(CVodeInit(mem_, state_rhs, t0, y_), "CVodeInit");
      check(CVodeSetLinearSolver(mem_, ls_, a_), "CVodeSetLinearSolver");
      // A Newton matrix I − γ·∂f/∂x rebuilt at every step (γ current): for this linear equation
      // one Newton iteration then leaves a corrector residual of the order of the difference
      // quotient's own error (~1e-8 relative) times the step's correction, far below the error
      // test, so the sampled state satisfies the BDF formula (see advance_to).
      check(CVodeSetLSetupFrequency(mem_, 1), "CVodeSetLSetupFrequency");
      initialized_ = true;
    } else {
      check(CVodeReInit(mem_, t0, y_), "CVodeReInit");
    }
    check(CVodeSetUserData(mem_, &eq), "CVodeSetUserData");
    check(CVodeSStolerances(mem_, rtol, atol), "CVodeSStolerances");
    check(CVodeSetMaxStep(mem_, hmax), "CVodeSetMaxStep");
    eq_ = &eq;
    t0_ = t0;
    x0_ = x0;
    tstop_ = tstop;
    t_ = t0;
    x_ = x0;
    base_ = counters();
    ++total_.restarts;
  }

  // Advances to t (t0 ≤ t ≤ tstop) and gives x(t); false when the run had to stop (status()).
  // Every output is a step's end (CVodeSetStopTime at t), never an interpolation between steps:
  // the interpolant is accurate in the state only to rtol, and in a stiff segment an observable
  // that is a small difference of large terms (the capacitor current while v_C tracks its
  // source, ωτ ≪ 1) would amplify that by 1/(ωτ). At a step's end the state satisfies the
  // corrector, whose error along the fast mode is damped by the step itself.
  bool advance_to(double t, double& x) {
    t = std::min(t, tstop_);
    if (t <= t_) {
      x = t <= t0_ ? x0_ : x_;
      return true;
    }
    // CVODE refuses a first output closer to t0 than a few ulps of t (CV_TOO_CLOSE); over
    // such a gap one Euler step is exact to rounding.
    const double ulps = 4.0 * std::numeric_limits<double>::epsilon() * std::max(std::fabs(t_), std::fabs(t));
    if (t_ == t0_ && t - t0_ <= ulps) {
      x = x0_ + eq_->rate(t0_, x0_) * (t - t0_);
      return true;
    }
    const long used = total_.steps + (counters().steps - base_.steps);
    const long remaining = budget_ - used;
    if (remaining <= 0) return stop_for_budget(t);
    check(CVodeSetMaxNumSteps(mem_, remaining), "CVodeSetMaxNumSteps");
    check(CVodeSetStopTime(mem_, t), "CVodeSetStopTime");
    sunrealtype tret = t_;
    const int flag = CVode(mem_, t, y_, &tret, CV_NORMAL);
    if (flag == CV_TOO_MUCH_WORK) return stop_for_budget(t);
    if (flag < 0) {
      sunrealtype tcur = t_;
      CVodeGetCurrentTime(mem_, &tcur);
      status_ = IntegrationStatus::failed;
      message_ = fmt::format("CVODE stopped at t = {} on its way to {} with {} ({}){}{}", format_si(tcur, "s"),
                             format_si(t, "s"), flag_name(flag), flag, last_error_.empty() ? "" : ": ", last_error_);
      return false;
    }
    t_ = t;
    x_ = NV_Ith_S(y_, 0);
    x = x_;
    return true;
  }

  // Adds the counters of the run since the last start() to the totals.
  void finish() {
    IntegrationStats now = counters();
    total_.steps += now.steps - base_.steps;
    total_.rhs_evals += now.rhs_evals - base_.rhs_evals;
    total_.error_test_failures += now.error_test_failures - base_.error_test_failures;
    total_.nonlinear_conv_failures += now.nonlinear_conv_failures - base_.nonlinear_conv_failures;
    total_.linear_setups += now.linear_setups - base_.linear_setups;
    base_ = now;
  }

  const IntegrationStats& totals() const { return total_; }
  IntegrationStatus status() const { return status_; }
  const std::string& message() const { return message_; }
  long budget() const { return budget_; }

 private:
  SUNContext ctx_ = nullptr;
  N_Vector y_ = nullptr;
  SUNMatrix a_ = nullptr;
  SUNLinearSolver ls_ = nullptr;
  void* mem_ = nullptr;
  bool initialized_ = false;
  StateEquation* eq_ = nullptr;
  double t0_ = 0.0, x0_ = 0.0, tstop_ = 0.0;
  double t_ = 0.0, x_ = 0.0;  // last output
  long budget_;
  IntegrationStats total_, base_;
  IntegrationStatus status_ = IntegrationStatus::ok;
  std::string message_, last_error_;

  void release() {
    if (mem_) CVodeFree(&mem_);
    if (ls_) SUNLinSolFree(ls_);
    if (a_) SUNMatDestroy(a_);
    if (y_) N_VDestroy(y_);
    if (ctx_) SUNContext_Free(&ctx_);
    mem_ = nullptr;
    ls_ = nullptr;
    a_ = nullptr;
    y_ = nullptr;
  }

  void check(int flag, const char* what) {
    if (flag < 0)
      throw NumericError(fmt::format("cross-check: {} failed with {} ({}){}{}", what, flag_name(flag), flag,
                                     last_error_.empty() ? "" : ": ", last_error_));
  }

  IntegrationStats counters() const {
    IntegrationStats s;
    if (!initialized_) return s;
    CVodeGetNumSteps(mem_, &s.steps);
    CVodeGetNumRhsEvals(mem_, &s.rhs_evals);
    CVodeGetNumErrTestFails(mem_, &s.error_test_failures);
    CVodeGetNumNonlinSolvConvFails(mem_, &s.nonlinear_conv_failures);
    CVodeGetNumLinSolvSetups(mem_, &s.linear_setups);
    return s;
  }

  bool stop_for_budget(double t) {
    sunrealtype tcur = t0_;
    if (initialized_) CVodeGetCurrentTime(mem_, &tcur);
    status_ = IntegrationStatus::budget_exhausted;
    message_ = fmt::format("the step budget of {} CVODE steps was spent at t = {}, on the way to {}", budget_,
                           format_si(tcur, "s"), format_si(t, "s"));
    return false;
  }

  static void on_error(int code, const char* /*module*/, const char* function, char* msg, void* self) {
    if (code == CV_WARNING) return;  // e.g. "t + h = t": CVODE copes, the error test decides
    static_cast<Integrator*>(self)->last_error_ = fmt::format("{}: {}", function ? function : "CVODE", msg ? msg : "");
  }
};

// Result of the search for the state at t = 0−.
struct InitialState {
  double value = 0.0;
  InitialStateMethod method = InitialStateMethod::none;
  std::string note;
  bool ok = true;  // false: the integrator stopped (budget), see the Integrator's status
};

std::string unit_of_state(const Element& storage) { return storage.kind == ElementKind::capacitor ? "V" : "A"; }

// The state at t = 0−: given, or the steady state of the network before t = 0, found without
// the closed form. DC sources only: f(x) = ∂f/∂x·x + f(0) = 0. Sinusoids: shooting over one
// common period T, x(0) = α·x(−T) + β, periodic when x* = β/(1 − α); α − 1 comes from its own
// run (the deviation w = x_h − 1 of the unforced response from x = 1, so that 1 − α keeps its
// digits when T ≪ τ; its scale is min(1, |∂f/∂x|·T)), at 1e-2·rtol since x* inherits its relative
// error; β's run is tightened by (1 − α)/(1 + 100·α), because x* amplifies β's error by 1/(1 − α)
// and, when α is near 1, β is a small remainder of the period's swing.
InitialState find_initial_state(const Solution& s, Configurations& configs, const std::vector<SourceSignal>& signals,
                                Integrator& cv, double rtol) {
  InitialState out;
  if (s.storage() == kNone) return out;
  const Element& storage = s.circuit().element(s.storage());
  switch (s.initial_source()) {
    case InitialStateSource::none: return out;
    case InitialStateSource::attribute:
    case InitialStateSource::option:
      out.value = s.initial_state();
      out.method = InitialStateMethod::given;
      out.note = fmt::format("{} at t = 0- is given: {}", storage.name, format_si(out.value, unit_of_state(storage)));
      return out;
    case InitialStateSource::undetermined:
      out.method = InitialStateMethod::undetermined;
      out.note = fmt::format("{} at t = 0- is undetermined ({}); started from 0, as the closed form", storage.name,
                             s.initial_note());
      return out;
    case InitialStateSource::steady_state: break;
  }

  auto fallback = [&](std::string why) {
    out.value = s.initial_state();
    out.method = InitialStateMethod::engine_fallback;
    out.note = fmt::format("{}: {} at t = 0- is the closed form's steady state ({}), not checked independently", why,
                           storage.name, format_si(out.value, unit_of_state(storage)));
    return out;
  };

  const Configuration& pre = configs.get(positions_before_zero(s.circuit()), PortMode::port, "the network before t = 0");
  std::vector<double> levels;
  for (const auto& sig : signals) levels.push_back(sig.level_before_zero());
  const std::vector<double> d = sensitivities(pre, storage.value);
  const std::vector<double> freqs = source_frequencies(signals);

  // No source reaches the state before t = 0 (they are switched off, or absent): it rests at 0.
  if (forcing_scale(d, levels, signals, 1.0) == 0.0) {
    out.value = 0.0;
    out.method = InitialStateMethod::dc_operating_point;
    out.note = fmt::format("{} at t = 0-: no source reaches it before t = 0, so it rests at 0 {}", storage.name,
                           unit_of_state(storage));
    return out;
  }
  if (freqs.empty()) {
    if (!(d[0] < 0.0)) return fallback(fmt::format("the pre-t=0 network has ∂f/∂x = {:.3g} 1/s ≥ 0", d[0]));
    StateEquation eq(pre, storage.value, signals, levels);
    out.value = -eq.rate(0.0, 0.0) / d[0];
    out.method = InitialStateMethod::dc_operating_point;
    out.note = fmt::format("{} at t = 0- from the DC operating point of the network before t = 0: {}", storage.name,
                           format_si(out.value, unit_of_state(storage)));
    return out;
  }

  std::optional<double> period = common_period(freqs);
  if (!period) {
    double f_min = *std::min_element(freqs.begin(), freqs.end());
    return fallback(fmt::format("the source frequencies have no common period within {} periods of {}",
                                kMaxCommonPeriods, format_si(f_min, "Hz")));
  }
  const double T = *period;
  const double hmax = step_limit(freqs);

  // α − 1 from the unforced deviation run, w(−T) = 0, dw/dt = f_h(w + 1).
  StateEquation deviation(pre, storage.value, signals, levels);
  deviation.set_homogeneous(1.0);
  const double rtol_alpha = std::max(kTightestShootingRtol, 1e-2 * rtol);
  const double w_scale = std::min(1.0, std::fabs(d[0]) * T);
  cv.start(deviation, -T, 0.0, 0.0, rtol_alpha, std::max(rtol_alpha * kAtolFraction * w_scale, kAtolFloor), 0.0);
  double w = 0.0;
  bool reached = cv.advance_to(0.0, w);
  cv.finish();
  if (!reached) {
    out.ok = false;
    return out;
  }
  const double one_minus_alpha = -w;
  if (!(one_minus_alpha > 0.0))
    return fallback(fmt::format("the pre-t=0 network does not decay over one period (1 - α = {:.3g})", one_minus_alpha));

  // β from the forced run from x(−T) = 0.
  const double alpha = 1.0 - one_minus_alpha;
  const double rtol_beta = std::max(kTightestShootingRtol, rtol * one_minus_alpha / (1.0 + 100.0 * alpha));
  const double scale = forcing_scale(d, levels, signals, T);
  StateEquation forced(pre, storage.value, signals, levels);
  cv.start(forced, -T, 0.0, 0.0, rtol_beta, std::max(rtol_beta * kAtolFraction * scale, kAtolFloor), hmax);
  double beta = 0.0;
  reached = cv.advance_to(0.0, beta);
  cv.finish();
  if (!reached) {
    out.ok = false;
    return out;
  }
  out.value = beta / one_minus_alpha;
  out.method = InitialStateMethod::shooting;
  out.note = fmt::format("{} at t = 0- from the periodic steady state before t = 0, by shooting over {} "
                         "(1 - α = {:.3g}, rtol {:.0e}): {}",
                         storage.name, format_si(T, "s"), one_minus_alpha, rtol_beta,
                         format_si(out.value, unit_of_state(storage)));
  return out;
}

std::string segment_where(const Segment& seg) {
  return fmt::format("segment {} ({} .. {})", seg.number, format_si(seg.from, "s"), format_si(seg.to, "s"));
}

}  // namespace

NumericalRun integrate_network(const Solution& s, const IntegrateOptions& options) {
  if (!(options.rtol > 0.0) || !std::isfinite(options.rtol))
    throw NumericError(fmt::format("cross-check: the integrator's rtol must be positive, saw {}", options.rtol));
  if (options.max_steps <= 0)
    throw NumericError(fmt::format("cross-check: the step budget must be positive, saw {}", options.max_steps));

  const Circuit& c = s.circuit();
  NumericalRun run;
  run.rtol = std::max(options.rtol, kTightestIntegratorRtol);
  const std::vector<Observable>& observables = s.observables();
  run.values.assign(observables.size(), {});
  run.state_gain.assign(observables.size(), 0.0);
  const std::vector<SourceSignal> signals = source_signals(s);
  const std::vector<double> freqs = source_frequencies(signals);
  const double hmax = step_limit(freqs);
  const bool has_storage = s.storage() != kNone;
  const double storage_value = has_storage ? c.element(s.storage()).value : 1.0;
  Configurations configs(c, observables);
  Integrator cv(options.max_steps);

  auto collect = [&](NumericalRun& r) {
    r.stats = cv.totals();
    r.stats.factorizations = configs.count();
    if (r.status == IntegrationStatus::ok && cv.status() != IntegrationStatus::ok) {
      r.status = cv.status();
      r.message = cv.message();
      if (r.status == IntegrationStatus::budget_exhausted && !freqs.empty()) {
        const double f_max = *std::max_element(freqs.begin(), freqs.end());
        r.message += fmt::format(" (t = 0 to the window's end holds {:.3g} periods of the fastest sinusoid, {}): shorten the "
                                 "window, or raise the budget",
                                 f_max * s.window().to, format_si(f_max, "Hz"));
      }
    }
  };

  const std::vector<double> grid = sample_times(s.window(), s.resolution());
  std::size_t k = 0;
  while (k < grid.size() && grid[k] < 0.0) ++k;
  run.skipped_before_zero = k;
  run.planned_samples = grid.size() - k;

  // 1. The state at t = 0−.
  InitialState initial = find_initial_state(s, configs, signals, cv, run.rtol);
  run.initial_state = initial.value;
  run.initial_method = initial.method;
  run.initial_note = initial.note;
  if (!initial.ok) {
    collect(run);
    run.message = "while finding the steady state before t = 0: " + run.message;
    return run;
  }

  // 2. Each segment's configuration, and the state's scale from the sources through the MNA.
  const auto& segments = s.segments();
  const double span = s.window().to;
  std::vector<const Configuration*> seg_config;
  std::vector<std::vector<double>> seg_levels;
  run.state_scale = std::fabs(run.initial_state);
  for (const auto& seg : segments) {
    seg_config.push_back(&configs.get(seg.positions, seg.mode, segment_where(seg)));
    std::vector<double> levels;
    for (const auto& sig : signals) levels.push_back(sig.waveform->level_at(seg.from));
    if (has_storage && seg.mode == PortMode::port)
      run.state_scale =
          std::max(run.state_scale, forcing_scale(sensitivities(*seg_config.back(), storage_value), levels, signals, span));
    seg_levels.push_back(std::move(levels));
  }
  run.atol = options.atol > 0.0 ? options.atol : std::max(run.rtol * kAtolFraction * run.state_scale, kAtolFloor);

  // 3. Segment by segment: restart at each event with the state carried over, sample on the grid.
  run.times.reserve(grid.size() - k);
  run.state.reserve(grid.size() - k);
  for (auto& v : run.values) v.reserve(grid.size() - k);

  auto record = [&](double t, std::uint32_t seg_index, double x, StateEquation& eq) -> bool {
    const Configuration& cfg = eq.config();
    const Eigen::VectorXd u = eq.inputs(t, x);
    const Eigen::VectorXd xs = cfg.unknowns(u);
    std::vector<double> row(observables.size()), gain(observables.size());
    bool finite = std::isfinite(x);
    for (std::size_t i = 0; i < observables.size(); ++i) {
      const auto& [f, g] = cfg.observable_forms[i];
      const auto [df, dg] = cfg.observable_gains[i];
      row[i] = evaluate(f, xs, u);
      gain[i] = std::fabs(df);
      if (g) {
        const double gi = evaluate(*g, xs, u);
        gain[i] = std::fabs(row[i] * dg + gi * df);  // ∂(v·i)/∂x
        row[i] *= gi;
      }
      finite = finite && std::isfinite(row[i]);
    }
    if (!finite) {
      run.status = IntegrationStatus::failed;
      run.message = fmt::format("the numerical solution is not finite at t = {} (state {:.6g})", format_si(t, "s"), x);
      return false;
    }
    for (const auto& f : cfg.voltage_forms) run.voltage_scale = std::max(run.voltage_scale, std::fabs(evaluate(f, xs, u)));
    for (const auto& f : cfg.current_forms) run.current_scale = std::max(run.current_scale, std::fabs(evaluate(f, xs, u)));
    run.times.push_back(t);
    run.segment_of.push_back(seg_index);
    run.state.push_back(x);
    for (std::size_t i = 0; i < observables.size(); ++i) {
      run.values[i].push_back(row[i]);
      run.state_gain[i] = std::max(run.state_gain[i], gain[i]);
    }
    return true;
  };

  double x = run.initial_state;
  for (std::size_t i = 0; i < segments.size(); ++i) {
    const Segment& seg = segments[i];
    const bool last = i + 1 == segments.size();
    StateEquation eq(*seg_config[i], storage_value, signals, seg_levels[i]);
    // Without a storage element, or with an inductor held at zero, there is no ODE: the state is 0.
    const bool ode = has_storage && seg.mode == PortMode::port;
    if (!ode) x = 0.0;
    if (ode) cv.start(eq, seg.from, x, seg.to, run.rtol, run.atol, hmax);
    while (k < grid.size() && (grid[k] < seg.to || (last && grid[k] <= seg.to))) {
      const double t = grid[k];
      double xt = 0.0;
      if (ode && !cv.advance_to(t, xt)) {
        cv.finish();
        collect(run);
        return run;
      }
      if (!record(t, static_cast<std::uint32_t>(i), xt, eq)) {
        if (ode) cv.finish();
        collect(run);
        return run;
      }
      ++k;
    }
    if (ode) {
      bool reached = cv.advance_to(seg.to, x);
      cv.finish();
      if (!reached) {
        collect(run);
        return run;
      }
    }
  }
  collect(run);
  return run;
}

}  // namespace netfold
