// The search over a box: the targets of one sweep line times every toleranced value (spec
// v2, "Sweeps"). A grid, then Nelder–Mead inside the box from the best grid maxima.
#include <algorithm>
#include <cmath>
#include <functional>
#include <map>
#include <numeric>

#include <fmt/format.h>

#include "netfold/units.hpp"
#include "search.hpp"

namespace netfold::detail {

namespace {

// Largest search grid; a finer one is refused with a message that says how to coarsen it.
constexpr std::size_t kMaxBoxGrid = 60000;
// Nelder–Mead starts: the grid's global extreme and the next best local extremes.
constexpr std::size_t kRefineStarts = 4;

using Point = std::vector<double>;

// Evaluates the circuit at a point of the box: the line's targets set through the scenario,
// the toleranced values made on a copy of the circuit (circuit_with_values, the one place).
class BoxEvaluator {
 public:
  BoxEvaluator(const Circuit& c, std::vector<Sweep> targets, std::vector<CornerValue> tol, Window window,
               const std::vector<Observable>& observables, const std::vector<RatingCheck>& ratings,
               std::shared_ptr<NetworkCache> cache)
      : c_(c), targets_(std::move(targets)), tol_(std::move(tol)), window_(window), observables_(observables),
        ratings_(ratings), cache_(std::move(cache)) {}

  std::size_t metrics() const { return observables_.size() + ratings_.size(); }

  template <typename F>
  auto with_solution(const Point& x, F&& f) const -> decltype(f(std::declval<const Solution&>())) {
    SolveOptions o;
    o.window = window_;
    for (std::size_t k = 0; k < targets_.size(); ++k) set_sweep_target(o.scenario, targets_[k], x[k]);
    for (const CornerValue& cv : corner(x)) {
      if (cv.is_factor) o.scenario.source_factors.push_back({cv.element, cv.value});
      else o.scenario.element_values.push_back({cv.element, cv.value});
    }
    try {
      if (!o.scenario.changes_values()) return f(solve(c_, o, cache_));
      const Circuit changed = circuit_with_values(c_, o.scenario);
      return f(solve(changed, o));
    } catch (const InputError& e) {
      const Diagnostic* d = e.diagnostics().empty() ? nullptr : &e.diagnostics().front();
      std::string original = d ? d->message : std::string(e.what());
      std::string line = d && d->loc.line > 0 ? fmt::format(" (line {})", d->loc.line) : "";
      worst_fail(c_, where(),
                 fmt::format("the search reaches {}, where the circuit cannot be solved: {}{}; narrow the range",
                             point_text(x), original, line));
    }
  }

  double metric(const Solution& s, std::size_t m) const {
    if (m < observables_.size()) return find_peak(s, observables_[m]).value;
    const RatingCheck& r = ratings_[m - observables_.size()];
    return std::fabs(rating_stress(s, r.element, r.kind).value);
  }

  // Every metric at x, remembered for the refinements (the grid and Nelder–Mead points).
  std::vector<double> all_metrics(const Point& x) const {
    if (auto it = memo_.find(x); it != memo_.end()) return it->second;
    std::vector<double> v = fresh_metrics(x);
    memo_.emplace(x, v);
    return v;
  }

  // Every metric at x, not remembered: Monte Carlo points never repeat.
  std::vector<double> fresh_metrics(const Point& x) const {
    return with_solution(x, [&](const Solution& s) {
      std::vector<double> out(metrics());
      for (std::size_t m = 0; m < out.size(); ++m) out[m] = metric(s, m);
      return out;
    });
  }

  // Every metric at once, remembered by point: the refinements of the worst and the best of each
  // metric start from the same grid cells and often pass the same points.
  double value(const Point& x, std::size_t m) const { return all_metrics(x)[m]; }

  std::vector<CornerValue> corner(const Point& x) const {
    std::vector<CornerValue> out = tol_;
    for (std::size_t k = 0; k < out.size(); ++k) out[k].value = x[targets_.size() + k];
    return out;
  }

