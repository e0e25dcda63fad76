#pragma once
// Pieces shared by the waveform plot (plot_svg.cpp) and the map of a two-target sweep
// (plot_map.cpp): appending formatted text, text widths, nice axis ticks and their labels.
#include <algorithm>
#include <array>
#include <cmath>
#include <iterator>
#include <string>
#include <string_view>
#include <utility>

#include <fmt/format.h>

#include "netfold/units.hpp"
#include "report/xml_text.hpp"

namespace netfold::detail {

inline constexpr int kMinTicks = 4;
inline constexpr int kMaxTicks = 8;

template <typename... Args>
inline void put(std::string& out, fmt::format_string<Args...> format, Args&&... args) {
  fmt::format_to(std::back_inserter(out), format, std::forward<Args>(args)...);
}

// Rough rendered width of a sans-serif string; used only to lay out legends and labels.
inline double text_width(std::string_view s, double font_size) {
  std::size_t code_points = 0;
  for (char c : s)
    if ((static_cast<unsigned char>(c) & 0xC0) != 0x80) ++code_points;
  return static_cast<double>(code_points) * font_size * 0.6;
}

// Nice ticks: multiples of step = mantissa × 10^exponent, mantissa ∈ {1, 2, 5}.
struct Ticks {
  double lo = 0.0, hi = 1.0;  ///< axis range
  double step = 1.0;
  int exponent = 0;           ///< of the step
  long first = 0, last = 0;   ///< tick i is at i × step

  double at(long i) const { return static_cast<double>(i) * step; }
  int count() const { return static_cast<int>(last - first + 1); }
};

inline double step_value(int mantissa, int exponent) {
  // Dividing by an exact power of ten keeps 0.2, 0.05 ... as close as a double can be.
  return exponent >= 0 ? mantissa * std::pow(10.0, exponent) : mantissa / std::pow(10.0, -exponent);
}

// `extend` widens [lo, hi] out to whole steps (the value axes); otherwise the range stays put
// and only the multiples inside it are ticks (the time axis starts where the data starts).
// Takes the finest step with kMinTicks..kMaxTicks ticks, else the finest with at most kMaxTicks.
inline Ticks choose_ticks(double lo, double hi, bool extend, int min_ticks = kMinTicks, int max_ticks = kMaxTicks) {
  constexpr double kSlack = 1e-9;  // so that 0.30000000000000004 still counts as 3 × 0.1
  const int base = static_cast<int>(std::floor(std::log10(hi - lo))) - 1;
  constexpr std::array<int, 3> kMantissas{1, 2, 5};
  Ticks fallback;
  bool have_fallback = false;
  for (int exponent = base; exponent <= base + 3; ++exponent) {
    for (int mantissa : kMantissas) {
      Ticks t;
      t.step = step_value(mantissa, exponent);
      t.exponent = exponent;
      if (extend) {
        t.first = static_cast<long>(std::floor(lo / t.step + kSlack));
        t.last = static_cast<long>(std::ceil(hi / t.step - kSlack));
        t.lo = t.at(t.first);
        t.hi = t.at(t.last);
      } else {
        t.first = static_cast<long>(std::ceil(lo / t.step - kSlack));
        t.last = static_cast<long>(std::floor(hi / t.step + kSlack));
        t.lo = lo;
        t.hi = hi;
      }
      int n = t.count();
      if (n > max_ticks) continue;
      if (n >= min_ticks) return t;
      if (!have_fallback) {
        fallback = t;
        have_fallback = true;
      }
    }
  }
  return fallback;
}

inline std::string value_tick_label(const Ticks& ticks, long i, std::string_view unit) {
  if (i == 0) return "0";
  // Ticks are whole multiples of 10^exponent, so this many significant digits shows each
  // tick exactly and no two ticks print alike.
  double largest = std::max(std::fabs(ticks.lo), std::fabs(ticks.hi));
  int digits = static_cast<int>(std::floor(std::log10(largest))) - ticks.exponent + 1;
  return format_si(ticks.at(i), unit, std::clamp(digits, 1, 6));
}

// A title centred on the page at `baseline`: one bold line, or, where that is wider than the
// page, split after its first ": " into a bold line and a second line in a smaller plain font;
// a line still too wide is drawn smaller still. Returns the height the second line adds.
inline double draw_title(std::string& out, const std::string& title, double page_width, double baseline) {
  constexpr double kBold = 16.0, kPlain = 12.0, kSecondLine = 17.0;
  auto fit = [&](const std::string& line, double font, double widen) {
    return std::max(7.0, std::min(font, std::floor(font * (page_width - 24.0) / (text_width(line, font) * widen))));
  };
  auto line = [&](const std::string& text, double y, double font, bool bold) {
    put(out, "<text class=\"title\" x=\"{:.2f}\" y=\"{:.2f}\" text-anchor=\"middle\" font-size=\"{}\"{}>{}</text>\n",
        page_width / 2.0, y, font, bold ? " font-weight=\"bold\"" : "", escape_xml(text, XmlControls::svg_line));
  };
  const auto split = title.find(": ");
  if (text_width(title, kBold) * 1.1 <= page_width - 24.0 || split == std::string::npos) {
    line(title, baseline, fit(title, kBold, 1.1), true);
    return 0.0;
  }
  const std::string head = title.substr(0, split), tail = title.substr(split + 2);
  line(head, baseline, fit(head, kBold, 1.1), true);
  line(tail, baseline + kSecondLine, fit(tail, kPlain, 1.0), false);
  return kSecondLine;
}

}  // namespace netfold::detail
