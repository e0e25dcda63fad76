#include "netfold/worst.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include <fmt/ranges.h>

#include <fmt/format.h>
#include <fmt/ostream.h>
#include <nlohmann/json.hpp>

#include "netfold/units.hpp"
#include "search.hpp"

namespace netfold {

namespace detail {
void worst_fail(const Circuit& c, SourceLoc loc, std::string message) {
  throw InputError(c.diagnostic(loc, std::move(message)));
}
}  // namespace detail

namespace {

using detail::worst_fail;
constexpr double kRadToDeg = 180.0 / std::numbers::pi;

[[noreturn]] void fail(const Circuit& c, SourceLoc loc, std::string message) { worst_fail(c, loc, std::move(message)); }

// The time of a switch's first `closes` event and its neighbours, which bound a closes sweep.
struct ClosesSlot {
  double nominal = 0.0;
  double previous = -kInfinity;
  double next = kInfinity;
};

ClosesSlot closes_slot(const Element& e) {
  ClosesSlot slot;
  for (std::size_t k = 0; k < e.events.size(); ++k) {
    if (!e.events[k].closes) continue;
    slot.nominal = e.events[k].time;
    if (k > 0) slot.previous = e.events[k - 1].time;
    if (k + 1 < e.events.size()) slot.next = e.events[k + 1].time;
    break;
  }
  return slot;
}

}  // namespace

// A sweep range the circuit cannot take is refused at the sweep's line. A closing time at or
// past the end of a declared window would leave the switch open for the whole window at part
// of the range, and that part would be scored as "never closes": refused rather than scored.
// (A default window is lengthened instead; see search_sweep.)
void detail::validate_sweep(const Circuit& c, const Sweep& sw, const Solution& nominal) {
  if (!(sw.from < sw.to)) fail(c, sw.loc, fmt::format("the sweep of {} needs FROM < TO", sw.text));
  if (sw.step && !(*sw.step > 0.0)) fail(c, sw.loc, fmt::format("the sweep of {} needs a positive step", sw.text));
  if (sw.target != SweepTarget::switch_closes) return;
  ClosesSlot slot = closes_slot(c.element(sw.element));
  if (sw.from < 0.0 || sw.from <= slot.previous || sw.to >= slot.next)
    fail(c, sw.loc,
         fmt::format("the sweep moves {}'s first 'closes' from {} to {}, but it must stay after {} and before {} "
                     "(the switch's neighbouring events, and t = 0); narrow the range",
                     c.element(sw.element).name, format_si(sw.from, "s"), format_si(sw.to, "s"),
                     format_si(std::max(0.0, slot.previous), "s"), format_si(slot.next, "s")));
  const Window& w = nominal.window();
  if (!nominal.window_is_default() && sw.to >= w.to)
    fail(c, sw.loc,
         fmt::format("the sweep moves {}'s first 'closes' up to {}, at or past the end of the declared window "
                     "({} .. {}): from {} on, {} would not close within the window; end the range before {} or "
                     "lengthen the window",
                     c.element(sw.element).name, format_si(sw.to, "s"), format_si(w.from, "s"), format_si(w.to, "s"),
                     format_si(w.to, "s"), c.element(sw.element).name, format_si(w.to, "s")));
}

Window detail::search_window(const Circuit& c, const std::vector<Sweep>& targets, const Solution& nominal) {
  Window window = nominal.window();
  if (!nominal.window_is_default()) return window;
  double later = 0.0;
  for (const Sweep& sw : targets)
    if (sw.target == SweepTarget::switch_closes)
      later = std::max(later, sw.to - closes_slot(c.element(sw.element)).nominal);
  window.to += later;
  return window;
}


namespace {

SolveOptions options_for(const Sweep& sw, const Window& window, double x) {
  SolveOptions o;
  o.window = window;
  o.scenario = scenario_at(sw, x);
  return o;
}

// Runs f (a solve, a measure) at one argument of a sweep. A circuit that solves at its declared
// values but not at this argument is the sweep's doing: the error is given at the sweep's line,
// with the argument and the original message (which names the element at fault).
template <typename F>
auto at_argument(const Circuit& c, const Sweep& sw, double x, F&& f) -> decltype(f()) {
  try {
    return f();
  } catch (const InputError& e) {
    const Diagnostic* d = e.diagnostics().empty() ? nullptr : &e.diagnostics().front();
    std::string original = d ? d->message : std::string(e.what());
    std::string line = d && d->loc.line > 0 ? fmt::format(" (line {})", d->loc.line) : "";
    fail(c, sw.loc,
         fmt::format("the sweep of {} reaches {}, where the circuit cannot be solved: {}{}; narrow the range",
                     sw.text, sweep_argument_text(c, sw, x), original, line));
  }
}

}  // namespace

std::string sweep_argument_text(const Circuit& c, const Sweep& sw, double x, int digits) {
  switch (sw.target) {
    case SweepTarget::source_phase: return format_si(x * kRadToDeg, "°", digits);
    case SweepTarget::storage_initial:
      return format_si(x, c.element(sw.element).kind == ElementKind::capacitor ? "V" : "A", digits);
    case SweepTarget::switch_closes: return format_si(x, "s", digits);
  }
  return format_si(x, "", digits);
}

const char* sweep_argument_unit(const Circuit& c, const Sweep& sw) {
  switch (sw.target) {
    case SweepTarget::source_phase: return "rad";
    case SweepTarget::storage_initial: return c.element(sw.element).kind == ElementKind::capacitor ? "V" : "A";
    case SweepTarget::switch_closes: return "s";
  }
  return "";
}

std::vector<double> sweep_grid(const Sweep& sw, const Solution& nominal) {
  double range = sw.to - sw.from;
  double intervals = kDefaultSweepIntervals;
  if (sw.step) {
    intervals = std::ceil(range / *sw.step - 1e-9);
  } else if (sw.target == SweepTarget::switch_closes) {
    // The peak varies with the closing instant at twice the supply frequency: 36 points a period.
    intervals = std::max(intervals, std::ceil(range * fastest_source_frequency(nominal.circuit()) * 36.0));
  }
  intervals = std::clamp(intervals, 1.0, 100000.0);
  auto n = static_cast<std::size_t>(intervals);
  std::vector<double> grid;
  grid.reserve(n + 1);
  double dx = sw.step ? *sw.step : range / static_cast<double>(n);
  for (std::size_t k = 0; k < n; ++k) grid.push_back(sw.from + static_cast<double>(k) * dx);
  grid.push_back(sw.to);
  return grid;
}

namespace {

// One sweep's search: the metrics are the peak |y| of each observable (m < n_obs), then the
// stress of each rating.
class SweepSearch {
 public:
  SweepSearch(const Circuit& c, const Sweep& sw, const Window& window, const std::vector<Observable>& observables,
              const std::vector<RatingCheck>& ratings, std::shared_ptr<NetworkCache> cache)
      : c_(c), sw_(sw), window_(window), observables_(observables), ratings_(ratings), cache_(std::move(cache)) {}