  std::string point_text(const Point& x) const {
    std::vector<std::string> parts;
    for (std::size_t k = 0; k < targets_.size(); ++k)
      parts.push_back(fmt::format("{} = {}", targets_[k].text, sweep_argument_text(c_, targets_[k], x[k])));
    for (const CornerValue& cv : corner(x))
      parts.push_back(cv.is_factor ? fmt::format("{} × {:.6g}", cv.name, cv.value)
                                   : fmt::format("{} = {}", cv.name, format_si(cv.value, value_unit(cv), 5)));
    return fmt::format("{}", fmt::join(parts, ", "));
  }

  const char* value_unit(const CornerValue& cv) const {
    const ElementKind kind = c_.element(cv.element).kind;
    return kind == ElementKind::capacitor ? "F" : kind == ElementKind::inductor ? "H" : "Ω";
  }

  SourceLoc where() const {
    if (!targets_.empty()) return targets_.front().loc;
    const Element& e = c_.element(tol_.front().element);
    return e.tolerance ? e.tolerance->loc : e.loc;
  }

 private:
  const Circuit& c_;
  std::vector<Sweep> targets_;
  std::vector<CornerValue> tol_;
  Window window_;
  const std::vector<Observable>& observables_;
  const std::vector<RatingCheck>& ratings_;
  std::shared_ptr<NetworkCache> cache_;
  mutable std::map<Point, std::vector<double>> memo_;
};

std::vector<double> even_axis(double lo, double hi, std::size_t intervals) {
  std::vector<double> a;
  for (std::size_t k = 0; k < intervals; ++k)
    a.push_back(lo + (hi - lo) * static_cast<double>(k) / static_cast<double>(intervals));
  a.push_back(hi);
  return a;
}

// The axes of the grid: each target's `step` (or a default), each toleranced value's bounds in
// kToleranceIntervals. A grid over kMaxBoxGrid points is coarsened where no step was given.
std::vector<std::vector<double>> box_axes(const Circuit& c, const std::vector<Sweep>& targets,
                                          const std::vector<std::pair<double, double>>& tol_bounds,
                                          const Solution& nominal) {
  std::vector<std::vector<double>> axes;
  std::vector<bool> free;
  for (const Sweep& sw : targets) {
    if (targets.size() == 1 || sw.step) {
      axes.push_back(sweep_grid(sw, nominal));
    } else {
      double intervals = kDefaultJointIntervals;
      if (sw.target == SweepTarget::switch_closes)
        intervals = std::max(intervals, std::ceil((sw.to - sw.from) * fastest_source_frequency(c) * 18.0));
      axes.push_back(even_axis(sw.from, sw.to, static_cast<std::size_t>(std::min(intervals, 2000.0))));
    }
    free.push_back(!sw.step);
  }
  for (const auto& [lo, hi] : tol_bounds) {
    axes.push_back(even_axis(lo, hi, kToleranceIntervals));
    free.push_back(true);
  }
  auto total = [&] {
    double n = 1.0;
    for (const auto& a : axes) n *= static_cast<double>(a.size());
    return n;
  };
  for (bool coarsened = true; total() > static_cast<double>(kMaxBoxGrid) && coarsened;) {
    coarsened = false;
    std::size_t widest = axes.size();
    for (std::size_t k = 0; k < axes.size(); ++k)
      if (free[k] && axes[k].size() > 9 && (widest == axes.size() || axes[k].size() > axes[widest].size())) widest = k;
    if (widest == axes.size()) break;
    const std::size_t n = (axes[widest].size() - 1) / 2;
    axes[widest] = even_axis(axes[widest].front(), axes[widest].back(), n);
    coarsened = true;
  }
  if (total() > static_cast<double>(kMaxBoxGrid)) {
    const Sweep& sw = targets.front();
    worst_fail(c, sw.loc,
               fmt::format("the search grid of {} has {:.0f} points, more than {}: give its targets larger steps",
                           sw.text, total(), kMaxBoxGrid));
  }
  return axes;
}

// Mixed-radix index <-> grid coordinates.
std::vector<std::size_t> unflatten(std::size_t index, const std::vector<std::vector<double>>& axes) {
  std::vector<std::size_t> i(axes.size());
  for (std::size_t k = 0; k < axes.size(); ++k) {
    i[k] = index % axes[k].size();
    index /= axes[k].size();
  }
  return i;
}

Point grid_point(std::size_t index, const std::vector<std::vector<double>>& axes) {
  auto i = unflatten(index, axes);
  Point x(axes.size());
  for (std::size_t k = 0; k < axes.size(); ++k) x[k] = axes[k][i[k]];
  return x;
}

// Trapezoid weight of a grid point: the product over the axes of half the neighbouring cells.
double trapezoid_weight(std::size_t index, const std::vector<std::vector<double>>& axes) {
  auto i = unflatten(index, axes);
  double w = 1.0;
  for (std::size_t k = 0; k < axes.size(); ++k) {
    const auto& a = axes[k];
    if (a.size() < 2) continue;
    const double left = i[k] > 0 ? a[i[k]] - a[i[k] - 1] : 0.0;
    const double right = i[k] + 1 < a.size() ? a[i[k] + 1] - a[i[k]] : 0.0;
    w *= 0.5 * (left + right);
  }
  return w;
}

// Grid points at which v (times `sign`) is at least every axis neighbour, best first.
std::vector<std::size_t> local_extremes(const std::vector<double>& v, const std::vector<std::vector<double>>& axes,
                                        double sign) {
  std::vector<std::size_t> found;
  for (std::size_t idx = 0; idx < v.size(); ++idx) {
    auto i = unflatten(idx, axes);
    bool extreme = true;
    std::size_t stride = 1;
    for (std::size_t k = 0; k < axes.size() && extreme; ++k) {
      if (i[k] > 0 && sign * v[idx - stride] > sign * v[idx]) extreme = false;
      if (i[k] + 1 < axes[k].size() && sign * v[idx + stride] > sign * v[idx]) extreme = false;
      stride *= axes[k].size();
    }
    if (extreme) found.push_back(idx);
  }
  std::sort(found.begin(), found.end(), [&](std::size_t a, std::size_t b) { return sign * v[a] > sign * v[b]; });
  if (found.size() > kRefineStarts) found.resize(kRefineStarts);
  return found;
}

// Nelder–Mead maximisation of f inside the box [lo, hi] (J. A. Nelder and R. Mead, Computer
// Journal 7, 1965; coefficients 1, 2, ½, ½), vertices projected onto the box. Starts from x0
// with an edge of one grid cell per axis; stops when the simplex is below 1e-9 of each axis's
// range, or its values agree to 1e-13 and it is below 1e-6, or after 150 + 100·d evaluations.
std::pair<Point, double> nelder_mead_max(const std::function<double(const Point&)>& f, Point x0, const Point& lo,
                                         const Point& hi, const Point& cell) {
  const std::size_t d = x0.size();
  auto clamp = [&](Point x) {
    for (std::size_t k = 0; k < d; ++k) x[k] = std::clamp(x[k], lo[k], hi[k]);
    return x;
  };
  std::vector<Point> xs{x0};
  for (std::size_t k = 0; k < d; ++k) {
    Point x = x0;
    x[k] = x[k] + cell[k] <= hi[k] ? x[k] + cell[k] : x[k] - cell[k];
    xs.push_back(clamp(x));
  }
  std::vector<double> fs;
  for (const auto& x : xs) fs.push_back(f(x));
  std::size_t evals = xs.size();
  const std::size_t max_evals = 150 + 100 * d;
  std::vector<std::size_t> order(d + 1);
  while (evals < max_evals) {
    std::iota(order.begin(), order.end(), std::size_t{0});
    std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return fs[a] > fs[b]; });
    const std::size_t best = order.front(), worst = order.back(), second = order[d - 1];
    double spread = 0.0;
    for (std::size_t j = 0; j <= d; ++j)
      for (std::size_t k = 0; k < d; ++k)
        if (hi[k] > lo[k]) spread = std::max(spread, std::fabs(xs[j][k] - xs[best][k]) / (hi[k] - lo[k]));
    const double fspread = std::fabs(fs[best] - fs[worst]);
    if (spread < 1e-9 || (spread < 1e-6 && fspread <= 1e-13 * std::fabs(fs[best]))) break;
    Point centroid(d, 0.0);
    for (std::size_t j = 0; j <= d; ++j)
      if (j != worst)
        for (std::size_t k = 0; k < d; ++k) centroid[k] += xs[j][k] / static_cast<double>(d);
    auto along = [&](double t) {
      Point x(d);
      for (std::size_t k = 0; k < d; ++k) x[k] = centroid[k] + t * (xs[worst][k] - centroid[k]);
      return clamp(x);
    };
    Point xr = along(-1.0);
    double fr = f(xr);
    ++evals;
    if (fr > fs[best]) {
      Point xe = along(-2.0);
      double fe = f(xe);
      ++evals;
      if (fe > fr) xs[worst] = xe, fs[worst] = fe;
      else xs[worst] = xr, fs[worst] = fr;
    } else if (fr > fs[second]) {
      xs[worst] = xr, fs[worst] = fr;
    } else {
      Point xc = fr > fs[worst] ? along(-0.5) : along(0.5);
      double fc = f(xc);
      ++evals;
      if (fc > std::max(fs[worst], fr)) {
        xs[worst] = xc, fs[worst] = fc;
      } else {
        for (std::size_t j = 0; j <= d; ++j) {
          if (j == best) continue;
          for (std::size_t k = 0; k < d; ++k) xs[j][k] = xs[best][k] + 0.5 * (xs[j][k] - xs[best][k]);
          fs[j] = f(xs[j]);
          ++evals;
        }
      }
    }
  }
  const std::size_t best = static_cast<std::size_t>(std::max_element(fs.begin(), fs.end()) - fs.begin());
  return {xs[best], fs[best]};
}

