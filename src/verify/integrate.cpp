// integrate_network (integrate.hpp): the compared instants, the input scale, the states at t = 0−
// (initial_state.cpp), then CVODE segment by segment (cvode_integrator.cpp) on the state
// equation of each configuration (state_equation.cpp), and the circuit's own bounds on every
// observable for the comparison.
#include "netfold/integrate.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include <fmt/format.h>

#include "netfold/units.hpp"
#include "verify/cvode_integrator.hpp"
#include "verify/diode_steady_state.hpp"
#include "verify/initial_state.hpp"
#include "verify/state_equation.hpp"
#include "verify/state_events.hpp"

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

const char* initial_state_method_name(InitialStateMethod method) {
  switch (method) {
    case InitialStateMethod::given: return "given";
    case InitialStateMethod::dc_operating_point: return "dc_operating_point";
    case InitialStateMethod::shooting: return "shooting";
    case InitialStateMethod::undetermined: return "undetermined";
    case InitialStateMethod::none: return "none";
  }
  return "none";
}

namespace {

// Rows of a grid, beyond which sample_times refuses to hold it.
constexpr double kMaxGridRows = 5e7;

// Number of samples of the grid FROM + k·resolution ≤ TO (1 for a degenerate grid).
std::size_t grid_count(const Window& window, double resolution) {
  const double span = window.to - window.from;
  if (!(resolution > 0.0) || !std::isfinite(resolution) || !(span >= 0.0)) return 1;
  return static_cast<std::size_t>(std::floor(span / resolution + 1e-9)) + 1;
}

double grid_time(const Window& window, double resolution, std::size_t k) {
  return std::min(window.from + static_cast<double>(k) * resolution, window.to);
}

}  // namespace

std::vector<double> sample_times(const Window& window, double resolution) {
  const std::size_t n = grid_count(window, resolution);
  if (static_cast<double>(n) > kMaxGridRows)
    throw NumericError(fmt::format("the sample grid of {} .. {} at a resolution of {} has {:.3g} rows, more than "
                                   "the 5e7 the cross-check can hold",
                                   format_si(window.from, "s"), format_si(window.to, "s"), format_si(resolution, "s"),
                                   static_cast<double>(n)));
  std::vector<double> out(n);
  for (std::size_t k = 0; k < n; ++k) out[k] = n == 1 ? window.from : grid_time(window, resolution, k);
  return out;
}

