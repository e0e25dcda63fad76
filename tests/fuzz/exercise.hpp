#pragma once
/// \file exercise.hpp
/// The path that the fuzz target and its regression test feed every input through:
/// parse → solve over a bounded window → report, CSV, JSON, SVG, text and derivation, with
/// every output scanned for NaN and infinity.
///
/// netfold::Error is the expected way for an input to be refused; any other exception
/// escapes (the fuzzer turns it into a crash, Catch2 into a failed test). A NaN or an
/// infinity where a number is printed, or a non-finite figure hidden behind the writers'
/// masking, is returned as a problem description.

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <cstdlib>
#include <optional>
#include <sstream>
#include <string>
#include <string_view>
#include <vector>

#include "netfold/parse.hpp"
#include "netfold/plot.hpp"
#include "netfold/report.hpp"
#include "netfold/solve.hpp"

namespace netfold_fuzz {

/// Longest analysis span the path solves over (s), and most samples it asks the writers for:
/// together they keep one input's work to well under the fuzzer's 10 s timeout.
inline constexpr double kMaxWindow = 1.0;
inline constexpr double kMaxSamples = 20000.0;
/// At most this many periods of the fastest sinusoid: the peak search works per period, and a
/// 1 MHz source over 1 s (10^6 periods, 1.6 s in a Release build) takes 7 s or more under the
/// fuzzer's instrumentation, close to its 10 s hang limit.
inline constexpr double kMaxPeriods = 20000.0;
/// Points per plotted series.
inline constexpr std::size_t kPlotPoints = 400;

/// True when `word` (letters only) spells a non-finite number as printf, to_chars or
/// std::format would: nan, inf, infinity (any case).
inline bool is_non_finite_word(std::string_view word) {
  if (word.size() != 3 && word.size() != 8) return false;
  std::string w;
  for (char ch : word) w += static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
  return w == "nan" || w == "inf" || w == "infinity";
}

/// True when `text` holds `word` as a whole word (case-insensitive).
inline bool contains_word(std::string_view text, std::string_view word) {
  auto lower = [](unsigned char ch) { return static_cast<char>(std::tolower(ch)); };
  for (std::size_t i = 0; i + word.size() <= text.size(); ++i) {
    bool match = true;
    for (std::size_t k = 0; k < word.size() && match; ++k)
      match = lower(static_cast<unsigned char>(text[i + k])) == lower(static_cast<unsigned char>(word[k]));
    if (!match) continue;
    auto is_word = [&](std::size_t k) {
      unsigned char ch = static_cast<unsigned char>(text[k]);
      return std::isalnum(ch) || ch == '_';
    };
    bool left = i == 0 || !is_word(i - 1);
    bool right = i + word.size() == text.size() || !is_word(i + word.size());
    if (left && right) return true;
  }
  return false;
}

/// The first numeric-looking non-finite token of `text` ("nan", "-inf", "1.#INF" style words
/// that stand alone), or nothing. Words inside longer words ("information", "infinite") do
/// not count: a token is a maximal run of letters, digits and '_'. With `allowed` set, a
/// token that also appears as a word of `allowed` (the input itself, where a user may have
/// named a node `inf` or titled a circuit "nan") is not counted.
inline std::optional<std::string> find_non_finite_token(std::string_view text, std::string_view allowed = {}) {
  std::size_t i = 0;
  while (i < text.size()) {
    auto is_word = [&](std::size_t k) {
      unsigned char ch = static_cast<unsigned char>(text[k]);
      return std::isalnum(ch) || ch == '_';
    };
    if (!is_word(i)) {
      ++i;
      continue;
    }
    std::size_t j = i;
    while (j < text.size() && is_word(j)) ++j;
    std::string_view word = text.substr(i, j - i);
    // "1.#INF" and "-nan(ind)" keep the letters as their own word; a leading digit run glued
    // to letters ("3nan") is not a spelling any formatter uses.
    if (is_non_finite_word(word) && !contains_word(allowed, word)) {
      std::size_t from = i > 12 ? i - 12 : 0;
      return std::string(text.substr(from, std::min<std::size_t>(text.size(), j + 12) - from));
    }
    i = j;
  }
  return std::nullopt;
}

/// Like find_non_finite_token, for text written for a person: also the spellings the text
/// report uses for a non-finite value, "undefined" (NaN) and "∞ V", "-∞ A" ... (an infinite
/// voltage, current, power or energy). "τ = ∞", "R_th = ∞ (open)" and "v_oc undefined" (no
/// Thevenin equivalent exists) are legitimate and pass.
inline std::optional<std::string> find_non_finite_text(std::string_view text, std::string_view allowed = {}) {
  if (auto t = find_non_finite_token(text, allowed)) return t;
  auto around = [&](std::size_t at) {
    std::size_t from = at > 30 ? at - 30 : 0;
    return std::string(text.substr(from, std::min<std::size_t>(text.size() - from, 60)));
  };
  if (!contains_word(allowed, "undefined")) {
    for (std::size_t at = text.find("undefined"); at != std::string_view::npos; at = text.find("undefined", at + 1)) {
      std::string_view rest = text.substr(at);
      bool left = at == 0 || !(std::isalnum(static_cast<unsigned char>(text[at - 1])) || text[at - 1] == '_');
      bool right = rest.size() == 9 || !(std::isalnum(static_cast<unsigned char>(rest[9])) || rest[9] == '_');
      // "v_oc undefined" and "i_sc undefined (R_th = 0)" say that an equivalent does not exist.
      bool names_equivalent = at >= 5 && (text.substr(at - 5, 5) == "v_oc " || text.substr(at - 5, 5) == "i_sc ");
      if (left && right && !names_equivalent) return around(at);
    }
  }
  const std::string_view infinity = "\xe2\x88\x9e";  // ∞ in UTF-8
  for (std::size_t at = text.find(infinity); at != std::string_view::npos; at = text.find(infinity, at + 1)) {
    std::string_view rest = text.substr(at + infinity.size());
    if (rest.size() >= 2 && rest[0] == ' ' && (rest[1] == 'V' || rest[1] == 'A' || rest[1] == 'W' || rest[1] == 'J'))
      return around(at);
  }
  return std::nullopt;
}

/// `text` with the contents of every JSON string literal removed (element names may be
/// spelled "inf"); the quotes stay.
inline std::string strip_json_strings(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  bool in_string = false;
  for (std::size_t i = 0; i < text.size(); ++i) {
    char ch = text[i];
    if (!in_string) {
      out += ch;
      if (ch == '"') in_string = true;
      continue;
    }
    if (ch == '\\') {
      ++i;  // skip the escaped character
      continue;
    }
    if (ch == '"') {
      in_string = false;
      out += ch;
    }
  }
  return out;
}

/// A problem with a CSV text: a data field that is not a finite number, or a ragged row.
inline std::optional<std::string> check_csv(std::string_view csv) {
  std::size_t columns = 0, line_no = 0, pos = 0;
  while (pos < csv.size()) {
    std::size_t end = csv.find('\n', pos);
    if (end == std::string_view::npos) end = csv.size();
    std::string_view line = csv.substr(pos, end - pos);
    pos = end + 1;
    ++line_no;
    if (line_no == 1) {  // the header: names, not numbers
      columns = static_cast<std::size_t>(std::count(line.begin(), line.end(), ',')) + 1;
      continue;
    }
    std::size_t fields = 0, fpos = 0;
    while (true) {
      std::size_t comma = line.find(',', fpos);
      std::string_view field = line.substr(fpos, comma == std::string_view::npos ? line.size() - fpos : comma - fpos);
      ++fields;
      double v = 0.0;
      auto [ptr, ec] = std::from_chars(field.data(), field.data() + field.size(), v);
      if (ec != std::errc() || ptr != field.data() + field.size() || !std::isfinite(v))
        return "CSV line " + std::to_string(line_no) + " field " + std::to_string(fields) + " is '" +
               std::string(field) + "', not a finite number";
      if (comma == std::string_view::npos) break;
      fpos = comma + 1;
    }
    if (fields != columns)
      return "CSV line " + std::to_string(line_no) + " has " + std::to_string(fields) + " fields, the header " +
             std::to_string(columns);
  }
  return std::nullopt;
}

/// A problem with a JSON text: a non-finite number token outside the strings.
inline std::optional<std::string> check_json(std::string_view json) {
  if (auto t = find_non_finite_token(strip_json_strings(json))) return "JSON holds a non-finite number near '" + *t + "'";
  return std::nullopt;
}

/// The window the path solves over: the circuit's own (declared or default) when it is at
/// most kMaxWindow long, needs at most kMaxSamples samples and holds at most kMaxPeriods
/// periods of the fastest sinusoid, else the start of it, cut.
inline std::optional<netfold::Window> bounded_window(const netfold::Solution& s) {
  const netfold::Window& w = s.window();
  double span = w.to - w.from;
  double limit = std::min(kMaxWindow, kMaxSamples * s.resolution());
  double f_fast = 0.0;
  for (const auto& e : s.circuit().elements())
    for (const auto& term : e.waveform.sinusoids)
      if (term.amplitude != 0.0) f_fast = std::max(f_fast, term.frequency);
  if (f_fast > 0.0) limit = std::min(limit, kMaxPeriods / f_fast);
  if (span <= limit) return std::nullopt;
  netfold::Window cut = w;
  cut.to = w.from + limit;
  return cut;
}

/// Values that a report prints and that must be finite whenever the solve succeeded.
inline std::optional<std::string> check_figures(const netfold::Solution& s, const netfold::SolveReport& r) {
  auto bad = [](double v) { return !std::isfinite(v); };
  for (std::size_t i = 0; i < r.figures.size(); ++i) {
    const netfold::Figures& f = r.figures[i];
    const std::string& name = s.observables()[i].text;
    if (bad(f.peak) || bad(f.t_peak) || bad(f.max) || bad(f.min) || bad(f.final_value) || bad(f.t_max) ||
        bad(f.t_min))
      return "a figure of '" + name + "' is not finite (peak " + std::to_string(f.peak) + ", max " +
             std::to_string(f.max) + ", min " + std::to_string(f.min) + ", final " + std::to_string(f.final_value) +
             ")";
    for (const auto* o : {&f.amplitude, &f.phase, &f.dc, &f.settling_time, &f.steady_peak})
      if (*o && bad(**o)) return "a steady-state figure of '" + name + "' is not finite";
  }
  for (const auto& seg : s.segments())
    if (bad(seg.state_start) || bad(seg.from) || bad(seg.to))
      return "segment " + std::to_string(seg.number) + " starts from a non-finite state";
  for (const auto& t : r.totals)
    if (bad(t.energy) || bad(t.i2t)) return "an energy or I²t total is not finite";
  for (const auto& rc : r.ratings)
    if (bad(rc.actual) || bad(rc.used_percent)) return "a rating's stress is not finite";
  // The CSV writer prints a non-finite sample as 0: look at the samples before it does.
  const netfold::Window& w = s.window();
  const double dt = std::max(s.resolution(), (w.to - w.from) / 4000.0);
  for (const auto& obs : s.observables()) {
    std::vector<netfold::Piece> pieces = s.pieces(obs);
    std::size_t seg = 0;
    for (double k = 0; k * dt <= w.to - w.from; k += 1.0) {
      double t = w.from + k * dt;
      while (seg + 1 < pieces.size() && t >= pieces[seg + 1].t0()) ++seg;
      double v = pieces[seg].value(t);
      if (bad(v))
        return "'" + obs.text + "' is " + std::to_string(v) + " at t = " + std::to_string(t) +
               " s (the CSV would show 0)";
    }
  }
  return std::nullopt;
}

/// The circuit without its tolerances and sweeps when it has a tolerance or a joint sweep line:
/// the worst case over a joint line or a tolerance box solves the circuit thousands of times by
/// design (a second in a release build, minutes under the fuzzer's instrumentation), which
/// would turn every such seed into a timeout. The search itself is tested in test_box_search
/// and test_worst_v2_files; the fuzzer keeps to the parser and one solve per input.
inline std::optional<netfold::Circuit> without_box_search(const netfold::Circuit& c) {
  bool costly = false;
  for (const auto& e : c.elements()) costly |= e.tolerance.has_value();
  for (std::size_t k = 1; k < c.sweeps().size(); ++k) costly |= c.sweeps()[k].line == c.sweeps()[k - 1].line;
  if (!costly) return std::nullopt;
  netfold::CircuitBuilder b(c.source_ptr());
  for (const auto& n : c.nodes()) b.node(n);
  b.set_ground(c.nodes().at(c.ground()), c.ground_loc());
  for (auto e : c.elements()) {
    e.tolerance.reset();
    b.add_element(std::move(e));
  }
  b.set_title(c.title());
  for (const auto& o : c.watches()) b.add_watch(o);
  if (c.window()) b.set_window(*c.window());
  if (c.resolution()) b.set_resolution(*c.resolution(), c.resolution_loc());
  return std::move(b).build();
}

/// Runs one input through the whole path. Returns a description of the first problem found,
/// or nothing when the input was refused with a netfold::Error or went through cleanly.
inline std::optional<std::string> exercise_netlist(std::string_view bytes) {
  try {
    netfold::Circuit parsed = netfold::parse_netlist(bytes, "fuzz.nf");
    std::optional<netfold::Circuit> reduced = without_box_search(parsed);
    const netfold::Circuit& circuit = reduced ? *reduced : parsed;
    netfold::Solution first = netfold::solve(circuit);
    std::optional<netfold::Solution> cut;
    if (auto w = bounded_window(first)) {
      netfold::SolveOptions options;
      options.window = *w;
      cut.emplace(netfold::solve(circuit, options));
    }
    const netfold::Solution& s = cut ? *cut : first;

    netfold::SolveReport report = netfold::build_solve_report(s);
    if (auto p = check_figures(s, report)) return p;
    std::string csv = netfold::waveform_csv(s);
    if (auto p = check_csv(csv)) return p;
    std::string json = netfold::solve_json(report);
    if (auto p = check_json(json)) return p;
    std::ostringstream text;
    netfold::write_solve_text(text, report);
    netfold::write_explanation(text, s);
    if (auto t = find_non_finite_text(text.str(), bytes)) return "the text report prints a non-finite number near '" + *t + "'";
    // The plot is drawn from every 10th sample or so: the renderer's paths are the same, and
    // formatting thousands of coordinates would dominate the fuzzer's time per input.
    netfold::PlotData plot = netfold::plot_data(s);
    for (auto& series : plot.series) {
      std::size_t stride = series.t.size() / kPlotPoints + 1;
      std::vector<double> t, v;
      for (std::size_t k = 0; k < series.t.size(); k += stride) {
        t.push_back(series.t[k]);
        v.push_back(series.v[k]);
      }
      series.t = std::move(t);
      series.v = std::move(v);
    }
    std::string svg = netfold::render_svg_plot(plot);
    if (auto t = find_non_finite_token(svg, bytes))
      return "the SVG holds a non-finite number near '" + *t + "'";
  } catch (const netfold::Error&) {
    // Refusing an input with a message is the expected outcome for most random bytes.
  }
  return std::nullopt;
}

}  // namespace netfold_fuzz