// The refined worst (sign +1) or best (sign −1) of metric m: the grid's extremes polished.
std::pair<Point, double> refine(const BoxEvaluator& ev, const std::vector<std::vector<double>>& axes,
                                const std::vector<double>& v, std::size_t m, double sign) {
  Point lo, hi;
  for (const auto& a : axes) lo.push_back(a.front()), hi.push_back(a.back());
  std::function<double(const Point&)> f = [&](const Point& x) { return sign * ev.value(x, m); };
  std::pair<Point, double> best{Point{}, -kInfinity};
  for (std::size_t idx : local_extremes(v, axes, sign)) {
    Point x0 = grid_point(idx, axes);
    auto i = unflatten(idx, axes);
    Point cell(axes.size());
    for (std::size_t k = 0; k < axes.size(); ++k) {
      const auto& a = axes[k];
      cell[k] = a.size() < 2 ? 0.0 : (i[k] + 1 < a.size() ? a[i[k] + 1] - a[i[k]] : a[i[k]] - a[i[k] - 1]);
    }
    auto r = axes.empty() ? std::make_pair(x0, f(x0)) : nelder_mead_max(f, x0, lo, hi, cell);
    // The grid point itself stays the answer when the polish does not improve it.
    if (sign * v[idx] >= r.second) r = {x0, sign * v[idx]};
    // Equal maxima (a bridge's half-cycles mirror each other) go to the smaller point, so the
    // argument reported does not hang on the last bits of two equal figures.
    if (best.first.empty()) {
      best = r;
      continue;
    }
    const double tie = 1e-12 * std::max(std::fabs(r.second), std::fabs(best.second));
    if (r.second > best.second + tie || (std::fabs(r.second - best.second) <= tie && r.first < best.first)) best = r;
  }
  return {best.first, sign * best.second};
}