namespace {

using namespace integration;

// The instants compared, each with its segment (see NumericalRun::times).
struct SamplePlan {
  std::vector<double> times;
  std::vector<std::uint32_t> segment;
  std::size_t grid_samples = 0, skipped = 0, stride = 1;
};

SamplePlan plan_samples(const Schedule& s) {
  SamplePlan plan;
  const Window& w = s.window;
  const double res = s.resolution;
  const std::size_t n = grid_count(w, res);
  auto at = [&](std::size_t k) { return n == 1 ? w.from : grid_time(w, res, k); };
  std::size_t k0 = 0;
  if (w.from < 0.0 && n > 1) {
    k0 = std::min(n, static_cast<std::size_t>(std::max(0.0, std::floor(-w.from / res))));
    while (k0 > 0 && at(k0 - 1) >= 0.0) --k0;
    while (k0 < n && at(k0) < 0.0) ++k0;
  }
  plan.skipped = k0;
  plan.grid_samples = n - k0;
  if (plan.grid_samples > kMaxComparedSamples)
    plan.stride = (plan.grid_samples - 1 + kMaxComparedSamples - 3) / (kMaxComparedSamples - 2);
  // (t, segment) pairs: the grid's, and with a stride every event instant from both sides.
  std::vector<std::pair<double, std::uint32_t>> items;
  const auto& segs = s.segments;
  std::uint32_t j = 0;
  auto add_sample = [&](std::size_t k) {
    const double t = at(k);
    while (j + 1 < segs.size() && t >= segs[j + 1].from) ++j;
    items.emplace_back(t, j);
  };
  for (std::size_t k = k0; k < n; k += plan.stride) add_sample(k);
  if (k0 < n && (n - 1 - k0) % plan.stride != 0) add_sample(n - 1);  // the last sample too
  if (plan.stride > 1)
    for (std::uint32_t i = 1; i < segs.size(); ++i)
      if (segs[i].from >= std::max(0.0, w.from) && segs[i].from <= w.to) {
        items.emplace_back(segs[i].from, i - 1);
        items.emplace_back(segs[i].from, i);
      }
  std::sort(items.begin(), items.end());
  items.erase(std::unique(items.begin(), items.end()), items.end());
  for (const auto& [t, seg] : items) {
    plan.times.push_back(t);
    plan.segment.push_back(seg);
  }
  return plan;
}

// S: a power of two near the largest magnitude of the sources and of the given initial states,
// so that the run's numbers are of order 1 (exact scaling: the network is linear).
double input_scale(const AppliedScenario& applied, const std::vector<SourceSignal>& signals) {
  double m = 0.0;
  for (const auto& sig : signals) m = std::max(m, sig.magnitude());
  for (ElementId id : applied.circuit().storage_elements())
    if (const auto initial = given_initial_state(applied, id)) m = std::max(m, std::fabs(*initial));
  if (!(m > 0.0) || !std::isfinite(m)) return 1.0;
  return std::ldexp(1.0, std::clamp(std::ilogb(m), -1000, 1000));
}

// The run's shared state while it steps through the segments.
struct Run {
  Run(const Circuit& c, const Schedule& schedule, NumericalRun& result) : circuit(c), s(schedule), out(result) {}
  const Circuit& circuit;
  const Schedule& s;
  NumericalRun& out;
  std::vector<SourceSignal> signals;
  double scale = 1.0;
  std::size_t n = 0;  // states
  double hmax = 0.0;
  std::vector<const Configuration*> seg_config;  // the numerical path's own reading of each segment
  std::vector<std::vector<double>> seg_levels;
  Eigen::VectorXd atol;  // per state, scaled
};

// "segment 2 (10 ms .. 20 ms)".
std::string segment_text(const Schedule& s, std::size_t i) {
  const ScheduledSegment& seg = s.segments[i];
  return fmt::format("segment {} ({} .. {})", i + 1, format_si(seg.from, "s"), format_si(seg.to, "s"));
}

// Each segment's configuration and levels, the states' scale through the MNA, and atol.
void prepare_segments(Run& r, Configurations& configs, const IntegrateOptions& options) {
  // From the states at t = 0−: the energy they hold, E₀ = Σ ½·S_k·x_k², bounds each state of a
  // passive network, |x_j| ≤ √(2·E₀/S_j), wherever it moves (an LC swinging its charge).
  std::vector<double> state_scale(r.n);
  const std::vector<ElementId> storages = r.circuit.storage_elements();
  double energy = 0.0;
  for (std::size_t k = 0; k < r.n; ++k) {
    const double x = r.out.initial_states[k] / r.scale;
    energy += 0.5 * r.circuit.element(storages[k]).value * x * x;
  }
  for (std::size_t k = 0; k < r.n; ++k) {
    const double swing = std::sqrt(2.0 * energy / r.circuit.element(storages[k]).value);
    state_scale[k] = std::max(std::fabs(r.out.initial_states[k]) / r.scale, std::isfinite(swing) ? swing : 0.0);
  }
  for (std::size_t i = 0; i < r.s.segments.size(); ++i) {
    const ScheduledSegment& seg = r.s.segments[i];
    const std::string where = segment_text(r.s, i);
    std::string why;
    const std::optional<std::vector<PortMode>> modes = configs.modes_for(seg.positions, why);
    if (!modes) throw NumericError(fmt::format("cross-check: {} in {}, which the engine did not report", why, where));
    r.seg_config.push_back(&configs.get(seg.positions, *modes, where));
    std::vector<double> levels;
    for (const auto& sig : r.signals) levels.push_back(sig.level_at(seg.from));
    const std::vector<double> x = forcing_scale(*r.seg_config.back(), levels, r.signals, r.s.window.to);
    for (std::size_t k = 0; k < r.n; ++k) state_scale[k] = std::max(state_scale[k], x[k]);
    r.seg_levels.push_back(std::move(levels));
  }
  r.atol = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(r.n));
  for (std::size_t k = 0; k < r.n; ++k) {
    const double atol = options.atol > 0.0 ? options.atol / r.scale
                                           : std::max(r.out.rtol * kAtolFraction * state_scale[k], 1e-280);
    r.atol[static_cast<Eigen::Index>(k)] = atol;
    r.out.state_scale.push_back(state_scale[k] * r.scale);
    r.out.atol.push_back(atol * r.scale);
  }
}

