// Tests of the SVG plot: well-formed XML, one panel per unit, legends, events, axis units,
// SI tick labels, peak-preserving decimation and robustness to odd data.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <limits>
#include <locale>
#include <string>
#include <vector>

#include <unistd.h>

#include "temp_dir.hpp"
#include "netfold/plot.hpp"

using namespace netfold;

namespace {

// n samples of f(t) on [t0, t1].
template <typename F>
PlotSeries sampled(std::string name, std::string unit, double t0, double t1, std::size_t n, F f) {
  PlotSeries s{std::move(name), std::move(unit), {}, {}};
  s.t.reserve(n);
  s.v.reserve(n);
  for (std::size_t i = 0; i < n; ++i) {
    double t = t0 + (t1 - t0) * static_cast<double>(i) / static_cast<double>(n - 1);
    s.t.push_back(t);
    s.v.push_back(f(t));
  }
  return s;
}

PlotSeries ramp(std::string name, std::string unit, double t1, double v0, double v1) {
  return sampled(std::move(name), std::move(unit), 0.0, t1, 101, [=](double t) { return v0 + (v1 - v0) * t / t1; });
}

std::size_t count_of(const std::string& text, const std::string& needle) {
  std::size_t n = 0;
  for (std::size_t at = text.find(needle); at != std::string::npos; at = text.find(needle, at + needle.size())) ++n;
  return n;
}

// Every element that starts with `opening` (e.g. "<text class=\"ytick\""), up to its end tag
// or self-closing end. Plain find, not std::regex: paths run to tens of kilobytes.
std::vector<std::string> elements(const std::string& svg, const std::string& opening) {
  std::vector<std::string> out;
  for (std::size_t at = svg.find(opening); at != std::string::npos; at = svg.find(opening, at + 1)) {
    std::size_t end = svg.find('>', at);
    if (end != std::string::npos && svg[end - 1] != '/') {
      std::size_t close = svg.find("</", end);
      end = svg.find('>', close);
    }
    out.push_back(svg.substr(at, end - at + 1));
  }
  return out;
}

std::string attribute(const std::string& element, const std::string& name) {
  std::string key = " " + name + "=\"";
  std::size_t at = element.find(key);
  if (at == std::string::npos) return {};
  at += key.size();
  return element.substr(at, element.find('"', at) - at);
}

std::string text_of(const std::string& element) {
  std::size_t open = element.find('>');
  std::size_t close = element.find("</", open);
  return element.substr(open + 1, close - open - 1);
}

std::vector<std::string> texts(const std::string& svg, const std::string& cls) {
  std::vector<std::string> out;
  for (const std::string& e : elements(svg, "<text class=\"" + cls + "\"")) out.push_back(text_of(e));
  return out;
}

bool contains(const std::vector<std::string>& v, const std::string& x) { return std::find(v.begin(), v.end(), x) != v.end(); }

// y of the value-axis tick labelled `label`; NaN when there is none.
double tick_y(const std::string& svg, const std::string& label) {
  for (const std::string& e : elements(svg, "<text class=\"ytick\""))
    if (text_of(e) == label) return std::stod(attribute(e, "y"));
  return std::numeric_limits<double>::quiet_NaN();
}

struct Point {
  double x, y;
};

// Points of the first trace's path, "M x,y L x,y ...".
std::vector<Point> trace_points(const std::string& svg, std::size_t* moves = nullptr) {
  std::vector<Point> out;
  auto paths = elements(svg, "<path class=\"trace\"");
  if (paths.empty()) return out;
  std::string d = attribute(paths.front(), "d");
  if (moves) *moves = count_of(d, "M");
  const char* p = d.c_str();
  while (*p) {
    if (*p == 'M' || *p == 'L') ++p;
    char* end = nullptr;
    double x = std::strtod(p, &end);
    if (end == p || *end != ',') break;
    p = end + 1;
    double y = std::strtod(p, &end);
    if (end == p) break;
    p = end;
    out.push_back({x, y});
  }
  return out;
}

// Parses `svg` with Python's XML parser; false when it is not well-formed.
bool well_formed(const std::string& svg, bool quiet = false) {
  netfold_test::TempDir dir("plot");
  const auto path = dir.path() / "plot.svg";
  netfold_test::write_file(path, svg);
  std::string command = "/usr/bin/python3 -c \"import xml.dom.minidom,sys; xml.dom.minidom.parse(sys.argv[1])\" '" +
                        path.string() + "'" + (quiet ? " 2>/dev/null" : "");
  return std::system(command.c_str()) == 0;
}

bool have_python() { return std::filesystem::exists("/usr/bin/python3"); }

PlotData coil_plot() {
  PlotData d;
  d.title = "valve coil: K1 closes at 2 ms";
  d.series.push_back(ramp("@a - @b", "V", 0.084, 24.0, -0.5));
  d.series.push_back(ramp("coil_l.i", "A", 0.084, 0.0, 0.45));
  d.series.push_back(ramp("r1.v", "V", 0.084, 0.0, 12.0));
  d.series.push_back(ramp("r1.p", "W", 0.084, 0.0, 3.0));
  d.events = {0.002, 0.040};
  d.event_labels = {"K1 closes", "K1 opens"};
  return d;
}

}  // namespace