  std::size_t metrics() const { return observables_.size() + ratings_.size(); }

  Solution solve_at(double x) const {
    return at_argument(c_, sw_, x, [&] { return solve(c_, options_for(sw_, window_, x), cache_); });
  }

  Peak metric(const Solution& s, double x, std::size_t m) const {
    return at_argument(c_, sw_, x, [&]() -> Peak {
      if (m < observables_.size()) return find_peak(s, observables_[m]);
      const RatingCheck& r = ratings_[m - observables_.size()];
      return {std::fabs(rating_stress(s, r.element, r.kind).value), 0.0};
    });
  }

  double value(double x, std::size_t m) const { return metric(solve_at(x), x, m).value; }

  // The worst (largest) and best (smallest) of metric m: every grid point that is a local
  // extreme (ends included) is refined by golden-section search within its neighbours.
  // Every refined extreme (its argument and value) is added to `refined`: with the grid they
  // are the points of the refined curve, monotone between neighbours (refined_curve).
  SweepExtreme extreme(const std::vector<double>& grid, const std::vector<double>& v, std::size_t m,
                       std::vector<std::pair<double, double>>& refined) const {
    const std::size_t n = grid.size();
    const double tol = 1e-9 * (sw_.to - sw_.from);
    SweepExtreme ex;
    std::size_t imax = 0, imin = 0;
    for (std::size_t k = 0; k < n; ++k) {
      if (v[k] > v[imax]) imax = k;
      if (v[k] < v[imin]) imin = k;
    }
    ex.worst = v[imax];
    ex.worst_at = grid[imax];
    ex.best = v[imin];
    ex.best_at = grid[imin];
    if (n < 2) return ex;
    for (std::size_t k = 0; k < n; ++k) {
      const double a = grid[k == 0 ? 0 : k - 1], b = grid[k + 1 == n ? k : k + 1];
      if ((k == 0 || v[k] >= v[k - 1]) && (k + 1 == n || v[k] >= v[k + 1])) {
        auto [x, fx] = detail::golden_maximum([&](double xx) { return value(xx, m); }, a, b, tol);
        refined.emplace_back(x, fx);
        if (fx > ex.worst) {
          ex.worst = fx;
          ex.worst_at = x;
        }
      }
      if ((k == 0 || v[k] <= v[k - 1]) && (k + 1 == n || v[k] <= v[k + 1])) {
        auto [x, fx] = detail::golden_maximum([&](double xx) { return -value(xx, m); }, a, b, tol);
        refined.emplace_back(x, -fx);
        if (-fx < ex.best) {
          ex.best = -fx;
          ex.best_at = x;
        }
      }
    }
    return ex;
  }

