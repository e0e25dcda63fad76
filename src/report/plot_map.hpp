#pragma once
// The map of a two-target sweep (`worst --svg`): the peak of one quantity coloured over the
// grid of the two arguments, with a colour scale, the worst and best points marked.
#include <string>
#include <vector>

namespace netfold::detail {

struct MapMark {
  double x = 0.0, y = 0.0;  ///< in the axes' display units
  std::string label;        ///< beside the mark, e.g. "worst 48.19 A"
  bool worst = true;        ///< a ring (worst) or a diamond (best)
};

struct MapData {
  std::string title;
  std::string x_name, x_unit, y_name, y_unit;  ///< axes, e.g. "mains.phase", "°"
  std::vector<double> x, y;                    ///< grid, display units, increasing
  std::vector<double> z;                       ///< [i + j·x.size()], SI
  std::string z_name, z_unit;                  ///< "K1.i peak", "A"
  std::vector<MapMark> marks;
  std::vector<std::string> notes;  ///< lines under the map (the marks' full arguments)
};

/// An SVG 1.1 document, 900 px wide: the map, its colour scale, axes with units, the marks.
std::string render_svg_map(const MapData& data);

}  // namespace netfold::detail