// Evaluates every observable at (t, z) (z the states in units of S) and appends the row; false,
// with the run's status set, when a value is not finite.
bool record(Run& r, StateEquation& eq, double t, std::uint32_t seg, const Eigen::VectorXd& z) {
  const Configuration& cfg = eq.config();
  const Eigen::VectorXd u = eq.inputs(t, z.data());
  const Eigen::VectorXd xs = cfg.unknowns(u);
  NumericalRun& out = r.out;
  const std::size_t n = cfg.observable_forms.size();
  std::vector<double> row(n);
  std::vector<std::vector<double>> gain(n, std::vector<double>(r.n));
  bool finite = z.allFinite();
  for (std::size_t i = 0; i < n; ++i) {
    const auto& [f, g] = cfg.observable_forms[i];
    const auto& [df, dg] = cfg.observable_gains[i];
    row[i] = evaluate(f, xs, u) * r.scale;
    for (std::size_t k = 0; k < r.n; ++k) gain[i][k] = std::fabs(df[k]);
    if (g) {
      const double gi = evaluate(*g, xs, u) * r.scale;
      for (std::size_t k = 0; k < r.n; ++k) gain[i][k] = std::fabs(row[i] * dg[k] + gi * df[k]);  // ∂(v·i)/∂x_k
      row[i] *= gi;
    }
    finite = finite && std::isfinite(row[i]);
  }
  if (!finite) {
    out.status = IntegrationStatus::failed;
    out.message = fmt::format("the numerical solution is not finite at t = {} (largest state {:.6g})",
                              format_si(t, "s"), z.size() ? z.cwiseAbs().maxCoeff() * r.scale : 0.0);
    return false;
  }
  out.times.push_back(t);
  out.segment_of.push_back(seg);
  for (std::size_t k = 0; k < r.n; ++k) out.states[k].push_back(z[static_cast<Eigen::Index>(k)] * r.scale);
  for (std::size_t i = 0; i < n; ++i) {
    out.values[i].push_back(row[i]);
    for (std::size_t k = 0; k < r.n; ++k) out.state_gain[i][k] = std::max(out.state_gain[i][k], gain[i][k]);
  }
  return true;
}

// Segment by segment: restart at each event with the states carried over (those held at zero
// set to 0), record every planned instant. False when the integrator stopped (its status and
// message are in `cv`) or a value was not finite (in the run's).
bool run_segments(Run& r, const SamplePlan& plan, Integrator& cv) {
  const auto& segments = r.s.segments;
  Eigen::VectorXd z(static_cast<Eigen::Index>(r.n));
  for (std::size_t k = 0; k < r.n; ++k) z[static_cast<Eigen::Index>(k)] = r.out.initial_states[k] / r.scale;
  std::size_t p = 0;
  for (std::uint32_t i = 0; i < segments.size(); ++i) {
    const ScheduledSegment& seg = segments[i];
    const Configuration& config = *r.seg_config[i];
    StateEquation eq(config, r.signals, Forcing{r.seg_levels[i], true, {}});
    for (std::size_t k = 0; k < r.n; ++k)
      if (config.modes[k] == PortMode::held_at_zero) z[static_cast<Eigen::Index>(k)] = 0.0;
    // Without a storage element there is no ODE; with every state held at zero, none either.
    const bool ode = std::find(config.modes.begin(), config.modes.end(), PortMode::port) != config.modes.end();
    if (ode) cv.start(eq, seg.from, z, seg.to, r.out.rtol, r.atol, r.hmax);
    Eigen::VectorXd zt = z;
    for (; p < plan.times.size() && plan.segment[p] == i; ++p) {
      if (ode && !cv.advance_to(plan.times[p], zt)) break;
      if (!record(r, eq, plan.times[p], i, zt)) break;
    }
    const bool stopped = p < plan.times.size() && plan.segment[p] == i;
    if (ode && !stopped && !cv.advance_to(seg.to, z)) {
      cv.finish();
      return false;
    }
    if (ode) cv.finish();
    if (stopped) return false;
  }
  return true;
}