TEST_CASE("the output is a well-formed SVG document even with hostile names", "[plot]") {
  PlotData d = coil_plot();
  d.title = "a <b> & \"c\" 'd'";
  d.series[0].name = "x<y & z>\"w\"'";
  d.series[1].name = std::string("ctl\x01" "bad\xFF" "utf8 \xC3\xA9 ok");
  std::string svg = render_svg_plot(d);
  CHECK(svg.rfind("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\"", 0) == 0);
  CHECK(svg.find("</svg>") != std::string::npos);
  if (!have_python()) {
    WARN("/usr/bin/python3 is absent: XML well-formedness not checked");
    return;
  }
  CHECK(well_formed(svg));
  CHECK(well_formed(render_svg_plot(PlotData{})));
  // The checker itself must be able to fail.
  CHECK_FALSE(well_formed("<svg><g></svg>", true));
}

TEST_CASE("one panel is drawn per distinct unit, in the order the units first appear", "[plot]") {
  std::string svg = render_svg_plot(coil_plot());
  CHECK(count_of(svg, "<g class=\"panel\"") == 3);
  CHECK(texts(svg, "unit-label") == std::vector<std::string>{"V", "A", "W"});
  CHECK(count_of(svg, "<path class=\"trace\"") == 4);

  PlotData one;
  one.series.push_back(ramp("a", "A", 1.0, 0.0, 1.0));
  one.series.push_back(ramp("b", "A", 1.0, 1.0, 0.0));
  CHECK(count_of(render_svg_plot(one), "<g class=\"panel\"") == 1);
}

TEST_CASE("the legend shows every series name, XML-escaped, with a colour swatch each", "[plot]") {
  PlotData d = coil_plot();
  d.series[1].name = "i<\"R&L\">'s";
  std::string svg = render_svg_plot(d);
  CHECK(svg.find("i&lt;&quot;R&amp;L&quot;&gt;&apos;s") != std::string::npos);
  CHECK(svg.find("i<\"R&L") == std::string::npos);
  CHECK(svg.find(">@a - @b<") != std::string::npos);
  CHECK(svg.find(">coil_l.i<") == std::string::npos);
  CHECK(svg.find(">r1.v<") != std::string::npos);
  CHECK(svg.find(">r1.p<") != std::string::npos);
  auto swatches = elements(svg, "<rect class=\"swatch\"");
  REQUIRE(swatches.size() == 4);
  std::vector<std::string> colours;
  for (const auto& s : swatches) colours.push_back(attribute(s, "fill"));
  std::sort(colours.begin(), colours.end());
  CHECK(std::unique(colours.begin(), colours.end()) == colours.end());
}

TEST_CASE("the title is drawn at the top, XML-escaped", "[plot]") {
  PlotData d = coil_plot();
  d.title = "R&D <draft>";
  std::string svg = render_svg_plot(d);
  CHECK(texts(svg, "title") == std::vector<std::string>{"R&amp;D &lt;draft&gt;"});
  d.title.clear();
  CHECK(texts(render_svg_plot(d), "title").empty());
}

TEST_CASE("each switching event is a dashed line in every panel and labelled once", "[plot]") {
  PlotData d = coil_plot();  // 3 panels, 2 events
  std::string svg = render_svg_plot(d);
  CHECK(count_of(svg, "stroke-dasharray") == 6);
  CHECK(count_of(svg, "<line class=\"event\"") == 6);
  CHECK(texts(svg, "event-label") == std::vector<std::string>{"K1 closes", "K1 opens"});

  // The labels sit above the first panel's plot area.
  auto area = elements(svg, "<rect class=\"plot-area\"").front();
  double plot_top = std::stod(attribute(area, "y"));
  for (const auto& e : elements(svg, "<text class=\"event-label\"")) CHECK(std::stod(attribute(e, "y")) < plot_top);

  // Labels of events close together go on separate rows, whatever the order of the events.
  d.events = {0.0401, 0.040, 0.002};
  d.event_labels = {"D1 conducts", "K1 opens", "K1 closes"};
  svg = render_svg_plot(d);
  auto labels = elements(svg, "<text class=\"event-label\"");
  REQUIRE(labels.size() == 3);
  CHECK(attribute(labels[0], "y") != attribute(labels[1], "y"));
  CHECK(attribute(labels[1], "y") == attribute(labels[2], "y"));

  // Labels are optional; an event outside the data's time span is not drawn.
  d.event_labels.clear();
  d.events = {0.002, 0.040, 1.0};
  svg = render_svg_plot(d);
  CHECK(count_of(svg, "stroke-dasharray") == 6);
  CHECK(texts(svg, "event-label").empty());
}