 private:
  const Circuit& c_;
  const Sweep& sw_;
  Window window_;
  const std::vector<Observable>& observables_;
  const std::vector<RatingCheck>& ratings_;
  std::shared_ptr<NetworkCache> cache_;
};

// The refined curve of a metric: the grid's points and every refined extreme, in order of the
// argument. Between neighbours the curve is monotone (each local extreme the grid brackets is
// one of the points), so its crossings with a level are found one per piece.
struct RefinedCurve {
  std::vector<double> x, y;
};

RefinedCurve refined_curve(const std::vector<double>& grid, const std::vector<double>& v,
                           std::vector<std::pair<double, double>> refined) {
  for (std::size_t k = 0; k < grid.size(); ++k) refined.emplace_back(grid[k], v[k]);
  std::stable_sort(refined.begin(), refined.end(), [](const auto& a, const auto& b) { return a.first < b.first; });
  RefinedCurve curve;
  for (const auto& [x, y] : refined) {
    if (!curve.x.empty() && x == curve.x.back()) continue;
    curve.x.push_back(x);
    curve.y.push_back(y);
  }
  return curve;
}

SweepResult search_sweep(const Circuit& c, const Sweep& sw, const Solution& nominal,
                         const std::vector<Observable>& observables, const std::vector<RatingCheck>& ratings,
                         const std::shared_ptr<NetworkCache>& cache, const WorstOptions& options) {
  detail::validate_sweep(c, sw, nominal);
  SweepResult result;
  result.sweep = sw;
  result.targets = {sw};
  SweepSearch search(c, sw, detail::search_window(c, {sw}, nominal), observables, ratings, cache);
  const std::size_t n_obs = observables.size();

  result.grid = sweep_grid(sw, nominal);
  const std::size_t n_grid = result.grid.size();
  result.grid_points = n_grid;
  std::vector<std::vector<double>> values(search.metrics(), std::vector<double>(n_grid));
  for (std::size_t k = 0; k < n_grid; ++k) {
    Solution s = search.solve_at(result.grid[k]);
    for (std::size_t m = 0; m < search.metrics(); ++m) values[m][k] = search.metric(s, result.grid[k], m).value;
  }
  // The distribution of the peak and the exceeded shares: from the crossings of the solved
  // peak with each level along the refined curve (exact up to an excursion the grid does not
  // bracket), not from counting or interpolating grid points.
  std::vector<RefinedCurve> curves;
  auto percentile = [&](std::size_t m, double q) {
    return function_percentile([&](double x) { return search.value(x, m); }, curves[m].x, curves[m].y, q);
  };
  auto share_above = [&](std::size_t m, double level) {
    if (curves[m].x.size() < 2) return curves[m].y.front() > level ? 1.0 : 0.0;
    return function_share_above([&](double x) { return search.value(x, m); }, curves[m].x, curves[m].y, level);
  };
  for (std::size_t m = 0; m < search.metrics(); ++m) {
    std::vector<std::pair<double, double>> refined;
    SweepExtreme ex = search.extreme(result.grid, values[m], m, refined);
    curves.push_back(refined_curve(result.grid, values[m], std::move(refined)));
    ex.worst_point = {ex.worst_at};
    ex.best_point = {ex.best_at};
    Solution at_worst = search.solve_at(ex.worst_at);
    if (m < n_obs) {
      const Observable& obs = observables[m];
      ex.name = obs.text;
      ex.unit = dimension_symbol(obs.dimension());
      ex.t_peak = search.metric(at_worst, ex.worst_at, m).time;
      if (obs.kind != ObservableKind::element_power) ex.steady_peak = compute_figures(at_worst, obs).steady_peak;
      if (curves[m].x.size() < 2) {
        ex.distribution.p50 = ex.distribution.p90 = ex.distribution.p99 = ex.worst;
      } else {
        ex.distribution.p50 = percentile(m, 0.50);
        ex.distribution.p90 = percentile(m, 0.90);
        ex.distribution.p99 = percentile(m, 0.99);
      }
      result.observables.push_back(ex);
      result.grid_peaks.push_back(values[m]);
    } else {
      const RatingCheck& r = ratings[m - n_obs];
      ex.name = fmt::format("{} {}", c.element(r.element).name, r.quantity);
      ex.unit = r.unit;
      ex.where = stress_location(at_worst, r.kind, rating_stress(at_worst, r.element, r.kind));
      result.ratings.push_back(ex);
      result.rating_index.push_back(m - n_obs);
      result.exceeded_share.push_back(share_above(m, r.rated));
    }
  }
  for (const ShareLevel& sl : options.share_levels)
    for (std::size_t m = 0; m < n_obs; ++m)
      if (observables[m].text == sl.observable)
        result.shares.push_back({sl.observable, sl.level, share_above(m, sl.level)});
  if (options.samples > 0) {
    UniformSampler sampler(options.seed);
    std::vector<std::vector<double>> samples(search.metrics(), std::vector<double>(options.samples));
    for (std::size_t i = 0; i < options.samples; ++i) {
      const double x = sw.from + sampler.next() * (sw.to - sw.from);
      Solution s = search.solve_at(x);
      for (std::size_t m = 0; m < search.metrics(); ++m) samples[m][i] = search.metric(s, x, m).value;
    }
    detail::sample_statistics(result, samples, ratings, options);
  }
  return result;
}

std::string point_argument_text(const Circuit& c, const SweepResult& res, const SweepExtreme& ex) {
  std::vector<std::string> parts;
  for (std::size_t k = 0; k < res.targets.size() && k < ex.worst_point.size(); ++k)
    parts.push_back(fmt::format("{} = {}", res.targets[k].text, sweep_argument_text(c, res.targets[k], ex.worst_point[k])));
  for (const CornerValue& cv : ex.corner) {
    const ElementKind kind = c.element(cv.element).kind;
    const char* unit = kind == ElementKind::capacitor ? "F" : kind == ElementKind::inductor ? "H" : "Ω";
    parts.push_back(cv.is_factor ? fmt::format("{} × {:.4g}", cv.name, cv.value)
                                 : fmt::format("{} = {}", cv.name, format_si(cv.value, unit, 5)));
  }
  return fmt::format("{}", fmt::join(parts, ", "));
}

}  // namespace

std::vector<std::vector<Sweep>> sweep_lines(const std::vector<Sweep>& sweeps) {
  std::vector<std::vector<Sweep>> lines;
  for (std::size_t k = 0; k < sweeps.size(); ++k) {
    if (k == 0 || sweeps[k].line != sweeps[k - 1].line) lines.emplace_back();
    lines.back().push_back(sweeps[k]);
  }
  return lines;
}

bool has_tolerances(const Circuit& c) { return !detail::toleranced_values(c, nullptr).empty(); }

WorstReport find_worst_case(const Circuit& c, const std::vector<Sweep>& sweeps, WorstScope scope) {
  WorstOptions o;
  o.scope = scope;
  return find_worst_case(c, sweeps, o);
}

WorstReport find_worst_case(const Circuit& c, const std::vector<Sweep>& sweeps, const WorstOptions& options) {
  auto cache = std::make_shared<NetworkCache>(c);
  Solution nominal = solve(c, {}, cache);
  WorstReport report;
  report.ratings = check_ratings(nominal);
  const std::vector<Observable> none;
  const auto& observables = options.scope == WorstScope::everything ? nominal.observables() : none;
  const bool tolerances = has_tolerances(c);
  auto lines = sweep_lines(sweeps);
  // With tolerances and no sweep, the tolerance box alone is searched (spec v2: every
  // worst-case search spans the toleranced values).
  if (lines.empty() && tolerances) lines.emplace_back();
  for (const auto& line : lines)
    report.sweeps.push_back(line.size() == 1 && !tolerances
                                ? search_sweep(c, line.front(), nominal, observables, report.ratings, cache, options)
                                : detail::search_box(c, line, nominal, observables, report.ratings, cache, options));

  // Ratings: the worst over every sweep is what is rated.
  for (const auto& res : report.sweeps)
    for (std::size_t k = 0; k < res.ratings.size(); ++k) {
      RatingCheck& r = report.ratings[res.rating_index[k]];
      const SweepExtreme& ex = res.ratings[k];
      if (r.worst_case && !(ex.worst > r.actual)) continue;
      r.actual = ex.worst;
      r.worst_case = true;
      r.where = ex.where;
      // A figure the sweep does not change (a steady-state power) has no worst argument to name.
      const bool flat = ex.best >= ex.worst - 1e-9 * std::fabs(ex.worst);
      r.worst_argument = flat ? fmt::format("the same at every {}", res.sweep.text)
                              : fmt::format("worst case at {}", point_argument_text(c, res, ex));
      r.worst_target = res.sweep.text;
      r.worst_at = res.targets.empty() ? std::nullopt : std::optional<double>(ex.worst_at);
      r.worst_at_unit = res.targets.empty() ? "" : sweep_argument_unit(c, res.sweep);
    }
  for (auto& r : report.ratings) judge_rating(r, r.actual);
  return report;
}

std::vector<RatingCheck> worst_case_ratings(const Circuit& c, const std::vector<Sweep>& sweeps) {
  bool rated = false;
  for (const auto& e : c.elements()) rated |= !e.ratings.empty();
  if ((sweeps.empty() && !has_tolerances(c)) || !rated) return check_ratings(solve(c));
  return find_worst_case(c, sweeps, WorstScope::ratings_only).ratings;
}

}  // namespace netfold
