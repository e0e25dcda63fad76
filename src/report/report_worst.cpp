// Text, JSON, CSV and SVG of `netfold worst` (cli.md).
#include <cmath>
#include <numbers>

#include <fmt/format.h>
#include <fmt/ostream.h>
#include <fmt/ranges.h>
#include <nlohmann/json.hpp>

#include "netfold/plot.hpp"
#include "netfold/units.hpp"
#include "netfold/worst.hpp"
#include "report/json_fields.hpp"

namespace netfold {

namespace {

const char* corner_unit(const Circuit& c, const CornerValue& cv) {
  const ElementKind kind = c.element(cv.element).kind;
  return cv.is_factor ? "" : kind == ElementKind::capacitor ? "F" : kind == ElementKind::inductor ? "H" : "Ω";
}

std::string point_text(const Circuit& c, const SweepResult& res, const std::vector<double>& point,
                       const std::vector<CornerValue>& corner) {
  std::vector<std::string> parts;
  for (std::size_t k = 0; k < res.targets.size() && k < point.size(); ++k)
    parts.push_back(fmt::format("{} = {}", res.targets[k].text, sweep_argument_text(c, res.targets[k], point[k], 4)));
  for (const CornerValue& cv : corner)
    parts.push_back(cv.is_factor ? fmt::format("{} × {:.4f}", cv.name, cv.value)
                                 : fmt::format("{} = {}", cv.name, format_si(cv.value, corner_unit(c, cv), 4)));
  return fmt::format("{}", fmt::join(parts, ", "));
}

std::string line_title(const Circuit& c, const SweepResult& res) {
  std::vector<std::string> parts;
  for (const Sweep& sw : res.targets)
    parts.push_back(fmt::format("{} from {} to {}", sw.text, sweep_argument_text(c, sw, sw.from),
                                sweep_argument_text(c, sw, sw.to)));
  for (std::size_t k = 0; k < res.tolerances.size(); ++k) {
    const CornerValue& cv = res.tolerances[k];
    const auto& [lo, hi] = res.tolerance_bounds[k];
    parts.push_back(cv.is_factor ? fmt::format("{} × {:.4g} .. {:.4g}", cv.name, lo, hi)
                                 : fmt::format("{} {} .. {}", cv.name, format_si(lo, corner_unit(c, cv), 4),
                                               format_si(hi, corner_unit(c, cv), 4)));
  }
  return fmt::format("{}", fmt::join(parts, " × "));
}

std::string distribution_text(const SweepExtreme& ex) {
  const PeakDistribution& d = ex.distribution;
  std::string s = fmt::format("p50 {}, p90 {}, p99 {}", format_si(d.p50, ex.unit, 4), format_si(d.p90, ex.unit, 4),
                              format_si(d.p99, ex.unit, 4));
  if (d.p99_lo || d.p99_hi)
    s += fmt::format(" (95 % interval of p99: {} .. {})", d.p99_lo ? format_si(*d.p99_lo, ex.unit, 4) : "too few samples",
                     d.p99_hi ? format_si(*d.p99_hi, ex.unit, 4) : "too few samples");
  return s;
}

void write_line_text(std::ostream& out, const Circuit& c, const SweepResult& res) {
  fmt::print(out, "\nsweep {} ({} grid points; worst and best refined inside the box by Nelder–Mead)\n",
             line_title(c, res), res.grid_points);
  for (const auto& ex : res.observables) {
    fmt::print(out, "  {}: worst peak {} at {} (t_peak {}); best {} at {}{}\n", ex.name, format_si(ex.worst, ex.unit, 4),
               point_text(c, res, ex.worst_point, ex.corner), format_si(ex.t_peak, "s", 4),
               format_si(ex.best, ex.unit, 4), point_text(c, res, ex.best_point, ex.best_corner),
               ex.steady_peak ? fmt::format("; steady peak {}", format_si(*ex.steady_peak, ex.unit, 4)) : "");
  }
  for (const auto& ex : res.ratings)
    fmt::print(out, "  {}: worst {} at {}; best {}\n", ex.name, format_si(ex.worst, ex.unit, 4),
               point_text(c, res, ex.worst_point, ex.corner), format_si(ex.best, ex.unit, 4));
}

void write_statistics_text(std::ostream& out, const SweepResult& res) {
  fmt::print(out, "  distribution of the peak over the {} taken as uniform ({}):\n", res.box ? "box" : "range",
             res.samples ? fmt::format("{} samples, seed {}", res.samples, res.seed)
                         : std::string(res.box ? "weighted search grid" : "the curve through the search grid"));
  for (const auto& ex : res.observables) fmt::print(out, "    {:<16} {}\n", ex.name, distribution_text(ex));
  for (std::size_t k = 0; k < res.ratings.size(); ++k)
    if (res.exceeded_share[k] > 0.0)
      fmt::print(out, "    {} exceeded in {} of the {}\n", res.ratings[k].name, percent_text(100.0 * res.exceeded_share[k]),
                 res.box ? "box" : "range");
}

}  // namespace

void write_worst_text(std::ostream& out, const WorstReport& report, const Solution& nominal) {
  const Circuit& c = nominal.circuit();
  fmt::print(out, "netfold worst: {}{}\n", c.title().empty() ? c.source().path() : c.title(),
             c.title().empty() ? "" : fmt::format("  ({})", c.source().path()));
  if (report.sweeps.empty())
    fmt::print(out, "no sweep declared: add 'sweep TARGET FROM .. TO' to the file or give --sweep TARGET=FROM..TO\n");
  for (const auto& res : report.sweeps) {
    if (res.box) {
      write_line_text(out, c, res);
      write_statistics_text(out, res);
      continue;
    }
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
    write_statistics_text(out, res);
  }
  if (!report.ratings.empty()) {
    fmt::print(out, "\nratings{}\n", report.sweeps.empty() ? "" : " (worst case over the sweeps)");
    for (const auto& r : report.ratings) fmt::print(out, "  {}\n", rating_line(c, r));
  }
}

namespace {

nlohmann::json distribution_json(const SweepResult& res, const PeakDistribution& d) {
  nlohmann::json j = {{"p50", detail::json_number(d.p50)}, {"p90", detail::json_number(d.p90)},
                      {"p99", detail::json_number(d.p99)}};
  if (res.samples) j["p99_ci"] = {detail::json_number(d.p99_lo), detail::json_number(d.p99_hi)};
  return j;
}

nlohmann::json corner_json(const std::vector<CornerValue>& corner) {
  nlohmann::json j = nlohmann::json::object();
  for (const CornerValue& cv : corner) j[cv.name] = detail::json_number(cv.value);
  return j;
}

// A joint or toleranced sweep (spec v2): arrays of targets and arguments, and the corner.
nlohmann::json box_sweep_json(const SweepResult& res, const Circuit& c) {
  auto targets = nlohmann::json::array(), units = nlohmann::json::array();
  for (const Sweep& sw : res.targets) targets.push_back(sw.text), units.push_back(sweep_argument_unit(c, sw));
  auto numbers = [](const std::vector<double>& v) {
    auto a = nlohmann::json::array();
    for (double x : v) a.push_back(detail::json_number(x));
    return a;
  };
  nlohmann::json results = nlohmann::json::object();
  for (const auto& ex : res.observables)
    results[ex.name] = {{"worst_peak", detail::json_number(ex.worst)},
                        {"at", numbers(ex.worst_point)},
                        {"at_unit", units},
                        {"t_peak", detail::json_number(ex.t_peak)},
                        {"best_peak", detail::json_number(ex.best)},
                        {"best_at", numbers(ex.best_point)},
                        {"steady_peak", detail::json_number(ex.steady_peak)},
                        {"distribution", distribution_json(res, ex.distribution)}};
  if (!res.tolerances.empty())
    for (const auto& ex : res.observables) {
      results[ex.name]["corner"] = corner_json(ex.corner);
      results[ex.name]["best_corner"] = corner_json(ex.best_corner);
    }
  auto ratings = nlohmann::json::array();
  for (const auto& ex : res.ratings) {
    nlohmann::json r = {{"name", ex.name}, {"worst", detail::json_number(ex.worst)}, {"at", numbers(ex.worst_point)}};
    if (!res.tolerances.empty()) r["corner"] = corner_json(ex.corner);
    ratings.push_back(r);
  }
  std::vector<std::string> names;
  for (const Sweep& sw : res.targets) names.push_back(sw.text);
  return {{"target", names.empty() ? res.sweep.text : fmt::format("{}", fmt::join(names, ", "))},
          {"targets", targets},
          {"grid_points", res.grid_points},
          {"results", results},
          {"ratings", ratings}};
}

}  // namespace

std::string worst_json(const WorstReport& report, const Circuit& c) {
  nlohmann::json j;
  auto sweeps = nlohmann::json::array();
  for (const auto& res : report.sweeps) {
    nlohmann::json sweep;
    if (res.box) {
      sweep = box_sweep_json(res, c);
    } else {
      nlohmann::json results = nlohmann::json::object();
      for (const auto& ex : res.observables)
        results[ex.name] = {{"worst_peak", detail::json_number(ex.worst)},
                            {"at", detail::json_number(ex.worst_at)},
                            {"t_peak", detail::json_number(ex.t_peak)},
                            {"best_peak", detail::json_number(ex.best)},
                            {"best_at", detail::json_number(ex.best_at)},
                            {"steady_peak", detail::json_number(ex.steady_peak)},
                            {"at_unit", sweep_argument_unit(c, res.sweep)},
                            {"distribution", distribution_json(res, ex.distribution)}};
      auto ratings = nlohmann::json::array();
      for (const auto& ex : res.ratings)
        ratings.push_back(
            {{"name", ex.name}, {"worst", detail::json_number(ex.worst)}, {"at", detail::json_number(ex.worst_at)}});
      sweep = {{"target", res.sweep.text},
               {"from", detail::json_number(res.sweep.from)},
               {"to", detail::json_number(res.sweep.to)},
               {"grid_points", res.grid.size()},
               {"results", results},
               {"ratings", ratings}};
    }
    nlohmann::json shares = nlohmann::json::object();
    for (std::size_t k = 0; k < res.ratings.size(); ++k) shares[res.ratings[k].name] = detail::json_number(res.exceeded_share[k]);
    sweep["exceeded_share"] = shares;
    if (res.samples) {
      sweep["samples"] = res.samples;
      sweep["seed"] = res.seed;
    }
    sweeps.push_back(sweep);
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
