// integrate_network (integrate.hpp): the compared instants, the input scale, the state at t = 0−
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
#include "verify/initial_state.hpp"
#include "verify/state_equation.hpp"

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

SamplePlan plan_samples(const Solution& s) {
  SamplePlan plan;
  const Window& w = s.window();
  const double res = s.resolution();
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
  const auto& segs = s.segments();
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

// S: a power of two near the largest magnitude of the sources and of a given initial state, so
// that the run's numbers are of order 1 (exact scaling: the network is linear).
double input_scale(const Solution& s, const std::vector<SourceSignal>& signals) {
  double m = 0.0;
  for (const auto& sig : signals) m = std::max(m, sig.magnitude());
  if (const ElementId storage = storage_element(s.circuit()); storage != kNone) {
    const auto initial = given_initial_state(s, storage);
    if (initial) m = std::max(m, std::fabs(*initial));
  }
  if (!(m > 0.0) || !std::isfinite(m)) return 1.0;
  return std::ldexp(1.0, std::clamp(std::ilogb(m), -1000, 1000));
}

// The run's shared state while it steps through the segments.
struct Run {
  Run(const Solution& schedule, NumericalRun& result) : s(schedule), out(result) {}
  const Solution& s;
  NumericalRun& out;
  std::vector<SourceSignal> signals;
  double scale = 1.0;
  ElementId storage = kNone;
  double storage_value = 1.0;
  double hmax = 0.0;
  std::vector<PortMode> seg_mode;  // the numerical path's own reading of each segment's topology
  std::vector<const Configuration*> seg_config;
  std::vector<std::vector<double>> seg_levels;
};

// Each segment's configuration and levels, the state's scale through the MNA, and atol.
void prepare_segments(Run& r, Configurations& configs, const IntegrateOptions& options) {
  const bool has_storage = r.storage != kNone;
  double state_scale = std::fabs(r.out.initial_state) / r.scale;
  for (const auto& seg : r.s.segments()) {
    const std::string where =
        fmt::format("segment {} ({} .. {})", seg.number, format_si(seg.from, "s"), format_si(seg.to, "s"));
    const PortMode mode = has_storage ? configs.mode_for(seg.positions, where) : PortMode::port;
    r.seg_mode.push_back(mode);
    r.seg_config.push_back(&configs.get(seg.positions, mode, where));
    std::vector<double> levels;
    for (const auto& sig : r.signals) levels.push_back(sig.level_at(seg.from));
    if (has_storage && mode == PortMode::port)
      state_scale = std::max(state_scale, forcing_scale(sensitivities(*r.seg_config.back(), r.storage_value), levels,
                                                        r.signals, r.s.window().to));
    r.seg_levels.push_back(std::move(levels));
  }
  r.out.state_scale = state_scale * r.scale;
  r.out.atol = options.atol > 0.0 ? options.atol
                                   : std::max(r.out.rtol * kAtolFraction * state_scale, 1e-280) * r.scale;
}

// Evaluates every observable at (t, z) (z the state in units of S) and appends the row; false,
// with the run's status set, when a value is not finite.
bool record(Run& r, StateEquation& eq, double t, std::uint32_t seg, double z) {
  const Configuration& cfg = eq.config();
  const Eigen::VectorXd u = eq.inputs(t, z);
  const Eigen::VectorXd xs = cfg.unknowns(u);
  NumericalRun& out = r.out;
  const std::size_t n = cfg.observable_forms.size();
  std::vector<double> row(n), gain(n);
  bool finite = std::isfinite(z);
  for (std::size_t i = 0; i < n; ++i) {
    const auto& [f, g] = cfg.observable_forms[i];
    const auto [df, dg] = cfg.observable_gains[i];
    row[i] = evaluate(f, xs, u) * r.scale;
    gain[i] = std::fabs(df);
    if (g) {
      const double gi = evaluate(*g, xs, u) * r.scale;
      gain[i] = std::fabs(row[i] * dg + gi * df);  // ∂(v·i)/∂x
      row[i] *= gi;
    }
    finite = finite && std::isfinite(row[i]);
  }
  if (!finite) {
    out.status = IntegrationStatus::failed;
    out.message = fmt::format("the numerical solution is not finite at t = {} (state {:.6g})", format_si(t, "s"),
                              z * r.scale);
    return false;
  }
  out.times.push_back(t);
  out.segment_of.push_back(seg);
  out.state.push_back(z * r.scale);
  for (std::size_t i = 0; i < n; ++i) {
    out.values[i].push_back(row[i]);
    out.state_gain[i] = std::max(out.state_gain[i], gain[i]);
  }
  return true;
}

// Segment by segment: restart at each event with the state carried over, record every planned
// instant. False when the integrator stopped (its status and message are in `cv`) or a value
// was not finite (in the run's).
bool run_segments(Run& r, const SamplePlan& plan, Integrator& cv) {
  const auto& segments = r.s.segments();
  const bool has_storage = r.storage != kNone;
  double z = r.out.initial_state / r.scale;
  std::size_t p = 0;
  for (std::uint32_t i = 0; i < segments.size(); ++i) {
    const Segment& seg = segments[i];
    StateEquation eq(*r.seg_config[i], r.storage_value, r.signals, Forcing{r.seg_levels[i], true, {}});
    // Without a storage element, or with an inductor held at zero, there is no ODE: the state is 0.
    const bool ode = has_storage && r.seg_mode[i] == PortMode::port;
    if (!ode) z = 0.0;
    if (ode) cv.start(eq, seg.from, z, seg.to, r.out.rtol, r.out.atol / r.scale, r.hmax);
    for (; p < plan.times.size() && plan.segment[p] == i; ++p) {
      double zt = 0.0;
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
  std::vector<double> magnitudes{std::fabs(out.initial_state)};
  for (double x : out.state) magnitudes[0] = std::max(magnitudes[0], std::fabs(x));
  for (const auto& sig : r.signals) magnitudes.push_back(sig.magnitude());
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
                               freqs.back() * r.s.window().to, format_si(freqs.back(), "Hz"));
}

}  // namespace

NumericalRun integrate_network(const Solution& s, const IntegrateOptions& options) {
  if (!(options.rtol > 0.0) || !std::isfinite(options.rtol))
    throw NumericError(fmt::format("cross-check: the integrator's rtol must be positive, saw {}", options.rtol));
  if (options.max_steps <= 0)
    throw NumericError(fmt::format("cross-check: the step budget must be positive, saw {}", options.max_steps));
  NumericalRun out;
  out.rtol = std::max(options.rtol, kTightestIntegratorRtol);
  out.values.assign(s.observables().size(), {});
  out.state_gain.assign(s.observables().size(), 0.0);
  Run r(s, out);
  r.signals = source_signals(s, 1.0);
  r.scale = input_scale(s, r.signals);
  for (auto& sig : r.signals) sig.inv_scale = 1.0 / r.scale;
  out.input_scale = r.scale;
  r.hmax = step_limit(source_frequencies(r.signals));
  r.storage = storage_element(s.circuit());
  if (r.storage != kNone) r.storage_value = s.circuit().element(r.storage).value;

  // 1. The instants to compare.
  const SamplePlan plan = plan_samples(s);
  out.skipped_before_zero = plan.skipped;
  out.grid_samples = plan.grid_samples;
  out.sample_stride = plan.stride;
  out.planned_samples = plan.times.size();

  // 2. The state at t = 0−.
  Configurations configs(s.circuit(), s.observables());
  StepBudget budget{options.max_steps, 0};
  const InitialState initial = find_initial_state(s, configs, r.signals, r.scale, budget, out.rtol);
  out.initial_state = initial.value * r.scale;
  out.initial_method = initial.method;
  out.initial_note = initial.note;
  Integrator cv(budget, false);
  if (initial.status != IntegrationStatus::ok) {
    out.status = initial.status;
    out.message = "while finding the steady state before t = 0: " + initial.message;
    collect(r, cv, initial.stats, configs.count());
    return out;
  }

  // 3. The segments' configurations and tolerances, then the run, then the circuit's bounds.
  out.times.reserve(plan.times.size());
  out.state.reserve(plan.times.size());
  for (auto& v : out.values) v.reserve(plan.times.size());
  prepare_segments(r, configs, options);
  run_segments(r, plan, cv);
  compute_bounds(r);
  collect(r, cv, initial.stats, configs.count());
  return out;
}

}  // namespace netfold