// The grid point of v's least value, and the value.
std::pair<Point, double> least_on_grid(const std::vector<std::vector<double>>& axes, const std::vector<double>& v) {
  const auto idx = static_cast<std::size_t>(std::min_element(v.begin(), v.end()) - v.begin());
  return {grid_point(idx, axes), v[idx]};
}

// [metric][sample]: every metric at `options.samples` points drawn uniformly over the box, each
// coordinate in axis order from one seeded sequence (the same N and seed, the same points).
std::vector<std::vector<double>> sample_box(const BoxEvaluator& ev, const std::vector<std::vector<double>>& axes,
                                            const WorstOptions& options) {
  UniformSampler sampler(options.seed);
  std::vector<std::vector<double>> samples(ev.metrics(), std::vector<double>(options.samples));
  for (std::size_t i = 0; i < options.samples; ++i) {
    Point x(axes.size());
    for (std::size_t k = 0; k < axes.size(); ++k)
      x[k] = axes[k].front() + sampler.next() * (axes[k].back() - axes[k].front());
    auto v = ev.fresh_metrics(x);
    for (std::size_t m = 0; m < v.size(); ++m) samples[m][i] = v[m];
  }
  return samples;
}

}  // namespace

std::vector<CornerValue> toleranced_values(const Circuit& c, std::vector<std::pair<double, double>>* bounds) {
  std::vector<CornerValue> out;
  for (ElementId id = 0; id < c.elements().size(); ++id) {
    const Element& e = c.element(id);
    if (!e.tolerance || !(e.tolerance->upper > e.tolerance->lower)) continue;
    const bool factor = is_independent_source(e.kind);
    const double nominal = factor ? 1.0 : e.value;
    out.push_back({id, e.name, nominal, factor});
    if (bounds) bounds->emplace_back(nominal * (1.0 + e.tolerance->lower), nominal * (1.0 + e.tolerance->upper));
  }
  return out;
}