TEST_CASE("the time axis unit fits the span of the data", "[plot]") {
  auto axis_label = [](double span) {
    PlotData d;
    d.series.push_back(ramp("x", "V", span, 0.0, 1.0));
    return texts(render_svg_plot(d), "axis-label");
  };
  CHECK(axis_label(0.084) == std::vector<std::string>{"t (ms)"});
  CHECK(axis_label(500e-6) == std::vector<std::string>{"t (µs)"});
  CHECK(axis_label(3.0) == std::vector<std::string>{"t (s)"});
  CHECK(axis_label(20e-9) == std::vector<std::string>{"t (ns)"});

  PlotData d;
  d.series.push_back(ramp("x", "V", 0.084, 0.0, 1.0));
  CHECK(texts(render_svg_plot(d), "xtick") == std::vector<std::string>{"0", "20", "40", "60", "80"});
  d.series[0] = ramp("x", "V", 500e-6, 0.0, 1.0);
  CHECK(texts(render_svg_plot(d), "xtick") == std::vector<std::string>{"0", "100", "200", "300", "400", "500"});
  d.series[0] = ramp("x", "V", 3.0, 0.0, 1.0);
  CHECK(texts(render_svg_plot(d), "xtick") ==
        std::vector<std::string>{"0", "0.5", "1.0", "1.5", "2.0", "2.5", "3.0"});
}

TEST_CASE("value ticks are 1, 2 or 5 steps with SI-prefixed labels and a plain zero", "[plot]") {
  auto labels = [](double lo, double hi, const char* unit) {
    PlotData d;
    d.series.push_back(ramp("x", unit, 0.01, lo, hi));
    return texts(render_svg_plot(d), "ytick");
  };
  CHECK(labels(-0.5, 1.5, "V") == std::vector<std::string>{"-500 mV", "0", "500 mV", "1 V", "1.5 V"});
  CHECK(labels(0.0, 1500.0, "V") == std::vector<std::string>{"0", "500 V", "1 kV", "1.5 kV"});
  CHECK(labels(0.0, 0.1, "A") == std::vector<std::string>{"0", "20 mA", "40 mA", "60 mA", "80 mA", "100 mA"});
  CHECK(labels(-3.7, 2.2, "W") == std::vector<std::string>{"-4 W", "-3 W", "-2 W", "-1 W", "0", "1 W", "2 W", "3 W"});

  // Whatever the range, 4 to 8 ticks, evenly spaced, and the data inside them.
  for (double hi : {0.013, 0.7, 3.3, 47.0, 999.0, 1234.5, 2.2e5}) {
    PlotData d;
    d.series.push_back(ramp("x", "V", 0.01, -0.3 * hi, hi));
    std::string svg = render_svg_plot(d);
    auto ticks = elements(svg, "<text class=\"ytick\"");
    INFO("hi = " << hi);
    CHECK(ticks.size() >= 4);
    CHECK(ticks.size() <= 8);
    std::vector<double> ys;
    for (const auto& t : ticks) ys.push_back(std::stod(attribute(t, "y")));
    for (std::size_t k = 2; k < ys.size(); ++k) CHECK(ys[k] - ys[k - 1] == Approx(ys[1] - ys[0]).margin(0.02));
    auto points = trace_points(svg);
    REQUIRE_FALSE(points.empty());
    for (const auto& p : points) {
      CHECK(p.y <= ys.front() + 1e-9);
      CHECK(p.y >= ys.back() - 1e-9);
    }
  }
}

