// The picture of `netfold worst --svg`: per sweep, the peak of every watched quantity against
// the first target's argument, drawn by the waveform plot (plot_svg.cpp) with the argument as
// its horizontal axis; for a line of two targets, a map of each quantity's peak over both
// (plot_map.cpp). Several pictures are stacked as nested SVG documents in one file.
#include <algorithm>
#include <cmath>
#include <numbers>
#include <string>

#include <fmt/format.h>

#include "netfold/plot.hpp"
#include "netfold/units.hpp"
#include "netfold/worst.hpp"
#include "report/plot_map.hpp"
#include "report/plot_marks.hpp"

namespace netfold {

namespace {

struct Axis {
  std::string name, unit;
  double scale = 1.0;  ///< display units per SI unit
};

// `prefixed`: a time, voltage or current axis in the SI prefix that suits its largest value
// (the map's plain tick numbers: 0.14 A reads better as 140 mA).
Axis target_axis(const Circuit& c, const Sweep& sw, bool prefixed) {
  if (sw.target == SweepTarget::source_phase) return {sw.text, "°", 180.0 / std::numbers::pi};
  const std::string unit = sweep_argument_unit(c, sw);
  const double largest = std::max(std::fabs(sw.from), std::fabs(sw.to));
  if (!prefixed || largest == 0.0) return {sw.text, unit, 1.0};
  if (largest >= 1e3) return {sw.text, "k" + unit, 1e-3};
  if (largest >= 1.0) return {sw.text, unit, 1.0};
  if (largest >= 1e-3) return {sw.text, "m" + unit, 1e3};
  return {sw.text, "µ" + unit, 1e6};
}

Axis axis_of(const Circuit& c, const SweepResult& res) {
  if (res.targets.empty()) {
    const CornerValue& cv = res.tolerances.front();
    const ElementKind kind = c.element(cv.element).kind;
    return {cv.is_factor ? cv.name + " factor" : cv.name,
            cv.is_factor ? "×" : kind == ElementKind::capacitor ? "F" : kind == ElementKind::inductor ? "H" : "Ω", 1.0};
  }
  return target_axis(c, res.targets.front(), false);
}

std::string sweep_svg(const SweepResult& res, const Circuit& c) {
  const Axis ax = axis_of(c, res);
  PlotData d;
  d.x_name = ax.name;
  d.x_unit = ax.unit;
  std::vector<double> x;
  for (double g : res.grid) x.push_back(g * ax.scale);
  const bool joint = res.targets.size() > 1 || !res.tolerances.empty();
  d.title = joint ? fmt::format("peak against {}, the other values at each quantity's worst", ax.name)
                  : fmt::format("peak against {}", ax.name);
  if (!c.title().empty()) d.title = c.title() + ": " + d.title;
  auto at_text = [&](double a) { return format_si(a * ax.scale, ax.unit == "×" ? "" : ax.unit.c_str(), 4); };
  for (std::size_t m = 0; m < res.observables.size(); ++m) {
    const SweepExtreme& ex = res.observables[m];
    const std::size_t series = d.series.size();
    const double worst_x = res.targets.empty() ? ex.corner.front().value : ex.worst_at;
    // A quantity the sweep does not change (to 1e-6, below the 4 digits printed) has no worst
    // or best argument to mark.
    if (!(ex.worst - ex.best > 1e-6 * std::fabs(ex.worst))) {
      d.series.push_back({fmt::format("{} peak, {} at every {}", ex.name, format_si(ex.worst, ex.unit.c_str(), 4), ax.name),
                          ex.unit, x, res.grid_peaks[m]});
      if (auto limit = detail::peak_rating_of(c, ex.name))
        d.levels.push_back({ex.unit, *limit,
                            fmt::format("{} rated {}", ex.name.substr(0, ex.name.rfind('.')), format_si(*limit, ex.unit.c_str(), 4)),
                            true});
      continue;
    }
    // The curve through the grid and the refined worst (and best) that the markers sit on.
    std::vector<std::pair<double, double>> points;
    for (std::size_t k = 0; k < x.size(); ++k) points.emplace_back(x[k], res.grid_peaks[m][k]);
    points.emplace_back(worst_x * ax.scale, ex.worst);
    if (!joint) points.emplace_back(ex.best_at * ax.scale, ex.best);
    std::stable_sort(points.begin(), points.end(), [](const auto& a, const auto& b) { return a.first < b.first; });
    PlotSeries curve{ex.name + " peak", ex.unit, {}, {}};
    for (const auto& [px, py] : points) curve.t.push_back(px), curve.v.push_back(py);
    d.series.push_back(std::move(curve));
    if (ex.steady_peak)
      d.levels.push_back({ex.unit, *ex.steady_peak,
                          fmt::format("{} steady peak {}", ex.name, format_si(*ex.steady_peak, ex.unit.c_str(), 4)), false});
    if (auto limit = detail::peak_rating_of(c, ex.name))
      d.levels.push_back({ex.unit, *limit,
                          fmt::format("{} rated {}", ex.name.substr(0, ex.name.rfind('.')), format_si(*limit, ex.unit.c_str(), 4)),
                          true});
    d.markers.push_back({series, worst_x * ax.scale, ex.worst,
                         fmt::format("worst {} {} at {}", ex.name, format_si(ex.worst, ex.unit.c_str(), 4), at_text(worst_x))});
    // The best of a joint or toleranced sweep lies on another slice than the one drawn.
    if (!joint)
      d.markers.push_back({series, ex.best_at * ax.scale, ex.best,
                           fmt::format("best {} {} at {}", ex.name, format_si(ex.best, ex.unit.c_str(), 4), at_text(ex.best_at))});
  }
  return render_svg_plot(d);
}

std::string corner_text(const Circuit& c, const std::vector<CornerValue>& corner) {
  std::string out;
  for (const CornerValue& cv : corner) {
    const ElementKind kind = c.element(cv.element).kind;
    const char* unit = kind == ElementKind::capacitor ? "F" : kind == ElementKind::inductor ? "H" : "Ω";
    out += cv.is_factor ? fmt::format(", {} × {:.4g}", cv.name, cv.value)
                        : fmt::format(", {} = {}", cv.name, format_si(cv.value, unit, 4));
  }
  return out;
}

// One map per observable of a line of two targets.
std::vector<std::string> sweep_maps(const SweepResult& res, const Circuit& c) {
  std::vector<std::string> maps;
  if (res.targets.size() != 2 || res.map_peaks.size() != res.observables.size()) return maps;
  const Axis ax = target_axis(c, res.targets[0], true), ay = target_axis(c, res.targets[1], true);
  for (std::size_t m = 0; m < res.observables.size(); ++m) {
    const SweepExtreme& ex = res.observables[m];
    detail::MapData d;
    d.title = fmt::format("{}peak of {} over {} and {}{}", c.title().empty() ? "" : c.title() + ": ", ex.name, ax.name,
                          ay.name, res.tolerances.empty() ? "" : " (each point: the worst over the tolerances)");
    d.x_name = ax.name, d.x_unit = ax.unit, d.y_name = ay.name, d.y_unit = ay.unit;
    for (double g : res.grid) d.x.push_back(g * ax.scale);
    for (double g : res.map_grid) d.y.push_back(g * ay.scale);
    d.z = res.map_peaks[m];
    d.z_name = ex.name + " peak";
    d.z_unit = ex.unit;
    auto point = [&](const std::vector<double>& p, const std::vector<CornerValue>& corner) {
      return fmt::format("{} = {}, {} = {}{}", ax.name, format_si(p[0] * ax.scale, ax.unit.c_str(), 4), ay.name,
                         format_si(p[1] * ay.scale, ay.unit.c_str(), 4), corner_text(c, corner));
    };
    const std::string worst = format_si(ex.worst, ex.unit.c_str(), 4), best = format_si(ex.best, ex.unit.c_str(), 4);
    if (ex.worst_point.size() == 2) {
      d.marks.push_back({ex.worst_point[0] * ax.scale, ex.worst_point[1] * ay.scale, "worst " + worst, true});
      d.notes.push_back(fmt::format("○ worst {} at {}", worst, point(ex.worst_point, ex.corner)));
    }
    if (ex.best_point.size() == 2) {
      d.marks.push_back({ex.best_point[0] * ax.scale, ex.best_point[1] * ay.scale, "best " + best, false});
      d.notes.push_back(fmt::format("◇ best {} at {}", best, point(ex.best_point, ex.best_corner)));
    }
    maps.push_back(detail::render_svg_map(d));
  }
  return maps;
}

// The height attribute of a rendered document's root element.
double svg_height(const std::string& svg) {
  auto at = svg.find("height=\"");
  return at == std::string::npos ? 0.0 : std::stod(svg.substr(at + 8));
}

}  // namespace

std::string worst_svg(const WorstReport& report, const Circuit& c) {
  std::vector<std::string> parts;
  for (const auto& res : report.sweeps) {
    if (res.grid.empty()) continue;
    parts.push_back(sweep_svg(res, c));
    for (std::string& map : sweep_maps(res, c)) parts.push_back(std::move(map));
  }
  if (parts.empty()) return render_svg_plot(PlotData{});
  if (parts.size() == 1) return parts.front();
  double height = 0.0;
  std::string body;
  for (const std::string& p : parts) {
    const auto root = p.find("<svg");
    body += fmt::format("<g transform=\"translate(0,{:.2f})\">\n{}</g>\n", height, p.substr(root));
    height += svg_height(p);
  }
  return fmt::format("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" "
                     "width=\"900\" height=\"{0:.0f}\" viewBox=\"0 0 900 {0:.0f}\">\n{1}</svg>\n",
                     height, body);
}

}  // namespace netfold
