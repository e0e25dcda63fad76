#pragma once
/// \file plot.hpp
/// The SVG plot of watched waveforms (`netfold solve FILE --svg OUT.svg`): one panel per
/// unit, stacked vertically, sharing a time axis, with the switching events marked.
///
/// Example:
/// \code
///   netfold::PlotData d;
///   d.title = "valve coil";
///   d.series.push_back({"coil_l.i", "A", {0.0, 0.01, 0.02}, {0.0, 0.6, 0.8}});
///   d.events = {0.0};
///   d.event_labels = {"K1 closes"};
///   std::string svg = netfold::render_svg_plot(d);  // starts with "<?xml version=\"1.0\""
/// \endcode

#include <string>
#include <vector>

namespace netfold {

/// One waveform to draw.
struct PlotSeries {
  std::string name;       ///< legend text, e.g. "coil_l.i", "@a - @b"
  std::string unit;       ///< SI unit symbol of the values: "V", "A" or "W"; one panel per distinct unit
  std::vector<double> t;  ///< s, increasing
  std::vector<double> v;  ///< values in SI base units, same length as t
};

/// (v2) A labelled point on a series: `solve --svg` marks the peak of each trace, `worst --svg`
/// the worst and best of each quantity.
struct PlotMarker {
  std::size_t series = 0;  ///< index into PlotData::series: the marker is drawn in its panel, in its colour
  double t = 0.0;          ///< horizontal position, in the axis's SI unit (s for time)
  double v = 0.0;          ///< value, SI
  std::string label;       ///< e.g. "peak 1.06 A at 12.3 ms"
};

/// (v2) A labelled horizontal line across the panel of a unit: a rating, a steady-state peak.
struct PlotLevel {
  std::string unit;    ///< the panel's unit; a level whose unit has no panel is not drawn
  double v = 0.0;      ///< SI
  std::string label;   ///< drawn above the line at its right end, e.g. "K1 rated 60 A"
  bool limit = false;  ///< a rating (drawn red), else a reference (grey)
};

/// What to draw.
struct PlotData {
  std::string title;                      ///< may be empty
  std::vector<PlotSeries> series;         ///< drawn in this order; panels in the order units first appear
  std::vector<double> events;             ///< switching instants (s), dashed vertical lines in every panel
  std::vector<std::string> event_labels;  ///< optional, same length as events (e.g. "K1 closes"), may be empty
  std::vector<PlotMarker> markers;        ///< (v2) labelled points on series
  /// (v2) Labelled horizontal lines. A level more than 3 times the largest |value| of its panel
  /// would flatten the traces: it is named in the panel's corner ("off scale") instead.
  std::vector<PlotLevel> levels;
  /// Name of the horizontal axis ("t" for time; `worst --svg`: the sweep target).
  std::string x_name = "t";
  /// Unit of the horizontal axis: "s" (labelled in s, ms, µs or ns as fits), or any other
  /// symbol drawn as given ("°", "V", "A").
  std::string x_unit = "s";
};

/// Renders an SVG 1.1 document (UTF-8), 900 px wide, one panel per unit stacked vertically.
///
/// The time axis is labelled "t (s)", "t (ms)", "t (µs)" or "t (ns)" as fits the time span of
/// the data; y ticks are 1, 2 or 5 × 10^k steps with SI-prefixed labels ("-500 mV", "1.5 kV").
/// Series longer than the plot is wide are reduced to the first, minimum, maximum and last
/// sample of each pixel column, so every peak is kept. Non-finite samples are skipped (the
/// line breaks there); events outside the data's time span are not drawn. The output depends
/// only on `data`: same input, same bytes. A title wider than the page is drawn in a smaller
/// font so that it fits.
std::string render_svg_plot(const PlotData& data);

}  // namespace netfold
