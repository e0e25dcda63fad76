// The map of a two-target sweep: one rectangle per grid point (its cell reaches halfway to
// the neighbouring points), coloured by the peak on a perceptually uniform scale.
#include "report/plot_map.hpp"

#include <algorithm>
#include <array>
#include <cmath>

#include "report/plot_axes.hpp"
#include "report/xml_text.hpp"

namespace netfold::detail {

namespace {

constexpr double kWidth = 900.0;
constexpr double kLeft = 96.0, kRight = 720.0;
constexpr double kTop = 80.0, kHeight = 330.0;
constexpr double kBarLeft = 760.0, kBarWidth = 18.0;
constexpr double kFont = 12.0;
constexpr double kHuge = 1e300;

// Anchor colours of the viridis scale (S. van der Walt and N. Smith, matplotlib, 2015; from
// memory): perceptually uniform, readable in grey and with the common colour-vision
// deficiencies. Low values dark blue, high values yellow.
constexpr std::array<std::array<int, 3>, 9> kViridis{{{68, 1, 84},
                                                       {71, 44, 122},
                                                       {59, 81, 139},
                                                       {44, 113, 142},
                                                       {33, 144, 141},
                                                       {39, 173, 129},
                                                       {92, 200, 99},
                                                       {170, 220, 50},
                                                       {253, 231, 37}}};

std::string colour_of(double u) {
  if (!std::isfinite(u)) u = 0.0;
  u = std::clamp(u, 0.0, 1.0) * static_cast<double>(kViridis.size() - 1);
  const std::size_t k = std::min(static_cast<std::size_t>(u), kViridis.size() - 2);
  const double f = u - static_cast<double>(k);
  std::array<int, 3> c{};
  for (std::size_t i = 0; i < 3; ++i)
    c[i] = static_cast<int>(std::lround(kViridis[k][i] + f * (kViridis[k + 1][i] - kViridis[k][i])));
  return fmt::format("#{:02x}{:02x}{:02x}", c[0], c[1], c[2]);
}

std::string esc(const std::string& s) { return escape_xml(s, XmlControls::svg_line); }

// Cell edges: halfway between neighbouring grid points, the ends at the first and last point.
std::vector<double> edges(const std::vector<double>& g) {
  std::vector<double> e{g.front()};
  for (std::size_t k = 0; k + 1 < g.size(); ++k) e.push_back(0.5 * (g[k] + g[k + 1]));
  e.push_back(g.back());
  return e;
}

std::string plain_tick(const Ticks& t, long i) {
  if (i == 0) return "0";
  return fmt::format("{:.{}f}", t.at(i), std::max(0, -t.exponent));
}

struct Frame {
  double x0, x1, y0, y1;
  double px(double x) const { return kLeft + (x - x0) / (x1 - x0) * (kRight - kLeft); }
  double py(double y) const { return kTop + kHeight - (y - y0) / (y1 - y0) * kHeight; }
};

void draw_axes(std::string& out, const MapData& d, const Frame& f) {
  const Ticks tx = choose_ticks(f.x0, f.x1, false), ty = choose_ticks(f.y0, f.y1, false);
  const double bottom = kTop + kHeight;
  for (long i = tx.first; i <= tx.last; ++i) {
    const double x = f.px(tx.at(i));
    put(out, "<line class=\"tick\" x1=\"{:.2f}\" y1=\"{:.2f}\" x2=\"{:.2f}\" y2=\"{:.2f}\" stroke=\"#333333\"/>\n", x,
        bottom, x, bottom + 5.0);
    put(out, "<text class=\"xtick\" x=\"{:.2f}\" y=\"{:.2f}\" text-anchor=\"middle\">{}</text>\n", x, bottom + 18.0,
        plain_tick(tx, i));
  }
  for (long i = ty.first; i <= ty.last; ++i) {
    const double y = f.py(ty.at(i));
    put(out, "<line class=\"tick\" x1=\"{:.2f}\" y1=\"{:.2f}\" x2=\"{:.2f}\" y2=\"{:.2f}\" stroke=\"#333333\"/>\n",
        kLeft - 5.0, y, kLeft, y);
    put(out, "<text class=\"ytick\" x=\"{:.2f}\" y=\"{:.2f}\" dy=\"0.35em\" text-anchor=\"end\">{}</text>\n", kLeft - 8.0,
        y, plain_tick(ty, i));
  }
  put(out, "<rect class=\"frame\" x=\"{:.2f}\" y=\"{:.2f}\" width=\"{:.2f}\" height=\"{:.2f}\" fill=\"none\" stroke=\"#333333\"/>\n",
      kLeft, kTop, kRight - kLeft, kHeight);
  put(out, "<text class=\"axis-label\" x=\"{:.2f}\" y=\"{:.2f}\" text-anchor=\"middle\">{} ({})</text>\n",
      (kLeft + kRight) / 2.0, bottom + 38.0, esc(d.x_name), esc(d.x_unit));
  const double mid = kTop + kHeight / 2.0;
  put(out, "<text class=\"axis-label\" x=\"22\" y=\"{:.2f}\" text-anchor=\"middle\" transform=\"rotate(-90 22 {:.2f})\">{} ({})</text>\n",
      mid, mid, esc(d.y_name), esc(d.y_unit));
}

// A map whose values agree to 1e-9 is one value: drawn in one colour, not its rounding noise
// stretched over the scale.
bool flat(double lo, double hi) { return !(hi - lo > 1e-9 * std::max(std::fabs(lo), std::fabs(hi))); }

void draw_scale(std::string& out, const MapData& d, double lo, double hi) {
  constexpr int kSteps = 64;
  for (int k = 0; k < kSteps && !flat(lo, hi); ++k) {
    const double y = kTop + kHeight * (1.0 - static_cast<double>(k + 1) / kSteps);
    put(out, "<rect class=\"scale\" x=\"{:.2f}\" y=\"{:.2f}\" width=\"{:.2f}\" height=\"{:.2f}\" fill=\"{}\"/>\n", kBarLeft,
        y, kBarWidth, kHeight / kSteps + 0.5, colour_of((k + 0.5) / kSteps));
  }
  if (flat(lo, hi))
    put(out, "<rect class=\"scale\" x=\"{:.2f}\" y=\"{:.2f}\" width=\"{:.2f}\" height=\"{:.2f}\" fill=\"{}\"/>\n", kBarLeft,
        kTop, kBarWidth, kHeight, colour_of(0.5));
  put(out, "<rect class=\"scale-frame\" x=\"{:.2f}\" y=\"{:.2f}\" width=\"{:.2f}\" height=\"{:.2f}\" fill=\"none\" stroke=\"#333333\"/>\n",
      kBarLeft, kTop, kBarWidth, kHeight);
  if (flat(lo, hi)) {
    put(out, "<text class=\"scale-tick\" x=\"{:.2f}\" y=\"{:.2f}\" dy=\"0.35em\">{}</text>\n", kBarLeft + kBarWidth + 7.0,
        kTop + kHeight / 2.0, esc(format_si(hi, d.z_unit.c_str(), 4)));
  } else {
    const Ticks t = choose_ticks(lo, hi, false, 3, 8);
    for (long i = t.first; i <= t.last; ++i) {
      const double y = kTop + kHeight * (1.0 - (t.at(i) - lo) / (hi - lo));
      put(out, "<line class=\"tick\" x1=\"{:.2f}\" y1=\"{:.2f}\" x2=\"{:.2f}\" y2=\"{:.2f}\" stroke=\"#333333\"/>\n",
          kBarLeft + kBarWidth, y, kBarLeft + kBarWidth + 4.0, y);
      put(out, "<text class=\"scale-tick\" x=\"{:.2f}\" y=\"{:.2f}\" dy=\"0.35em\">{}</text>\n", kBarLeft + kBarWidth + 7.0, y,
          esc(value_tick_label(t, i, d.z_unit)));
    }
  }
  put(out, "<text class=\"scale-label\" x=\"{:.2f}\" y=\"{:.2f}\" text-anchor=\"middle\">{} ({})</text>\n",
      kBarLeft + kBarWidth / 2.0 + 20.0, kTop - 10.0, esc(d.z_name), esc(d.z_unit));
}

void draw_marks(std::string& out, const MapData& d, const Frame& f) {
  std::vector<std::array<double, 4>> taken;  // label boxes: left, top, right, bottom
  for (const MapMark& m : d.marks) {
    if (!std::isfinite(m.x) || !std::isfinite(m.y)) continue;
    const double x = f.px(std::clamp(m.x, f.x0, f.x1)), y = f.py(std::clamp(m.y, f.y0, f.y1));
    if (m.worst)
      put(out, "<circle class=\"mark-worst\" cx=\"{:.2f}\" cy=\"{:.2f}\" r=\"7\" fill=\"none\" stroke=\"#ffffff\" stroke-width=\"4\"/>\n"
               "<circle cx=\"{:.2f}\" cy=\"{:.2f}\" r=\"7\" fill=\"none\" stroke=\"#000000\" stroke-width=\"2\"/>\n",
          x, y, x, y);
    else
      put(out, "<path class=\"mark-best\" d=\"M{:.2f},{:.2f}l7,7l-7,7l-7,-7z\" fill=\"#ffffff\" stroke=\"#000000\" stroke-width=\"2\"/>\n",
          x, y - 7.0);
    // Above right, above left, below right, below left: the first inside the map and clear
    // of the labels already placed.
    const double w = text_width(m.label, kFont);
    double lx = x + 12.0, ly = y - 10.0;
    int chosen = -1, fallback = -1;
    for (int place = 0; place < 4 && chosen < 0; ++place) {
      const double cx = place % 2 ? x - 12.0 - w : x + 12.0, cy = place < 2 ? y - 10.0 : y + kFont + 12.0;
      const bool inside = cx - 3.0 >= kLeft && cx + w + 3.0 <= kRight && cy - kFont >= kTop && cy + 5.0 <= kTop + kHeight;
      const bool clear = std::none_of(taken.begin(), taken.end(), [&](const std::array<double, 4>& b) {
        return cx - 3.0 < b[2] && b[0] < cx + w + 3.0 && cy - kFont < b[3] && b[1] < cy + 5.0;
      });
      if (inside && clear) chosen = place;
      if (inside && fallback < 0) fallback = place;
    }
    if (chosen < 0) chosen = std::max(fallback, 0);
    lx = chosen % 2 ? x - 12.0 - w : x + 12.0;
    ly = chosen < 2 ? y - 10.0 : y + kFont + 12.0;
    taken.push_back({lx - 3.0, ly - kFont, lx + w + 3.0, ly + 5.0});
    put(out, "<rect class=\"label-box\" x=\"{:.2f}\" y=\"{:.2f}\" width=\"{:.2f}\" height=\"{:.2f}\" fill=\"#ffffff\" "
             "fill-opacity=\"0.9\" stroke=\"#333333\" stroke-width=\"0.5\"/>\n",
        lx - 3.0, ly - kFont, w + 6.0, kFont + 5.0);
    put(out, "<text class=\"mark-label\" x=\"{:.2f}\" y=\"{:.2f}\">{}</text>\n", lx, ly, esc(m.label));
  }
}

}  // namespace

std::string render_svg_map(const MapData& d) {
  const double height = std::ceil(kTop + kHeight + 50.0 + 16.0 * static_cast<double>(d.notes.size() + 1) + 10.0);
  std::string out;
  put(out, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
  put(out, "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"{0}\" height=\"{1}\" viewBox=\"0 0 {0} {1}\" "
           "font-family=\"DejaVu Sans, Arial, Helvetica, sans-serif\" font-size=\"{2}\">\n",
      kWidth, height, kFont);
  put(out, "<rect class=\"background\" x=\"0\" y=\"0\" width=\"{}\" height=\"{}\" fill=\"#ffffff\"/>\n", kWidth, height);
  draw_title(out, d.title, kWidth, 28.0);  // kTop leaves room for a second title line
  const std::size_t nx = d.x.size(), ny = d.y.size();
  if (nx < 2 || ny < 2 || d.z.size() != nx * ny) {
    put(out, "<text class=\"no-data\" x=\"{:.2f}\" y=\"{:.2f}\" text-anchor=\"middle\">no map to draw</text>\n</svg>\n",
        kWidth / 2.0, kTop + kHeight / 2.0);
    return out;
  }
  double lo = kHuge, hi = -kHuge;
  for (double v : d.z)
    if (std::isfinite(v)) lo = std::min(lo, v), hi = std::max(hi, v);
  // The colour scale spans at least 1 % of the largest value: differences at the level of
  // rounding are not stretched over the whole scale (a near-constant map reads as one colour).
  if (!flat(lo, hi)) lo = std::min(lo, hi - 0.01 * std::max(std::fabs(hi), std::fabs(lo)));
  const Frame f{d.x.front(), d.x.back(), d.y.front(), d.y.back()};
  const std::vector<double> ex = edges(d.x), ey = edges(d.y);
  put(out, "<g class=\"cells\" shape-rendering=\"crispEdges\">\n");
  for (std::size_t j = 0; j < ny; ++j)
    for (std::size_t i = 0; i < nx; ++i) {
      const double v = d.z[i + j * nx];
      const double x0 = f.px(ex[i]), x1 = f.px(ex[i + 1]), y0 = f.py(ey[j + 1]), y1 = f.py(ey[j]);
      put(out, "<rect x=\"{:.2f}\" y=\"{:.2f}\" width=\"{:.2f}\" height=\"{:.2f}\" fill=\"{}\"/>\n", x0, y0, x1 - x0 + 0.3,
          y1 - y0 + 0.3, std::isfinite(v) ? colour_of(flat(lo, hi) ? 0.5 : (v - lo) / (hi - lo)) : std::string("#ffffff"));
    }
  put(out, "</g>\n");
  draw_axes(out, d, f);
  draw_scale(out, d, lo, hi);
  draw_marks(out, d, f);
  std::vector<std::string> notes = d.notes;
  if (flat(lo, hi))
    notes.push_back(fmt::format("{} is {} at every point of the map (to 1e-9)", d.z_name, format_si(hi, d.z_unit.c_str(), 4)));
  for (std::size_t k = 0; k < notes.size(); ++k)
    put(out, "<text class=\"note\" x=\"{:.2f}\" y=\"{:.2f}\" font-size=\"{}\">{}</text>\n", kLeft,
        kTop + kHeight + 62.0 + 16.0 * static_cast<double>(k), kFont, esc(notes[k]));
  put(out, "</svg>\n");
  return out;
}

}  // namespace netfold::detail
