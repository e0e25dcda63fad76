#include "netfold/worst.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include <fmt/format.h>
#include <fmt/ostream.h>
#include <nlohmann/json.hpp>

#include "report/json_fields.hpp"
#include "netfold/units.hpp"

namespace netfold {

namespace {

constexpr double kRadToDeg = 180.0 / std::numbers::pi;

[[noreturn]] void fail(const Circuit& c, SourceLoc loc, std::string message) {
  throw InputError(c.diagnostic(loc, std::move(message)));
}

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

// A sweep range the circuit cannot take is refused at the sweep's line. A closing time at or
// past the end of a declared window would leave the switch open for the whole window at part
// of the range, and that part would be scored as "never closes": refused rather than scored.
// (A default window is lengthened instead; see search_sweep.)
void validate_sweep(const Circuit& c, const Sweep& sw, const Solution& nominal) {
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

double fastest_frequency(const Circuit& c) {
  double f = 0.0;
  for (const auto& e : c.elements())
    for (const auto& s : e.waveform.sinusoids) f = std::max(f, s.frequency);
  return f;
}

// Golden-section search for a local maximum of f in [a, b] (J. Kiefer, 1953), to `tol`.
template <typename F>
std::pair<double, double> golden_maximum(F&& f, double a, double b, double tol) {
  const double inv_phi = (std::sqrt(5.0) - 1.0) / 2.0;
  double c = b - inv_phi * (b - a), d = a + inv_phi * (b - a);
  double fc = f(c), fd = f(d);
  while (b - a > tol) {
    if (fc >= fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - inv_phi * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + inv_phi * (b - a);
      fd = f(d);
    }
  }
  return fc >= fd ? std::make_pair(c, fc) : std::make_pair(d, fd);
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
    intervals = std::max(intervals, std::ceil(range * fastest_frequency(nominal.circuit()) * 36.0));
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
  SweepExtreme extreme(const std::vector<double>& grid, const std::vector<double>& v, std::size_t m) const {
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
        auto [x, fx] = golden_maximum([&](double xx) { return value(xx, m); }, a, b, tol);
        if (fx > ex.worst) {
          ex.worst = fx;
          ex.worst_at = x;
        }
      }
      if ((k == 0 || v[k] <= v[k - 1]) && (k + 1 == n || v[k] <= v[k + 1])) {
        auto [x, fx] = golden_maximum([&](double xx) { return -value(xx, m); }, a, b, tol);
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

SweepResult search_sweep(const Circuit& c, const Sweep& sw, const Solution& nominal,
                         const std::vector<Observable>& observables, const std::vector<RatingCheck>& ratings,
                         const std::shared_ptr<NetworkCache>& cache) {
  validate_sweep(c, sw, nominal);
  SweepResult result;
  result.sweep = sw;
  Window window = nominal.window();
  if (sw.target == SweepTarget::switch_closes && nominal.window_is_default())
    window.to += std::max(0.0, sw.to - closes_slot(c.element(sw.element)).nominal);
  SweepSearch search(c, sw, window, observables, ratings, cache);
  const std::size_t n_obs = observables.size();

  result.grid = sweep_grid(sw, nominal);
  const std::size_t n_grid = result.grid.size();
  std::vector<std::vector<double>> values(search.metrics(), std::vector<double>(n_grid));
  for (std::size_t k = 0; k < n_grid; ++k) {
    Solution s = search.solve_at(result.grid[k]);
    for (std::size_t m = 0; m < search.metrics(); ++m) values[m][k] = search.metric(s, result.grid[k], m).value;
  }
  for (std::size_t m = 0; m < search.metrics(); ++m) {
    SweepExtreme ex = search.extreme(result.grid, values[m], m);
    Solution at_worst = search.solve_at(ex.worst_at);
    if (m < n_obs) {
      const Observable& obs = observables[m];
      ex.name = obs.text;
      ex.unit = dimension_symbol(obs.dimension());
      ex.t_peak = search.metric(at_worst, ex.worst_at, m).time;
      if (obs.kind != ObservableKind::element_power) ex.steady_peak = compute_figures(at_worst, obs).steady_peak;
      result.observables.push_back(ex);
      result.grid_peaks.push_back(values[m]);
    } else {
      const RatingCheck& r = ratings[m - n_obs];
      ex.name = fmt::format("{} {}", c.element(r.element).name, r.quantity);
      ex.unit = r.unit;
      ex.where = stress_location(at_worst, r.kind, rating_stress(at_worst, r.element, r.kind));
      result.ratings.push_back(ex);
      result.rating_index.push_back(m - n_obs);
    }
  }
  return result;
}

}  // namespace

WorstReport find_worst_case(const Circuit& c, const std::vector<Sweep>& sweeps, WorstScope scope) {
  auto cache = std::make_shared<NetworkCache>(c);
  Solution nominal = solve(c, {}, cache);
  WorstReport report;
  report.ratings = check_ratings(nominal);
  const std::vector<Observable> none;
  const auto& observables = scope == WorstScope::everything ? nominal.observables() : none;
  for (const Sweep& sw : sweeps)
    report.sweeps.push_back(search_sweep(c, sw, nominal, observables, report.ratings, cache));

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
                              : fmt::format("worst case at {} = {}", res.sweep.text,
                                            sweep_argument_text(c, res.sweep, ex.worst_at));
      r.worst_target = res.sweep.text;
      r.worst_at = ex.worst_at;
      r.worst_at_unit = sweep_argument_unit(c, res.sweep);
    }
  for (auto& r : report.ratings) judge_rating(r, r.actual);
  return report;
}

std::vector<RatingCheck> worst_case_ratings(const Circuit& c, const std::vector<Sweep>& sweeps) {
  bool rated = false;
  for (const auto& e : c.elements()) rated |= !e.ratings.empty();
  if (sweeps.empty() || !rated) return check_ratings(solve(c));
  return find_worst_case(c, sweeps, WorstScope::ratings_only).ratings;
}

void write_worst_text(std::ostream& out, const WorstReport& report, const Solution& nominal) {
  const Circuit& c = nominal.circuit();
  fmt::print(out, "netfold worst: {}{}\n", c.title().empty() ? c.source().path() : c.title(),
             c.title().empty() ? "" : fmt::format("  ({})", c.source().path()));
  if (report.sweeps.empty())
    fmt::print(out, "no sweep declared: add 'sweep TARGET FROM .. TO' to the file or give --sweep TARGET=FROM..TO\n");
  for (const auto& res : report.sweeps) {
    const Sweep& sw = res.sweep;
    fmt::print(out, "\nsweep {} from {} to {} ({} grid points, worst and best refined to 1e-9 of the range)\n",
               sw.text, sweep_argument_text(c, sw, sw.from), sweep_argument_text(c, sw, sw.to), res.grid.size());
    fmt::print(out, "  {:<16} {:>12} {:>12} {:>11}   {:>12} {:>12}   {:>12}\n", "observable", "worst peak", "at",
               "t_peak", "best peak", "at", "steady peak");
    for (const auto& ex : res.observables)
      fmt::print(out, "  {:<16} {:>12} {:>12} {:>11}   {:>12} {:>12}   {:>12}\n", ex.name,
                 format_si(ex.worst, ex.unit, 4), sweep_argument_text(c, sw, ex.worst_at), format_si(ex.t_peak, "s", 4),
                 format_si(ex.best, ex.unit, 4), sweep_argument_text(c, sw, ex.best_at),
                 ex.steady_peak ? format_si(*ex.steady_peak, ex.unit, 4) : std::string("-"));
    for (std::size_t k = 0; k < res.ratings.size(); ++k) {
      const SweepExtreme& ex = res.ratings[k];
      const RatingKind kind = report.ratings.at(res.rating_index[k]).kind;
      fmt::print(out, "  {:<30} worst {:>12} at {:>12}; best {:>12} at {:>12}\n", ex.name,
                 rating_value_text(kind, ex.worst), sweep_argument_text(c, sw, ex.worst_at),
                 rating_value_text(kind, ex.best), sweep_argument_text(c, sw, ex.best_at));
    }
  }
  if (!report.ratings.empty()) {
    fmt::print(out, "\nratings{}\n", report.sweeps.empty() ? "" : " (worst case over the sweeps)");
    for (const auto& r : report.ratings) fmt::print(out, "  {}\n", rating_line(c, r));
  }
}

std::string worst_json(const WorstReport& report, const Circuit& c) {
  nlohmann::json j;
  auto sweeps = nlohmann::json::array();
  for (const auto& res : report.sweeps) {
    nlohmann::json results = nlohmann::json::object();
    const char* unit = "";
    for (const auto& ex : res.observables) {
      results[ex.name] = {{"worst_peak", detail::json_number(ex.worst)},
                          {"at", detail::json_number(ex.worst_at)},
                          {"t_peak", detail::json_number(ex.t_peak)},
                          {"best_peak", detail::json_number(ex.best)},
                          {"best_at", detail::json_number(ex.best_at)},
                          {"steady_peak", ex.steady_peak ? detail::json_number(*ex.steady_peak) : nlohmann::json(nullptr)}};
    }
    unit = sweep_argument_unit(c, res.sweep);
    for (auto& [name, value] : results.items()) value["at_unit"] = unit;
    auto ratings = nlohmann::json::array();
    for (const auto& ex : res.ratings)
      ratings.push_back({{"name", ex.name}, {"worst", detail::json_number(ex.worst)}, {"at", detail::json_number(ex.worst_at)}});
    sweeps.push_back({{"target", res.sweep.text},
                      {"from", detail::json_number(res.sweep.from)},
                      {"to", detail::json_number(res.sweep.to)},
                      {"grid_points", res.grid.size()},
                      {"results", results},
                      {"ratings", ratings}});
  }
  j["sweeps"] = sweeps;
  j["ratings"] = detail::json_ratings(c, report.ratings);
  return j.dump(2) + "\n";
}

std::string worst_csv(const WorstReport& report) {
  std::string out = "sweep,argument";
  if (!report.sweeps.empty())
    for (const auto& ex : report.sweeps.front().observables) out += fmt::format(",{}", ex.name);
  out += "\n";
  for (const auto& res : report.sweeps)
    for (std::size_t k = 0; k < res.grid.size(); ++k) {
      out += fmt::format("{},{}", res.sweep.text, format_exact(res.grid[k]));
      for (const auto& v : res.grid_peaks) out += fmt::format(",{}", format_exact(v[k]));
      out += "\n";
    }
  return out;
}

}  // namespace netfold