// Σ_j g_j·U_j.
double bound_of(const InputGains& g, const std::vector<double>& magnitudes) {
  double b = 0.0;
  for (std::size_t j = 0; j < g.size() && j < magnitudes.size(); ++j) b += g[j] * magnitudes[j];
  return b;
}

// The circuit's bounds on every observable and on every element's voltage and current
// (NumericalRun::observable_bound), over the configurations of the segments.
void compute_bounds(Run& r) {
  NumericalRun& out = r.out;
  // U_j in the network stage's input order: the states (u[0] unused without one), then the sources.
  std::vector<double> magnitudes(std::max<std::size_t>(r.n, 1), 0.0);
  for (std::size_t k = 0; k < r.n; ++k) {
    magnitudes[k] = std::fabs(out.initial_states[k]);
    for (double x : out.states[k]) magnitudes[k] = std::max(magnitudes[k], std::fabs(x));
  }
  for (const auto& sig : r.signals) magnitudes.push_back(sig.magnitude());
  magnitudes.push_back(1.0);  // the diodes' unit input, where a configuration has one
  out.observable_bound.assign(out.values.size(), 0.0);
  std::vector<const Configuration*> seen;
  for (const Configuration* cfg : r.seg_config) {
    if (std::find(seen.begin(), seen.end(), cfg) != seen.end()) continue;
    seen.push_back(cfg);
    for (std::size_t i = 0; i < cfg->observable_input_gains.size(); ++i) {
      const auto& [gf, gg] = cfg->observable_input_gains[i];
      double b = bound_of(gf, magnitudes);
      if (!gg.empty()) b *= bound_of(gg, magnitudes);
      out.observable_bound[i] = std::max(out.observable_bound[i], b);
    }
    for (const auto& g : cfg->voltage_gains) out.voltage_bound = std::max(out.voltage_bound, bound_of(g, magnitudes));
    for (const auto& g : cfg->current_gains) out.current_bound = std::max(out.current_bound, bound_of(g, magnitudes));
  }
}

// The run's counters, and the integrator's status and message when it stopped.
void collect(Run& r, const Integrator& cv, const IntegrationStats& shooting, long configurations) {
  NumericalRun& out = r.out;
  out.stats = shooting;
  out.stats.add(cv.totals());
  out.stats.factorizations = configurations;
  if (out.status != IntegrationStatus::ok || cv.status() == IntegrationStatus::ok) return;
  out.status = cv.status();
  out.message = cv.message();
  const std::vector<double> freqs = source_frequencies(r.signals);
  if (out.status == IntegrationStatus::budget_exhausted && !freqs.empty())
    out.message += fmt::format(" (t = 0 to the window's end holds {:.3g} periods of the fastest sinusoid, {}): "
                               "shorten the window, or raise the budget",
                               freqs.back() * r.s.window.to, format_si(freqs.back(), "Hz"));
}

