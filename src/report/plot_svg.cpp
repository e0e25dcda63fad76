#include "netfold/plot.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstddef>
#include <iterator>
#include <string_view>
#include <tuple>
#include <utility>

#include <fmt/format.h>

#include "netfold/units.hpp"
#include "report/plot_axes.hpp"
#include "report/xml_text.hpp"

namespace netfold {
namespace {

using detail::choose_ticks;
using detail::put;
using detail::text_width;
using detail::Ticks;
using detail::value_tick_label;

// Page geometry, px. The plot area spans the page width less room for the y tick labels.
constexpr double kWidth = 900.0;
constexpr double kPlotLeft = 88.0;
constexpr double kPlotRight = 880.0;
constexpr double kPlotHeight = 180.0;
constexpr double kTopMargin = 12.0;
constexpr double kTitleBand = 34.0;
constexpr double kLegendRow = 18.0;
constexpr double kEventRow = 13.0;
constexpr double kXTickBand = 20.0;
constexpr double kPanelGap = 18.0;
constexpr double kAxisLabelBand = 24.0;
constexpr double kFontSize = 12.0;
constexpr double kSmallFontSize = 10.0;
constexpr int kMaxEventRows = 4;
constexpr double kHuge = 1e300;  // axis ranges are clamped to ±kHuge

// Okabe–Ito colours (distinguishable with the common colour-vision deficiencies; yellow left
// out for being unreadable on white) plus a wine red. Colours repeat after eight series.
constexpr std::array<std::string_view, 8> kPalette{"#0072b2", "#d55e00", "#009e73", "#cc79a7",
                                                   "#e69f00", "#56b4e9", "#000000", "#882255"};

std::string escape_xml(std::string_view s) { return detail::escape_xml(s, detail::XmlControls::svg_line); }

// Value-axis range of a panel. A constant (or all-zero) panel still needs a non-empty range:
// draw it from zero to the constant, or ±1 around zero.
std::pair<double, double> value_range(double lo, double hi) {
  if (!(lo <= hi)) return {-1.0, 1.0};  // no finite sample at all
  // Finite values near ±1.8e308 would overflow hi − lo to infinity.
  lo = std::clamp(lo, -kHuge, kHuge);
  hi = std::clamp(hi, -kHuge, kHuge);
  double scale = std::max(std::fabs(lo), std::fabs(hi));
  if (hi - lo <= 1e-9 * scale || hi - lo < 1e-300) {
    lo = std::min(lo, 0.0);
    hi = std::max(hi, 0.0);
    if (hi - lo < 1e-300) return {-1.0, 1.0};
  }
  return {lo, hi};
}

struct TimeUnit {
  double scale;          ///< seconds per display unit
  std::string_view name;
};

// By span, so the tick labels have few digits: 84 ms → ms, 500 µs → µs, 3 s → s.
TimeUnit choose_time_unit(double span) {
  if (span >= 1.0) return {1.0, "s"};
  if (span >= 1e-3) return {1e-3, "ms"};
  if (span >= 1e-6) return {1e-6, "µs"};
  return {1e-9, "ns"};
}

std::string time_tick_label(const Ticks& ticks, long i) {
  if (i == 0) return "0";
  int decimals = std::max(0, -ticks.exponent);
  return fmt::format("{:.{}f}", ticks.at(i), decimals);
}

struct Panel {
  std::string unit;
  std::vector<std::size_t> series;  ///< indices into PlotData::series
  std::vector<std::size_t> levels;  ///< indices into PlotData::levels drawn in this panel
  std::vector<std::size_t> off_scale;  ///< levels named in the corner instead
  double data_lo = 1.0, data_hi = -1.0;
  Ticks y;
  int legend_rows = 1;
  double top = 0.0;       ///< of the panel (legend)
  double plot_top = 0.0;  ///< of the plot area
};

std::size_t sample_count(const PlotSeries& s) { return std::min(s.t.size(), s.v.size()); }

struct Layout {
  double t0 = 0.0, t1 = 1.0;
  TimeUnit time_unit{1.0, "s"};
  Ticks x;
  std::vector<Panel> panels;
  std::vector<double> events;       ///< inside [t0, t1], in input order
  std::vector<std::string> labels;  ///< per drawn event, may be empty strings
  std::vector<double> label_left;   ///< px
  std::vector<int> label_row;
  int event_rows = 0;
  double height = 0.0;

