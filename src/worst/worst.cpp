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

void validate_sweep(const Circuit& c, const Sweep& sw) {
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
}

SolveOptions options_for(const Sweep& sw, const Window& window, double x) {
  SolveOptions o;
  o.window = window;
  switch (sw.target) {
    case SweepTarget::source_phase: o.source_phase = std::make_pair(sw.element, x); break;
    case SweepTarget::storage_initial: o.initial_state = x; break;
    case SweepTarget::switch_closes: o.first_closes = std::make_pair(sw.element, x); break;
  }
  return o;
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

std::string argument_text(const Sweep& sw, double x) {
  switch (sw.target) {
    case SweepTarget::source_phase: return format_si(x * kRadToDeg, "°", 5);
    case SweepTarget::storage_initial: return format_si(x, "", 5);
    case SweepTarget::switch_closes: return format_si(x, "s", 5);
  }
  return "";
}

const char* argument_unit(const Sweep& sw, const Circuit& c) {
  switch (sw.target) {
    case SweepTarget::source_phase: return "rad";
    case SweepTarget::storage_initial: return c.element(sw.element).kind == ElementKind::capacitor ? "V" : "A";
    case SweepTarget::switch_closes: return "s";
  }
  return "";
}

}  // namespace

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

WorstReport find_worst_case(const Circuit& c, const std::vector<Sweep>& sweeps) {
  auto cache = std::make_shared<NetworkCache>(c);
  Solution nominal = solve(c, {}, cache);
  WorstReport report;
  report.ratings = check_ratings(nominal);
  const auto& observables = nominal.observables();

  for (const Sweep& sw : sweeps) {
    validate_sweep(c, sw);
    SweepResult result;
    result.sweep = sw;
    Window window = nominal.window();
    if (sw.target == SweepTarget::switch_closes && nominal.window_is_default())
      window.to += std::max(0.0, sw.to - closes_slot(c.element(sw.element)).nominal);

    // Metric m of argument x: the peak |y| of observable m, or the stress of rating m − n_obs.
    const std::size_t n_obs = observables.size();
    const std::size_t n_metrics = n_obs + report.ratings.size();
    auto metric = [&](const Solution& s, std::size_t m) -> Peak {
      if (m < n_obs) return find_peak(s, observables[m]);
      const RatingCheck& r = report.ratings[m - n_obs];
      return {std::fabs(rating_stress(s, r.element, r.kind)), 0.0};
    };
    auto evaluate = [&](double x, std::size_t m) { return metric(solve(c, options_for(sw, window, x), cache), m); };

    result.grid = sweep_grid(sw, nominal);
    const std::size_t n_grid = result.grid.size();
    std::vector<std::vector<double>> values(n_metrics, std::vector<double>(n_grid));
    for (std::size_t k = 0; k < n_grid; ++k) {
      Solution s = solve(c, options_for(sw, window, result.grid[k]), cache);
      for (std::size_t m = 0; m < n_metrics; ++m) values[m][k] = metric(s, m).value;
    }

    const double tol = 1e-9 * (sw.to - sw.from);
    for (std::size_t m = 0; m < n_metrics; ++m) {
      const auto& v = values[m];
      SweepExtreme ex;
      // Worst: refine around every grid point that is a local maximum (ends included).
      std::size_t imax = 0, imin = 0;
      for (std::size_t k = 0; k < n_grid; ++k) {
        if (v[k] > v[imax]) imax = k;
        if (v[k] < v[imin]) imin = k;
      }
      ex.worst = v[imax];
      ex.worst_at = result.grid[imax];
      ex.best = v[imin];
      ex.best_at = result.grid[imin];
      for (std::size_t k = 0; k < n_grid; ++k) {
        bool left_ok = k == 0 || v[k] >= v[k - 1];
        bool right_ok = k + 1 == n_grid || v[k] >= v[k + 1];
        if (left_ok && right_ok && n_grid > 1) {
          double a = result.grid[k == 0 ? 0 : k - 1], b = result.grid[k + 1 == n_grid ? k : k + 1];
          auto [x, fx] = golden_maximum([&](double xx) { return evaluate(xx, m).value; }, a, b, tol);
          if (fx > ex.worst) {
            ex.worst = fx;
            ex.worst_at = x;
          }
        }
        bool left_lo = k == 0 || v[k] <= v[k - 1];
        bool right_lo = k + 1 == n_grid || v[k] <= v[k + 1];
        if (left_lo && right_lo && n_grid > 1) {
          double a = result.grid[k == 0 ? 0 : k - 1], b = result.grid[k + 1 == n_grid ? k : k + 1];
          auto [x, fx] = golden_maximum([&](double xx) { return -evaluate(xx, m).value; }, a, b, tol);
          if (-fx < ex.best) {
            ex.best = -fx;
            ex.best_at = x;
          }
        }
      }
      Solution at_worst = solve(c, options_for(sw, window, ex.worst_at), cache);
      if (m < n_obs) {
        const Observable& obs = observables[m];
        ex.name = obs.text;
        ex.unit = dimension_symbol(obs.dimension());
        ex.t_peak = metric(at_worst, m).time;
        if (obs.kind != ObservableKind::element_power) ex.steady_peak = compute_figures(at_worst, obs).steady_peak;
        result.observables.push_back(ex);
        result.grid_peaks.push_back(v);
      } else {
        const RatingCheck& r = report.ratings[m - n_obs];
        ex.name = fmt::format("{} {}", c.element(r.element).name, r.quantity);
        ex.unit = r.unit;
        result.ratings.push_back(ex);
        result.rating_index.push_back(m - n_obs);
      }
    }
    report.sweeps.push_back(std::move(result));
  }

  // Ratings: the worst over every sweep is what is rated.
  for (const auto& res : report.sweeps)
    for (std::size_t k = 0; k < res.ratings.size(); ++k) {
      RatingCheck& r = report.ratings[res.rating_index[k]];
      if (!r.worst_case || res.ratings[k].worst > r.actual) {
        r.actual = res.ratings[k].worst;
        r.worst_case = true;
      }
    }
  for (auto& r : report.ratings) {
    r.used_percent = 100.0 * std::fabs(r.actual) / r.rated;
    r.exceeded = std::fabs(r.actual) > r.rated;
  }
  return report;
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
               sw.text, argument_text(sw, sw.from), argument_text(sw, sw.to), res.grid.size());
    fmt::print(out, "  {:<16} {:>12} {:>12} {:>11}   {:>12} {:>12}   {:>12}\n", "observable", "worst peak", "at",
               "t_peak", "best peak", "at", "steady peak");
    for (const auto& ex : res.observables)
      fmt::print(out, "  {:<16} {:>12} {:>12} {:>11}   {:>12} {:>12}   {:>12}\n", ex.name,
                 format_si(ex.worst, ex.unit, 4), argument_text(sw, ex.worst_at), format_si(ex.t_peak, "s", 4),
                 format_si(ex.best, ex.unit, 4), argument_text(sw, ex.best_at),
                 ex.steady_peak ? format_si(*ex.steady_peak, ex.unit, 4) : std::string("-"));
    for (const auto& ex : res.ratings)
      fmt::print(out, "  {:<30} worst {:>12} at {:>12}; best {:>12} at {:>12}\n", ex.name,
                 format_si(ex.worst, ex.unit, 4), argument_text(sw, ex.worst_at), format_si(ex.best, ex.unit, 4),
                 argument_text(sw, ex.best_at));
  }
  if (!report.ratings.empty()) {
    fmt::print(out, "\nratings{}\n", report.sweeps.empty() ? "" : " (worst case over the sweeps)");
    for (const auto& r : report.ratings)
      fmt::print(out, "  {:<14} {:<13} {:>11} of {:>11} {:>7}  {}\n", c.element(r.element).name, r.quantity,
                 format_si(r.actual, r.unit, 4), format_si(r.rated, r.unit, 4),
                 fmt::format("{:.1f} %", r.used_percent), r.exceeded ? "EXCEEDED" : "ok");
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
    unit = argument_unit(res.sweep, c);
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
