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
#include "netfold/parse.hpp"
#include "netfold/plot.hpp"
#include "netfold/report.hpp"
#include "netfold/worst.hpp"

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

namespace {

// The x and y attributes of an SVG element as numbers.
std::pair<double, double> position(const std::string& element, const char* x = "x", const char* y = "y") {
  return {std::stod(attribute(element, x)), std::stod(attribute(element, y))};
}

}  // namespace

TEST_CASE("solve's plot marks the peak of each trace with its value and time, its rating and the events", "[plot]") {
  // A 10 V source charges 1 µF through 1 kohm from 1 ms (τ = 1 ms): the largest |v_C| in the
  // window 0 .. 6 ms is at its end, 10 V·(1 − e⁻⁵) = 9.933 V (derived by hand).
  Circuit c = parse_netlist("V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 1 ms\n"
                            "R1: resistor b -> c, 1 kohm\nC1: capacitor c -> gnd, 1 uF, initial 0 V, rated 16 V\n"
                            "watch C1.v\nwindow 0 .. 6 ms\n",
                            "rc_charge.nf");
  const std::string svg = render_svg_plot(plot_data(solve(c)));
  CHECK(texts(svg, "marker-label") == std::vector<std::string>{"peak 9.933 V at 6 ms"});
  auto marker = elements(svg, "<circle class=\"marker\"");
  REQUIRE(marker.size() == 1);
  CHECK(position(marker.front(), "cx", "cy").first == Approx(880.0));  // the right end of the time axis
  CHECK(texts(svg, "level-label") == std::vector<std::string>{"C1 rated 16 V"});
  auto rating = elements(svg, "<line class=\"rating\"");
  REQUIRE(rating.size() == 1);
  // The rating's line lies above the peak (a smaller y), inside the plot area.
  CHECK(std::stod(attribute(rating.front(), "y1")) < position(marker.front(), "cx", "cy").second);
  CHECK(texts(svg, "event-label") == std::vector<std::string>{"K1 closes"});
}

TEST_CASE("a level far beyond a panel's values is named off scale instead of flattening the traces", "[plot]") {
  PlotData d;
  d.series.push_back(ramp("C1.v", "V", 1.0, 0.0, 1.0));
  d.levels.push_back({"V", 100.0, "C1 rated 100 V", true});
  d.levels.push_back({"V", 1.5, "C1.v steady peak 1.5 V", false});
  d.levels.push_back({"A", 1.0, "no panel in A", true});
  const std::string svg = render_svg_plot(d);
  CHECK(texts(svg, "level-label") == std::vector<std::string>{"C1.v steady peak 1.5 V", "C1 rated 100 V (off scale, above)"});
  CHECK(elements(svg, "<line class=\"rating\"").empty());
  CHECK(elements(svg, "<line class=\"level\"").size() == 1);
  // The panel reaches the drawn level, with room for its label: its top tick is above 1.5 V.
  CHECK(texts(svg, "ytick").back() == "2 V");
}

TEST_CASE("worst's plot marks the worst and best on the curve with their values and arguments", "[plot]") {
  // A capacitor holding V0 discharges through a resistor: its peak |v| is V0 (derived by hand),
  // worst 3 V at V0 = 3 V, best 500 mV at 0.5 V; the rating of 2 V and the steady peak 0 V are lines.
  Circuit c = parse_netlist("C1: capacitor a -> gnd, 1 uF, initial 1 V, rated 2 V\nR1: resistor a -> gnd, 1 kohm\n"
                            "watch C1.v\nsweep C1.initial 0.5 V .. 3 V step 0.25 V\n",
                            "discharge.nf");
  const std::string svg = worst_svg(find_worst_case(c, c.sweeps()), c);
  CHECK(texts(svg, "marker-label") ==
        std::vector<std::string>{"worst C1.v 3 V at 3 V", "best C1.v 500 mV at 500 mV"});
  CHECK(texts(svg, "level-label") == std::vector<std::string>{"C1.v steady peak 0 V", "C1 rated 2 V"});
  CHECK(texts(svg, "axis-label") == std::vector<std::string>{"C1.initial (V)"});
}