  double x_of(double t) const { return kPlotLeft + (t - t0) / (t1 - t0) * (kPlotRight - kPlotLeft); }
};

double y_of(const Panel& p, double v) {
  double y = p.plot_top + kPlotHeight - (v - p.y.lo) / (p.y.hi - p.y.lo) * kPlotHeight;
  return std::clamp(y, p.plot_top, p.plot_top + kPlotHeight);
}

void find_time_range(const PlotData& data, Layout& L) {
  double lo = 0.0, hi = -1.0;
  auto widen = [&](double t) {
    if (!std::isfinite(t)) return;
    if (lo > hi) {
      lo = hi = t;
    } else {
      lo = std::min(lo, t);
      hi = std::max(hi, t);
    }
  };
  for (const PlotSeries& s : data.series)
    for (std::size_t i = 0, n = sample_count(s); i < n; ++i)
      if (std::isfinite(s.v[i])) widen(s.t[i]);
  if (lo > hi)
    for (double e : data.events) widen(e);  // nothing to draw but the events
  if (lo > hi) {
    lo = 0.0;
    hi = 1.0;
  }
  lo = std::clamp(lo, -kHuge, kHuge);
  hi = std::clamp(hi, -kHuge, kHuge);
  if (!(hi - lo > 1e-9 * std::max(std::fabs(lo), std::fabs(hi)) && hi - lo > 1e-300)) {
    double pad = lo != 0.0 ? std::fabs(lo) * 0.05 : 1e-3;
    lo -= pad;
    hi += pad;
  }
  L.t0 = lo;
  L.t1 = hi;
  // A horizontal axis other than time (worst --svg: a sweep argument) is drawn in its own unit.
  L.time_unit = data.x_unit == "s" ? choose_time_unit(hi - lo) : TimeUnit{1.0, data.x_unit};
  L.x = choose_ticks(lo / L.time_unit.scale, hi / L.time_unit.scale, false);
}

void group_panels(const PlotData& data, Layout& L) {
  for (std::size_t k = 0; k < data.series.size(); ++k) {
    const PlotSeries& s = data.series[k];
    auto it = std::find_if(L.panels.begin(), L.panels.end(), [&](const Panel& p) { return p.unit == s.unit; });
    if (it == L.panels.end()) {
      L.panels.push_back(Panel{});
      L.panels.back().unit = s.unit;
      it = L.panels.end() - 1;
    }
    it->series.push_back(k);
    for (std::size_t i = 0, n = sample_count(s); i < n; ++i) {
      double v = s.v[i];
      if (!std::isfinite(v) || !std::isfinite(s.t[i])) continue;
      if (it->data_lo > it->data_hi) {
        it->data_lo = it->data_hi = v;
      } else {
        it->data_lo = std::min(it->data_lo, v);
        it->data_hi = std::max(it->data_hi, v);
      }
    }
  }
  for (std::size_t k = 0; k < data.levels.size(); ++k) {
    const PlotLevel& lv = data.levels[k];
    auto it = std::find_if(L.panels.begin(), L.panels.end(), [&](const Panel& p) { return p.unit == lv.unit; });
    if (it == L.panels.end() || !std::isfinite(lv.v)) continue;
    const double largest = std::max(std::fabs(it->data_lo), std::fabs(it->data_hi));
    if (it->data_lo <= it->data_hi && std::fabs(lv.v) > 3.0 * largest) {
      it->off_scale.push_back(k);
      continue;
    }
    it->levels.push_back(k);
  }
  for (Panel& p : L.panels) {
    double lo = p.data_lo, hi = p.data_hi;
    for (std::size_t k : p.levels) {
      lo = lo > hi ? data.levels[k].v : std::min(lo, data.levels[k].v);
      hi = std::max(hi, data.levels[k].v);
    }
    // Headroom beyond a level, so that its line and label do not sit on the frame.
    double level_lo = kHuge, level_hi = -kHuge;
    for (std::size_t k : p.levels) level_lo = std::min(level_lo, data.levels[k].v), level_hi = std::max(level_hi, data.levels[k].v);
    const double span = hi - lo;
    if (span > 0.0 && level_hi >= hi) hi += 0.06 * span;
    if (span > 0.0 && level_lo <= lo) lo -= 0.06 * span;
    std::tie(lo, hi) = value_range(lo, hi);
    p.y = choose_ticks(lo, hi, true);
  }
}

double legend_item_width(const std::string& name) { return 14.0 + 5.0 + text_width(name, kFontSize) + 18.0; }

// Legend entries flow left to right over the plot width and wrap onto further rows.
template <typename Visit>
int lay_out_legend(const PlotData& data, const Panel& p, Visit&& visit) {
  double x = kPlotLeft;
  int row = 0;
  for (std::size_t k : p.series) {
    double w = legend_item_width(data.series[k].name);
    if (x > kPlotLeft && x + w > kPlotRight) {
      x = kPlotLeft;
      ++row;
    }
    visit(k, x, row);
    x += w;
  }
  return row + 1;
}

// Labels go in rows above the first panel; each takes the lowest row where it does not
// overlap a label already placed, so close events stay readable. Placed left to right,
// whatever the order of `events`.
void place_event_labels(const PlotData& data, Layout& L) {
  for (std::size_t k = 0; k < data.events.size(); ++k) {
    double e = data.events[k];
    if (!std::isfinite(e) || e < L.t0 || e > L.t1) continue;
    L.events.push_back(e);
    L.labels.push_back(k < data.event_labels.size() ? data.event_labels[k] : std::string());
  }
  const std::size_t n = L.events.size();
  L.label_left.assign(n, 0.0);
  L.label_row.assign(n, -1);
  std::vector<double> width(n, 0.0);
  std::vector<std::size_t> order;
  for (std::size_t k = 0; k < n; ++k) {
    if (L.labels[k].empty()) continue;
    width[k] = text_width(L.labels[k], kSmallFontSize);
    // Beside its line, to the right; to the left where it would run off the page.
    double x = L.x_of(L.events[k]);
    L.label_left[k] = x + 3.0 + width[k] <= kWidth - 4.0 ? x + 3.0 : std::max(4.0, x - 3.0 - width[k]);
    order.push_back(k);
  }
  std::stable_sort(order.begin(), order.end(),
                   [&](std::size_t a, std::size_t b) { return L.label_left[a] < L.label_left[b]; });
  std::array<double, kMaxEventRows> row_end{};
  row_end.fill(-1e300);
  for (std::size_t k : order) {
    int row = -1;
    for (int r = 0; r < kMaxEventRows; ++r) {
      if (row_end[static_cast<std::size_t>(r)] + 4.0 <= L.label_left[k]) {
        row = r;
        break;
      }
    }
    if (row < 0) {
      // Every row is taken here (a rectifier's hundreds of diode events): the line stays, drawn
      // light, and the label is left out rather than written over the others.
      L.labels[k].clear();
      continue;
    }
    row_end[static_cast<std::size_t>(row)] = L.label_left[k] + width[k];
    L.label_row[k] = row;
    L.event_rows = std::max(L.event_rows, row + 1);
  }
}

void stack_panels(const PlotData& data, Layout& L) {
  double y = kTopMargin + (data.title.empty() ? 0.0 : kTitleBand);
  if (!data.title.empty()) {
    std::string scratch;  // the title's second line, if it needs one, moves the panels down
    y += detail::draw_title(scratch, data.title, kWidth, 0.0);
  }
  for (std::size_t k = 0; k < L.panels.size(); ++k) {
    Panel& p = L.panels[k];
    p.legend_rows = lay_out_legend(data, p, [](std::size_t, double, int) {});
    p.top = y;
    p.plot_top = y + p.legend_rows * kLegendRow + 4.0 + (k == 0 ? L.event_rows * kEventRow : 0.0);
    y = p.plot_top + kPlotHeight + kXTickBand + kPanelGap;
  }
  L.height = std::ceil(y - kPanelGap + kAxisLabelBand);
  if (L.panels.empty()) L.height = std::ceil(y + 40.0);
}

// One series as a path. Samples are bucketed by pixel column; each bucket contributes its
// first, lowest, highest and last sample in time order, which keeps every peak and the
// joins between columns while bounding the output at about four points per column.
void draw_trace(std::string& out, const Layout& L, const Panel& p, const PlotSeries& s, std::string_view colour) {
  const double columns = kPlotRight - kPlotLeft;
  std::string d;
  bool pen_up = true;
  bool open = false;
  long column = 0;
  std::size_t first = 0, last = 0, low = 0, high = 0;
  auto flush = [&] {
    if (!open) return;
    std::array<std::size_t, 4> pick{first, low, high, last};
    std::sort(pick.begin(), pick.end());
    for (std::size_t j = 0; j < pick.size(); ++j) {
      if (j > 0 && pick[j] == pick[j - 1]) continue;
      std::size_t i = pick[j];
      put(d, "{}{:.2f},{:.2f}", pen_up ? 'M' : 'L', L.x_of(s.t[i]), y_of(p, s.v[i]));
      pen_up = false;
    }
    open = false;
  };
  for (std::size_t i = 0, n = sample_count(s); i < n; ++i) {
    double t = s.t[i], v = s.v[i];
    if (!std::isfinite(t) || !std::isfinite(v)) {
      flush();
      pen_up = true;  // a gap in the data is a gap in the line
      continue;
    }
    long c = std::clamp(static_cast<long>(std::floor((t - L.t0) / (L.t1 - L.t0) * columns)), 0L,
                        static_cast<long>(columns) - 1);
    if (open && c != column) flush();
    if (!open) {
      open = true;
      column = c;
      first = low = high = i;
    }
    last = i;
    if (v < s.v[low]) low = i;
    if (v > s.v[high]) high = i;
  }
  flush();
  if (d.empty()) return;
  put(out, "<path class=\"trace\" d=\"{}\" fill=\"none\" stroke=\"{}\" stroke-width=\"1.5\" "
           "stroke-linejoin=\"round\" stroke-linecap=\"round\"/>\n",
      d, colour);
}

// Text on a white, slightly transparent box, so that it reads over grid lines and traces.
struct Box {
  double left, top, right, bottom;
  bool overlaps(const Box& o) const { return left < o.right && o.left < right && top < o.bottom && o.top < bottom; }
};

Box text_box(double x, double y, const std::string& text, bool end) {
  const double w = text_width(text, kSmallFontSize);
  const double left = end ? x - w : x;
  return {left - 2.0, y - kSmallFontSize, left + w + 2.0, y + 3.0};
}

void boxed_text(std::string& out, const char* cls, double x, double y, const std::string& text, const char* anchor,
                std::string_view colour) {
  const double w = text_width(text, kSmallFontSize);
  const double left = std::string_view(anchor) == "end" ? x - w : x;
  put(out, "<rect class=\"label-box\" x=\"{:.2f}\" y=\"{:.2f}\" width=\"{:.2f}\" height=\"{:.2f}\" fill=\"#ffffff\" "
           "fill-opacity=\"0.85\"/>\n",
      left - 2.0, y - kSmallFontSize, w + 4.0, kSmallFontSize + 3.0);
  put(out, "<text class=\"{}\" x=\"{:.2f}\" y=\"{:.2f}\" text-anchor=\"{}\" font-size=\"{}\" fill=\"{}\">{}</text>\n", cls, x,
      y, anchor, kSmallFontSize, colour, escape_xml(text));
}

// Levels: a dashed line across the plot, its label above the right end; levels too far off
// the panel's scale are named in its top right corner.
std::vector<Box> draw_levels(std::string& out, const PlotData& data, const Panel& p) {
  std::vector<Box> taken;
  for (std::size_t k : p.levels) {
    const PlotLevel& lv = data.levels[k];
    const double y = y_of(p, lv.v);
    const char* colour = lv.limit ? "#c0392b" : "#666666";
    put(out, "<line class=\"{}\" x1=\"{:.2f}\" y1=\"{:.2f}\" x2=\"{:.2f}\" y2=\"{:.2f}\" stroke=\"{}\" stroke-width=\"1.5\" "
             "stroke-dasharray=\"8,4\"/>\n",
        lv.limit ? "rating" : "level", kPlotLeft, y, kPlotRight, y, colour);
    if (lv.label.empty()) continue;
    const double ly = std::max(y - 4.0, p.plot_top + kSmallFontSize + 2.0);
    boxed_text(out, "level-label", kPlotRight - 4.0, ly, lv.label, "end", colour);
    taken.push_back(text_box(kPlotRight - 4.0, ly, lv.label, true));
  }
  double y = p.plot_top + kSmallFontSize + 4.0;
  for (std::size_t k : p.off_scale) {
    const PlotLevel& lv = data.levels[k];
    const std::string text = lv.label + (lv.v > 0 ? " (off scale, above)" : " (off scale, below)");
    boxed_text(out, "level-label", kPlotRight - 4.0, y, text, "end", lv.limit ? "#c0392b" : "#666666");
    taken.push_back(text_box(kPlotRight - 4.0, y, text, true));
    y += kSmallFontSize + 4.0;
  }
  return taken;
}

// Markers: a dot on the series, its label beside it: above right, above left, below right or
// below left, the first that stays inside the plot and clear of the labels already placed.
void draw_markers(std::string& out, const PlotData& data, const Layout& L, const Panel& p, std::vector<Box> taken) {
  for (const PlotMarker& m : data.markers) {
    if (m.series >= data.series.size() || data.series[m.series].unit != p.unit) continue;
    if (!std::isfinite(m.t) || !std::isfinite(m.v) || m.t < L.t0 || m.t > L.t1) continue;
    const double x = L.x_of(m.t), y = y_of(p, m.v);
    const std::string_view colour = kPalette[m.series % kPalette.size()];
    put(out, "<circle class=\"marker\" cx=\"{:.2f}\" cy=\"{:.2f}\" r=\"4\" fill=\"{}\" stroke=\"#ffffff\" stroke-width=\"1.5\"/>\n",
        x, y, colour);
    if (m.label.empty()) continue;
    const Box plot{kPlotLeft, p.plot_top, kPlotRight, p.plot_top + kPlotHeight};
    double lx = x + 8.0, ly = y - 8.0;
    bool end = false;
    int fallback = -1;  // the first place inside the plot, taken when none is also clear
    for (int place = 0; place < 4; ++place) {
      const bool e = place % 2 == 1;
      const double cx = e ? x - 8.0 : x + 8.0, cy = place < 2 ? y - 8.0 : y + kSmallFontSize + 8.0;
      const Box b = text_box(cx, cy, m.label, e);
      const bool inside = b.left >= plot.left && b.right <= plot.right && b.top >= plot.top && b.bottom <= plot.bottom;
      const bool clear = std::none_of(taken.begin(), taken.end(), [&](const Box& o) { return o.overlaps(b); });
      if ((place == 0 || (inside && fallback < 0)) || (inside && clear)) lx = cx, ly = cy, end = e;
      if (inside && fallback < 0) fallback = place;
      if (inside && clear) break;
    }
    // No place both inside and clear: move the label up a row at a time while that clears it.
    for (int row = 0; row < 4; ++row) {
      const Box b = text_box(lx, ly, m.label, end);
      if (std::none_of(taken.begin(), taken.end(), [&](const Box& o) { return o.overlaps(b); })) break;
      if (b.top - kEventRow < p.plot_top) break;
      ly -= kEventRow;
    }
    boxed_text(out, "marker-label", lx, ly, m.label, end ? "end" : "start", "#222222");
    taken.push_back(text_box(lx, ly, m.label, end));
  }
}

void draw_panel(std::string& out, const PlotData& data, const Layout& L, std::size_t index) {
  const Panel& p = L.panels[index];
  const double bottom = p.plot_top + kPlotHeight;
  put(out, "<g class=\"panel\" id=\"panel-{}\">\n", index + 1);

  put(out, "<g class=\"legend\">\n");
  lay_out_legend(data, p, [&](std::size_t k, double x, int row) {
    double y = p.top + row * kLegendRow;
    put(out,
        "<g class=\"legend-item\"><rect class=\"swatch\" x=\"{:.2f}\" y=\"{:.2f}\" width=\"14\" height=\"10\" "
        "fill=\"{}\"/><text x=\"{:.2f}\" y=\"{:.2f}\">{}</text></g>\n",
        x, y + 3.0, kPalette[k % kPalette.size()], x + 19.0, y + 12.0, escape_xml(data.series[k].name));
  });
  put(out, "</g>\n");

  put(out, "<rect class=\"plot-area\" x=\"{:.2f}\" y=\"{:.2f}\" width=\"{:.2f}\" height=\"{:.2f}\" fill=\"#ffffff\"/>\n",
      kPlotLeft, p.plot_top, kPlotRight - kPlotLeft, kPlotHeight);

  for (long i = p.y.first; i <= p.y.last; ++i) {
    double y = y_of(p, p.y.at(i));
    put(out, "<line class=\"grid\" x1=\"{:.2f}\" y1=\"{:.2f}\" x2=\"{:.2f}\" y2=\"{:.2f}\" stroke=\"{}\" stroke-width=\"1\"/>\n",
        kPlotLeft, y, kPlotRight, y, i == 0 ? "#b0b0b0" : "#e4e4e4");
    put(out, "<text class=\"ytick\" x=\"{:.2f}\" y=\"{:.2f}\" dy=\"0.35em\" text-anchor=\"end\">{}</text>\n",
        kPlotLeft - 6.0, y, escape_xml(value_tick_label(p.y, i, p.unit)));
  }
  for (long i = L.x.first; i <= L.x.last; ++i) {
    double x = L.x_of(L.x.at(i) * L.time_unit.scale);
    put(out, "<line class=\"grid\" x1=\"{:.2f}\" y1=\"{:.2f}\" x2=\"{:.2f}\" y2=\"{:.2f}\" stroke=\"#e4e4e4\" stroke-width=\"1\"/>\n",
        x, p.plot_top, x, bottom);
    put(out, "<text class=\"xtick\" x=\"{:.2f}\" y=\"{:.2f}\" text-anchor=\"middle\">{}</text>\n", x, bottom + 15.0,
        time_tick_label(L.x, i));
  }
  double mid = p.plot_top + kPlotHeight / 2.0;
  put(out, "<text class=\"unit-label\" x=\"18\" y=\"{:.2f}\" text-anchor=\"middle\" transform=\"rotate(-90 18 {:.2f})\">{}</text>\n",
      mid, mid, escape_xml(p.unit));

  for (std::size_t k = 0; k < L.events.size(); ++k) {
    double x = L.x_of(L.events[k]);
    const bool labelled = L.label_row[k] >= 0;
    put(out, "<line class=\"event\" x1=\"{:.2f}\" y1=\"{:.2f}\" x2=\"{:.2f}\" y2=\"{:.2f}\" stroke=\"{}\" "
             "stroke-width=\"1\" stroke-dasharray=\"5,4\"/>\n",
        x, p.plot_top, x, bottom, labelled ? "#555555" : "#d8d8d8");
    if (index == 0 && L.label_row[k] >= 0) {
      put(out, "<text class=\"event-label\" x=\"{:.2f}\" y=\"{:.2f}\" font-size=\"{}\" fill=\"#333333\">{}</text>\n",
          L.label_left[k], p.plot_top - 4.0 - L.label_row[k] * kEventRow, kSmallFontSize, escape_xml(L.labels[k]));
    }
  }

  for (std::size_t k : p.series) draw_trace(out, L, p, data.series[k], kPalette[k % kPalette.size()]);
  draw_markers(out, data, L, p, draw_levels(out, data, p));

  put(out, "<rect class=\"frame\" x=\"{:.2f}\" y=\"{:.2f}\" width=\"{:.2f}\" height=\"{:.2f}\" fill=\"none\" stroke=\"#333333\" stroke-width=\"1\"/>\n",
      kPlotLeft, p.plot_top, kPlotRight - kPlotLeft, kPlotHeight);
  put(out, "</g>\n");
}

// The renderer proper: the markers' points are already part of their series.
std::string render_svg_plot_marked(const PlotData& data) {
  Layout L;
  find_time_range(data, L);
  group_panels(data, L);
  place_event_labels(data, L);
  stack_panels(data, L);

  std::string out;
  put(out, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
  put(out, "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"{0}\" height=\"{1}\" viewBox=\"0 0 {0} {1}\" "
           "font-family=\"DejaVu Sans, Arial, Helvetica, sans-serif\" font-size=\"{2}\">\n",
      kWidth, L.height, kFontSize);
  put(out, "<rect class=\"background\" x=\"0\" y=\"0\" width=\"{}\" height=\"{}\" fill=\"#ffffff\"/>\n", kWidth, L.height);
  if (!data.title.empty()) detail::draw_title(out, data.title, kWidth, kTopMargin + 18.0);
  for (std::size_t k = 0; k < L.panels.size(); ++k) draw_panel(out, data, L, k);
  if (L.panels.empty()) {
    put(out, "<text class=\"no-data\" x=\"{:.2f}\" y=\"{:.2f}\" text-anchor=\"middle\">no waveforms to plot</text>\n",
        kWidth / 2.0, L.height - 20.0);
  } else {
    put(out, "<text class=\"axis-label\" x=\"{:.2f}\" y=\"{:.2f}\" text-anchor=\"middle\">{} ({})</text>\n",
        (kPlotLeft + kPlotRight) / 2.0, L.height - 8.0, escape_xml(data.x_name), escape_xml(L.time_unit.name));
  }
  put(out, "</svg>\n");
  return out;
}

// The data with each marker's point added to its series, so that the trace passes through
// it: a spike narrower than the sample spacing would otherwise be drawn short of its marker.
PlotData with_marked_points(const PlotData& data) {
  PlotData d = data;
  for (const PlotMarker& m : data.markers) {
    if (m.series >= d.series.size() || !std::isfinite(m.t) || !std::isfinite(m.v)) continue;
    PlotSeries& s = d.series[m.series];
    const std::size_t n = sample_count(s);
    s.t.resize(n);
    s.v.resize(n);
    const auto k = std::upper_bound(s.t.begin(), s.t.end(), m.t) - s.t.begin();
    s.t.insert(s.t.begin() + k, m.t);
    s.v.insert(s.v.begin() + k, m.v);
  }
  return d;
}

}  // namespace

std::string render_svg_plot(const PlotData& data) {
  return data.markers.empty() ? render_svg_plot_marked(data) : render_svg_plot_marked(with_marked_points(data));
}

}  // namespace netfold