SweepResult search_box(const Circuit& c, const std::vector<Sweep>& targets, const Solution& nominal,
                       const std::vector<Observable>& observables, const std::vector<RatingCheck>& ratings,
                       const std::shared_ptr<NetworkCache>& cache, const WorstOptions& options) {
  SweepResult result;
  result.box = true;
  result.targets = targets;
  for (const Sweep& sw : targets) validate_sweep(c, sw, nominal);
  result.tolerances = toleranced_values(c, &result.tolerance_bounds);
  if (!targets.empty()) result.sweep = targets.front();
  else result.sweep.text = "tolerances";
  const BoxEvaluator ev(c, targets, result.tolerances, search_window(c, targets, nominal), observables, ratings,
                        cache);
  const auto axes = box_axes(c, targets, result.tolerance_bounds, nominal);
  std::size_t n = 1;
  for (const auto& a : axes) n *= a.size();
  result.grid_points = n;

  std::vector<std::vector<double>> values(ev.metrics(), std::vector<double>(n));
  std::vector<double> weights(n);
  for (std::size_t idx = 0; idx < n; ++idx) {
    auto v = ev.all_metrics(grid_point(idx, axes));
    for (std::size_t m = 0; m < v.size(); ++m) values[m][idx] = v[m];
    weights[idx] = trapezoid_weight(idx, axes);
  }
  const std::size_t n_obs = observables.size(), n_targets = targets.size();
  for (std::size_t m = 0; m < ev.metrics(); ++m) {
    SweepExtreme ex;
    auto [worst_x, worst_v] = refine(ev, axes, values[m], m, 1.0);
    // Where only the ratings are wanted (solve's and check's table), a rating's best is read
    // only to tell a flat figure from a swept one: the grid's least value does that.
    auto [best_x, best_v] = options.scope == WorstScope::ratings_only && m >= observables.size()
                                ? least_on_grid(axes, values[m])
                                : refine(ev, axes, values[m], m, -1.0);
    ex.worst = worst_v;
    ex.best = best_v;
    ex.worst_point.assign(worst_x.begin(), worst_x.begin() + static_cast<std::ptrdiff_t>(n_targets));
    ex.best_point.assign(best_x.begin(), best_x.begin() + static_cast<std::ptrdiff_t>(n_targets));
    ex.worst_at = n_targets ? worst_x[0] : 0.0;
    ex.best_at = n_targets ? best_x[0] : 0.0;
    ex.corner = ev.corner(worst_x);
    ex.best_corner = ev.corner(best_x);
    ev.with_solution(worst_x, [&](const Solution& s) {
      if (m < n_obs) {
        const Observable& obs = observables[m];
        ex.name = obs.text;
        ex.unit = dimension_symbol(obs.dimension());
        ex.t_peak = find_peak(s, obs).time;
        if (obs.kind != ObservableKind::element_power) ex.steady_peak = compute_figures(s, obs).steady_peak;
        ex.distribution.p50 = weighted_percentile(values[m], weights, 0.50);
        ex.distribution.p90 = weighted_percentile(values[m], weights, 0.90);
        ex.distribution.p99 = weighted_percentile(values[m], weights, 0.99);
      } else {
        const RatingCheck& r = ratings[m - n_obs];
        ex.name = fmt::format("{} {}", c.element(r.element).name, r.quantity);
        ex.unit = r.unit;
        ex.where = stress_location(s, r.kind, rating_stress(s, r.element, r.kind));
      }
      return 0;
    });
    if (m < n_obs) {
      // The profile along the first axis, the other values at this observable's worst point.
      std::vector<double> profile;
      for (double x0 : axes.front()) {
        Point x = worst_x;
        x[0] = x0;
        profile.push_back(ev.value(x, m));
      }
      result.observables.push_back(ex);
      result.grid_peaks.push_back(std::move(profile));
    } else {
      result.exceeded_share.push_back(weighted_share_above(values[m], weights, ratings[m - n_obs].rated));
      result.ratings.push_back(ex);
      result.rating_index.push_back(m - n_obs);
    }
  }
  result.grid = axes.front();
  if (n_targets == 2) {
    // The map of a two-target line: each point of the targets' grid, the worst over the rest.
    const std::size_t plane = axes[0].size() * axes[1].size();
    result.map_grid = axes[1];
    for (std::size_t m = 0; m < n_obs; ++m) {
      std::vector<double> map(plane, -kInfinity);
      for (std::size_t idx = 0; idx < n; ++idx) map[idx % plane] = std::max(map[idx % plane], values[m][idx]);
      result.map_peaks.push_back(std::move(map));
    }
  }
  for (const ShareLevel& sl : options.share_levels)
    for (std::size_t m = 0; m < n_obs; ++m)
      if (observables[m].text == sl.observable)
        result.shares.push_back({sl.observable, sl.level, weighted_share_above(values[m], weights, sl.level)});

  if (options.samples > 0) sample_statistics(result, sample_box(ev, axes, options), ratings, options);
  return result;
}

