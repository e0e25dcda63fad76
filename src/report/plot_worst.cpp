// The picture of `netfold worst --svg`: per sweep, the peak of every watched quantity against
// the first target's argument, drawn by the waveform plot (plot_svg.cpp) with the argument as
// its horizontal axis. Several sweeps are stacked as nested SVG documents in one file.
#include <cmath>
#include <numbers>
#include <string>

#include <fmt/format.h>

#include "netfold/plot.hpp"
#include "netfold/units.hpp"
#include "netfold/worst.hpp"

namespace netfold {

namespace {

struct Axis {
  std::string name, unit;
  double scale = 1.0;  ///< display units per SI unit
};

Axis axis_of(const Circuit& c, const SweepResult& res) {
  if (res.targets.empty()) {
    const CornerValue& cv = res.tolerances.front();
    const ElementKind kind = c.element(cv.element).kind;
    return {cv.is_factor ? cv.name + " factor" : cv.name,
            cv.is_factor ? "×" : kind == ElementKind::capacitor ? "F" : kind == ElementKind::inductor ? "H" : "Ω", 1.0};
  }
  const Sweep& sw = res.targets.front();
  if (sw.target == SweepTarget::source_phase) return {sw.text, "°", 180.0 / std::numbers::pi};
  return {sw.text, sweep_argument_unit(c, sw), 1.0};
}

// The rating that limits an observable's peak: `rated V` of a capacitor on its X.v, `rated A`
// of an element on its X.i.
std::optional<double> rating_of(const Circuit& c, const std::string& name) {
  for (const Element& e : c.elements())
    for (const Rating& r : e.ratings) {
      if (r.kind == RatingKind::peak_voltage && name == e.name + ".v") return r.limit;
      if (r.kind == RatingKind::peak_current && name == e.name + ".i") return r.limit;
    }
  return std::nullopt;
}

std::string sweep_svg(const SweepResult& res, const Circuit& c) {
  const Axis ax = axis_of(c, res);
  PlotData d;
  d.x_name = ax.name;
  d.x_unit = ax.unit;
  std::vector<double> x;
  for (double g : res.grid) x.push_back(g * ax.scale);
  const bool joint = res.targets.size() > 1 || !res.tolerances.empty();
  d.title = joint ? fmt::format("worst peak against {} (the other values at each quantity's worst)", ax.name)
                  : fmt::format("peak against {}", ax.name);
  if (!c.title().empty()) d.title = c.title() + ": " + d.title;
  const std::vector<double> ends{x.front(), x.back()};
  for (std::size_t m = 0; m < res.observables.size(); ++m) {
    const SweepExtreme& ex = res.observables[m];
    d.series.push_back({ex.name + " peak", ex.unit, x, res.grid_peaks[m]});
    if (ex.steady_peak) d.series.push_back({ex.name + " steady peak", ex.unit, ends, {*ex.steady_peak, *ex.steady_peak}});
    if (auto limit = rating_of(c, ex.name)) d.series.push_back({ex.name + " rated", ex.unit, ends, {*limit, *limit}});
    const double worst_x = (res.targets.empty() ? ex.corner.front().value : ex.worst_at) * ax.scale;
    d.events.push_back(worst_x);
    d.event_labels.push_back(fmt::format("worst {} {}", ex.name, format_si(ex.worst, ex.unit, 4)));
    if (!joint) {
      d.events.push_back(ex.best_at * ax.scale);
      d.event_labels.push_back(fmt::format("best {} {}", ex.name, format_si(ex.best, ex.unit, 4)));
    }
  }
  return render_svg_plot(d);
}

// The height attribute of a rendered document's root element.
double svg_height(const std::string& svg) {
  auto at = svg.find("height=\"");
  return at == std::string::npos ? 0.0 : std::stod(svg.substr(at + 8));
}

}  // namespace

std::string worst_svg(const WorstReport& report, const Circuit& c) {
  std::vector<std::string> parts;
  for (const auto& res : report.sweeps)
    if (!res.grid.empty()) parts.push_back(sweep_svg(res, c));
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