// The states' scale of a run with state events (see prepare_segments): the stored energy's
// swing, and the forced response in each segment's switch positions with every diode blocking
// and with every diode conducting (where those configurations are well posed), so that the
// tolerances know the states' size before the diodes' own configurations are met.
void event_tolerances(Run& r, Configurations& configs, const IntegrateOptions& options, double unit) {
  std::vector<double> state_scale(r.n, 0.0);
  const std::vector<ElementId> storages = r.circuit.storage_elements();
  double energy = 0.0;
  for (std::size_t k = 0; k < r.n && k < r.out.initial_states.size(); ++k) {
    const double x = r.out.initial_states[k] / r.scale;
    energy += 0.5 * r.circuit.element(storages[k]).value * x * x;
    state_scale[k] = std::fabs(x);
  }
  for (std::size_t k = 0; k < r.n; ++k) {
    const double swing = std::sqrt(2.0 * energy / r.circuit.element(storages[k]).value);
    state_scale[k] = std::max(state_scale[k], std::isfinite(swing) ? swing : 0.0);
  }
  for (const ScheduledSegment& seg : r.s.segments) {
    std::vector<double> levels;
    for (const auto& sig : r.signals) levels.push_back(sig.level_at(seg.from));
    for (DiodeState d : {DiodeState::blocking, DiodeState::forward}) {
      SwitchPositions p = seg.positions;
      std::fill(p.diodes.begin(), p.diodes.end(), d);
      std::string why;
      const auto modes = configs.modes_for(p, why);
      const Configuration* cfg = modes ? configs.find(p, *modes, why) : nullptr;
      if (!cfg) continue;
      const std::vector<double> x = forcing_scale(*cfg, levels, r.signals, r.s.window.to, unit);
      for (std::size_t k = 0; k < r.n; ++k) state_scale[k] = std::max(state_scale[k], x[k]);
    }
  }
  r.atol = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(r.n));
  r.out.state_scale.clear();
  r.out.atol.clear();
  for (std::size_t k = 0; k < r.n; ++k) {
    const double atol = options.atol > 0.0 ? options.atol / r.scale
                                           : std::max(r.out.rtol * kAtolFraction * state_scale[k], 1e-280);
    r.atol[static_cast<Eigen::Index>(k)] = atol;
    r.out.state_scale.push_back(state_scale[k] * r.scale);
    r.out.atol.push_back(atol * r.scale);
  }
}

// The run of a circuit with diodes or contacts acting at a zero (state_events.cpp): the states
// and diodes at t = 0− found on this path, then segment by segment of the schedule the march,
// which locates and takes the state events itself. The contacts' own actions carry on across
// the schedule's segments until a timed event of the same switch.
void run_with_events(Run& r, const SamplePlan& plan, Configurations& configs, const AppliedScenario& applied,
                     const IntegrateOptions& options, Integrator& cv, StepBudget& budget, IntegrationStats& shooting) {
  NumericalRun& out = r.out;
  const double unit = 1.0 / r.scale;
  event_tolerances(r, configs, options, unit);
  EventMarch march(applied, configs, r.signals, unit, cv, out.rtol, r.atol, r.hmax);
  auto scales = [&] {
    std::vector<double> s;
    for (double x : out.state_scale) s.push_back(x / r.scale);
    return s;
  };
  march.set_state_scale(scales());
  const bool diodes = !diode_elements(r.circuit).empty();
  SwitchPositions p = positions_before_zero(r.circuit);
  InitialState initial;
  try {
    if (diodes) {
      march.set_rtol(std::max(1e-13, 1e-2 * out.rtol));
      initial = diode_initial_state(applied, r.signals, r.scale, march, p);
      march.set_rtol(out.rtol);
    } else {
      initial = find_initial_state(applied, configs, r.signals, r.scale, budget, out.rtol);
    }
  } catch (const MarchError& e) {
    initial.status = IntegrationStatus::failed;
    initial.message = e.what();
  }
  for (Eigen::Index k = 0; k < initial.values.size(); ++k) out.initial_states.push_back(initial.values[k] * r.scale);
  out.initial_method = initial.method;
  out.initial_note = initial.note;
  out.shooting_iterations = initial.shooting_iterations;
  out.initial_diodes = p.diodes;
  shooting = initial.stats;
  if (initial.status != IntegrationStatus::ok) {
    out.status = cv.status() != IntegrationStatus::ok ? cv.status() : initial.status;
    out.message = "while finding the steady state before t = 0: " +
                  (cv.status() != IntegrationStatus::ok ? cv.message() : initial.message);
    out.initial_states.resize(r.n, 0.0);
    event_tolerances(r, configs, options, unit);
    return;
  }
  event_tolerances(r, configs, options, unit);
  march.set_atol(r.atol);
  march.set_state_scale(scales());
  Eigen::VectorXd z = initial.values;
  std::size_t next = 0;
  try {
    for (std::uint32_t i = 0; i < r.s.segments.size(); ++i) {
      const ScheduledSegment& seg = r.s.segments[i];
      std::vector<double> levels;
      for (const auto& sig : r.signals) levels.push_back(sig.level_at(seg.from));
      const SwitchPositions before = p;
      march.carry_contacts(seg, p);
      if (diodes && (i == 0 || !(p == before))) {
        const Eigen::VectorXd fixed = z;
        std::tie(p, z) = march.settle(p, seg.from, levels, false,
                                      [&](const Configuration&) { return std::optional(fixed); },
                                      fmt::format("at t = {}", format_si(seg.from, "s")));
      }
      std::vector<double> samples;
      for (; next < plan.times.size() && plan.segment[next] == i; ++next) samples.push_back(plan.times[next]);
      const bool done = march.run(seg.from, seg.to, samples, z, p, levels,
                                  [&](StateEquation& eq, double t, const Eigen::VectorXd& zt) {
                                    return record(r, eq, t, i, zt);
                                  });
      if (!done) break;
    }
  } catch (const MarchError& e) {
    out.status = IntegrationStatus::failed;
    out.message = e.what();
  }
  out.events = march.events;
  r.seg_config = march.used;
}

}  // namespace