void sample_statistics(SweepResult& result, const std::vector<std::vector<double>>& samples,
                       const std::vector<RatingCheck>& ratings, const WorstOptions& options) {
  const std::size_t n_obs = result.observables.size(), n = options.samples;
  result.samples = n;
  result.seed = options.seed;
  const std::vector<double> equal(n, 1.0);
  const QuantileRanks ranks = quantile_confidence_ranks(n, 0.99, 0.95);
  for (std::size_t m = 0; m < n_obs; ++m) {
    std::vector<double> sorted = samples[m];
    std::sort(sorted.begin(), sorted.end());
    PeakDistribution& d = result.observables[m].distribution;
    d.p50 = weighted_percentile(sorted, equal, 0.50);
    d.p90 = weighted_percentile(sorted, equal, 0.90);
    d.p99 = weighted_percentile(sorted, equal, 0.99);
    d.p99_lo = ranks.lower ? std::optional<double>(sorted[*ranks.lower - 1]) : std::nullopt;
    d.p99_hi = ranks.upper ? std::optional<double>(sorted[*ranks.upper - 1]) : std::nullopt;
  }
  result.exceeded_share.clear();
  for (std::size_t k = 0; k < result.rating_index.size(); ++k)
    result.exceeded_share.push_back(weighted_share_above(samples[n_obs + k], equal, ratings[result.rating_index[k]].rated));
  for (LevelShare& ls : result.shares)
    for (std::size_t m = 0; m < n_obs; ++m)
      if (result.observables[m].name == ls.observable) ls.share = weighted_share_above(samples[m], equal, ls.level);
}

}  // namespace netfold::detail