TEST_CASE("worst's map of a two-target sweep colours the peak over both arguments and marks the worst", "[plot]") {
  // 325 V closed through 10 ohm onto 10 µF holding V0 (τ = 100 µs, far below the period): the
  // contact current's peak is its jump, |325 V·cos φ − V0| / 10 ohm (derived by hand), worst
  // 42.5 A at φ = 0, V0 = −100 V or at φ = ±180°, V0 = +100 V.
  Circuit c = parse_netlist("supply: voltage-source s -> gnd, cosine 325 V 50 Hz\nK1: switch s -> a, closes at 0 s\n"
                            "R1: resistor a -> b, 10 ohm\nC1: capacitor b -> gnd, 10 uF\nwatch K1.i\n"
                            "sweep supply.phase -180 deg .. 180 deg, C1.initial -100 V .. 100 V\n",
                            "closing.nf");
  const std::string svg = worst_svg(find_worst_case(c, c.sweeps()), c);
  // The profile, then one map: 37 × 37 cells (36 intervals on each target of a joint line).
  const auto cells_at = svg.find("<g class=\"cells\"");
  REQUIRE(cells_at != std::string::npos);
  CHECK(count_of(svg.substr(cells_at, svg.find("</g>", cells_at) - cells_at), "<rect ") == 37 * 37);
  CHECK(texts(svg, "scale-label") == std::vector<std::string>{"K1.i peak (A)"});
  const auto axes = texts(svg, "axis-label");
  CHECK(std::count(axes.begin(), axes.end(), "supply.phase (°)") == 2);  // the profile and the map
  CHECK(std::count(axes.begin(), axes.end(), "C1.initial (V)") == 1);
  const auto labels = texts(svg, "mark-label");
  REQUIRE(labels.size() == 2);
  CHECK(labels[0] == "worst 42.5 A");
  CHECK(labels[1].rfind("best ", 0) == 0);
  CHECK(count_of(svg, "class=\"mark-best\"") == 1);
  // The worst's ring sits on one of the two maxima: (0°, −100 V) is (408, 410) px, (±180°, 100 V)
  // the top corners (96 or 720, 80) of the 96..720 × 80..410 px map.
  auto ring = elements(svg, "<circle class=\"mark-worst\"");
  REQUIRE(ring.size() == 1);
  const auto [x, y] = position(ring.front(), "cx", "cy");
  const bool at_maximum = (std::fabs(x - 408.0) < 0.5 && std::fabs(y - 410.0) < 0.5) ||
                          ((std::fabs(x - 96.0) < 0.5 || std::fabs(x - 720.0) < 0.5) && std::fabs(y - 80.0) < 0.5);
  CHECK(at_maximum);
  const auto notes = texts(svg, "note");
  REQUIRE(!notes.empty());
  CHECK(notes.front().rfind("○ worst 42.5 A at supply.phase = ", 0) == 0);
  // Each scale tick carries the unit.
  for (const std::string& t : texts(svg, "scale-tick")) CHECK(t.back() == 'A');
}

TEST_CASE("a marker between samples is a point of its drawn trace", "[plot]") {
  // A spike narrower than the sample spacing: the samples miss it, the marker does not, and
  // the trace is drawn through the marker.
  PlotData d;
  d.series.push_back({"@a", "V", {0.0, 1.0, 2.0}, {0.0, 1.0, 0.0}});
  d.markers.push_back({0, 1.2, 10.0, "peak 10 V at 1.2 s"});
  const std::string svg = render_svg_plot(d);
  auto marker = elements(svg, "<circle class=\"marker\"");
  REQUIRE(marker.size() == 1);
  const std::string point = attribute(marker.front(), "cx") + "," + attribute(marker.front(), "cy");
  auto trace = elements(svg, "<path class=\"trace\"");
  REQUIRE(trace.size() == 1);
  CHECK(attribute(trace.front(), "d").find(point) != std::string::npos);
  CHECK(texts(svg, "marker-label") == std::vector<std::string>{"peak 10 V at 1.2 s"});
}