NumericalRun integrate_network(const Circuit& circuit, const Schedule& schedule, const Scenario& scenario,
                               const std::vector<Observable>& observables, const IntegrateOptions& options) {
  if (!(options.rtol > 0.0) || !std::isfinite(options.rtol))
    throw NumericError(fmt::format("cross-check: the integrator's rtol must be positive, saw {}", options.rtol));
  if (options.max_steps <= 0)
    throw NumericError(fmt::format("cross-check: the step budget must be positive, saw {}", options.max_steps));
  NumericalRun out;
  out.rtol = std::max(options.rtol, kTightestIntegratorRtol);
  out.values.assign(observables.size(), {});
  out.observable_bound.assign(observables.size(), 0.0);  // also when the run stops early
  // The scenario, applied on this path's own account (the engine's application may be faulty).
  const AppliedScenario applied = apply_scenario(circuit, scenario);
  Run r(circuit, schedule, out);
  r.n = circuit.storage_elements().size();
  out.states.assign(r.n, {});
  for (ElementId id : circuit.storage_elements()) out.state_names.push_back(circuit.element(id).name);
  out.state_gain.assign(observables.size(), std::vector<double>(r.n, 0.0));
  r.signals = source_signals(applied, 1.0);
  r.scale = input_scale(applied, r.signals);
  for (auto& sig : r.signals) sig.inv_scale = 1.0 / r.scale;
  out.input_scale = r.scale;
  r.hmax = step_limit(source_frequencies(r.signals));

  // 1. The instants to compare.
  const SamplePlan plan = plan_samples(schedule);
  out.skipped_before_zero = plan.skipped;
  out.grid_samples = plan.grid_samples;
  out.sample_stride = plan.stride;
  out.planned_samples = plan.times.size();

  // 2. The states at t = 0−.
  Configurations configs(circuit, observables);
  StepBudget budget{options.max_steps, 0};
  if (has_state_events(applied)) {
    // 2'. With diodes or contacts at a zero, the run that locates its own events.
    out.times.reserve(plan.times.size());
    Integrator cv(budget, r.n, false);
    IntegrationStats shooting;
    run_with_events(r, plan, configs, applied, options, cv, budget, shooting);
    compute_bounds(r);
    collect(r, cv, shooting, configs.count());
    return out;
  }
  const InitialState initial = find_initial_state(applied, configs, r.signals, r.scale, budget, out.rtol);
  for (Eigen::Index k = 0; k < initial.values.size(); ++k) out.initial_states.push_back(initial.values[k] * r.scale);
  out.initial_method = initial.method;
  out.initial_note = initial.note;
  out.shooting_iterations = initial.shooting_iterations;
  Integrator cv(budget, r.n, false);
  if (initial.status != IntegrationStatus::ok) {
    out.status = initial.status;
    out.message = "while finding the steady state before t = 0: " + initial.message;
    collect(r, cv, initial.stats, configs.count());
    return out;
  }

  // 3. The segments' configurations and tolerances, then the run, then the circuit's bounds.
  out.times.reserve(plan.times.size());
  for (auto& x : out.states) x.reserve(plan.times.size());
  for (auto& v : out.values) v.reserve(plan.times.size());
  prepare_segments(r, configs, options);
  run_segments(r, plan, cv);
  compute_bounds(r);
  collect(r, cv, initial.stats, configs.count());
  return out;
}

}  // namespace netfold