TEST_CASE("a spike in a series of a million samples survives decimation", "[plot]") {
  constexpr std::size_t kSamples = 1'000'000;
  constexpr std::size_t kUp = 123'457, kDown = 876'543;
  PlotSeries s = sampled("spiky", "V", 0.0, 0.084, kSamples, [](double) { return 0.0; });
  s.v[kUp] = 1.0;
  s.v[kDown] = -0.5;
  PlotData d;
  d.series.push_back(s);
  std::string svg = render_svg_plot(d);
  CHECK(svg.size() < 500'000);

  double top = tick_y(svg, "1 V");
  double bottom = tick_y(svg, "-500 mV");
  REQUIRE(std::isfinite(top));
  REQUIRE(std::isfinite(bottom));
  auto points = trace_points(svg);
  REQUIRE(points.size() > 100);
  CHECK(points.size() < 5000);
  double highest = points.front().y, lowest = points.front().y;
  for (const auto& p : points) {
    highest = std::min(highest, p.y);
    lowest = std::max(lowest, p.y);
  }
  CHECK(highest == Approx(top).margin(0.01));
  CHECK(lowest == Approx(bottom).margin(0.01));

  // The spike is drawn where it happens, too.
  double x0 = points.front().x, x1 = points.back().x;
  auto at_top = std::find_if(points.begin(), points.end(), [&](const Point& p) { return std::fabs(p.y - top) < 0.01; });
  REQUIRE(at_top != points.end());
  CHECK(at_top->x == Approx(x0 + (x1 - x0) * static_cast<double>(kUp) / (kSamples - 1)).margin(0.01));
}

TEST_CASE("non-finite samples are skipped and never written", "[plot]") {
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const double inf = std::numeric_limits<double>::infinity();
  PlotSeries s = ramp("x", "A", 0.01, 0.0, 2.0);
  s.v[10] = nan;
  s.v[50] = inf;
  s.v[51] = -inf;
  s.t[80] = nan;
  PlotData d;
  d.series.push_back(s);
  d.series.push_back(PlotSeries{"all bad", "W", {0.0, 0.01}, {nan, inf}});
  d.events = {nan, 0.005, inf};
  d.event_labels = {"a", "b", "c"};
  std::string svg = render_svg_plot(d);
  std::string lower = svg;
  std::transform(lower.begin(), lower.end(), lower.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  CHECK(lower.find("nan") == std::string::npos);
  CHECK(lower.find("inf") == std::string::npos);
  std::size_t moves = 0;
  auto points = trace_points(svg, &moves);
  CHECK(points.size() == 101 - 4);
  CHECK(moves == 4);  // the line breaks at each gap
  CHECK(count_of(svg, "<g class=\"panel\"") == 2);
  CHECK(count_of(svg, "stroke-dasharray") == 2);
  if (have_python()) CHECK(well_formed(svg));
}

TEST_CASE("constant, all-zero and single-sample series draw without dividing by zero", "[plot]") {
  PlotData d;
  d.series.push_back(PlotSeries{"constant", "V", {0.0, 0.001, 0.002}, {5.0, 5.0, 5.0}});
  d.series.push_back(PlotSeries{"zero", "A", {0.0, 0.001, 0.002}, {0.0, 0.0, 0.0}});
  d.series.push_back(PlotSeries{"one", "W", {0.0}, {-2.0}});
  std::string svg = render_svg_plot(d);
  std::string lower = svg;
  std::transform(lower.begin(), lower.end(), lower.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  CHECK(lower.find("nan") == std::string::npos);
  CHECK(lower.find("inf") == std::string::npos);
  auto ticks = texts(svg, "ytick");
  CHECK(contains(ticks, "5 V"));
  CHECK(contains(ticks, "-1 A"));
  CHECK(contains(ticks, "1 A"));
  CHECK(contains(ticks, "-2 W"));
  CHECK(count_of(svg, "<g class=\"panel\"") == 3);
  if (have_python()) CHECK(well_formed(svg));

  // Extreme finite values do not overflow the axis arithmetic.
  PlotData huge;
  huge.series.push_back(PlotSeries{"huge", "V", {0.0, 1.0}, {-1.7e308, 1.7e308}});
  std::string hsvg = render_svg_plot(huge);
  CHECK(hsvg.find("nan") == std::string::npos);
  CHECK(hsvg.find("inf") == std::string::npos);
  CHECK(trace_points(hsvg).size() == 2);

  // A constant series lies on its tick.
  PlotData c;
  c.series.push_back(d.series[0]);
  std::string csvg = render_svg_plot(c);
  for (const auto& p : trace_points(csvg)) CHECK(p.y == Approx(tick_y(csvg, "5 V")).margin(0.01));
}

TEST_CASE("the same data renders to the same bytes, with '.' decimals whatever the locale", "[plot]") {
  PlotData d = coil_plot();
  std::string first = render_svg_plot(d);
  CHECK(render_svg_plot(d) == first);
  CHECK(first.find("x1=\"") != std::string::npos);
  // Coordinates carry exactly two decimals.
  auto areas = elements(first, "<rect class=\"plot-area\"");
  REQUIRE_FALSE(areas.empty());
  std::string x = attribute(areas.front(), "x");
  CHECK(x.size() >= 4);
  CHECK(x[x.size() - 3] == '.');

  std::locale saved;
  bool switched = false;
  for (const char* name : {"de_DE.UTF-8", "fr_FR.UTF-8", "de_DE.utf8", "fr_FR.utf8"}) {
    try {
      std::locale::global(std::locale(name));
      switched = true;
      break;
    } catch (const std::runtime_error&) {
    }
  }
  if (!switched) {
    WARN("no locale with a decimal comma is installed: locale independence not checked");
    return;
  }
  std::string german = render_svg_plot(d);
  std::locale::global(saved);
  CHECK(german == first);
}
