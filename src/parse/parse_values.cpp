// Message text, values and their conversion: what every part of the parser shares.
#include <cmath>
#include <limits>

#include <fmt/format.h>

#include "parse/parser.hpp"

namespace netfold::parser {

void fail(SourceLoc loc, std::string message) { throw StatementError{loc, std::move(message)}; }

std::string shorten(std::string_view s) {
  std::size_t chars = 0;
  for (std::size_t i = 0; i < s.size(); ++i) {
    if ((static_cast<unsigned char>(s[i]) & 0xC0) == 0x80) continue;
    if (chars++ == kQuoteLimit) return std::string(s.substr(0, i)) + "...";
  }
  return std::string(s);
}

// Words with a meaning of their own in the format. After a bare number, any other word is
// likely a misspelt unit (`10 kOhm`), and the message says it is not one.
constexpr auto kKeywords = std::to_array<std::string_view>({
    "resistor", "capacitor", "inductor", "voltage-source", "current-source", "switch", "vcvs", "vccs", "ccvs",
    "cccs", "rated", "pulse-rated", "initial", "closes", "opens", "on", "off", "rated-i2t", "gain", "sense", "dc",
    "cosine", "sine", "step", "at", "phase", "title", "ground", "window", "resolution", "watch", "sweep", "expect",
    "golden-tolerance", "tau", "rth", "vth", "peak", "max", "min", "final", "amplitude", "energy", "i2t", "worst",
    // (v2)
    "diode", "forward", "breakdown", "tolerance", "rated-dvdt", "rated-didt", "rated-rms", "frequency", "damping",
    "share", "time-below", "dvdt", "didt", "rms", "power", "after"});

bool is_keyword(std::string_view word) {
  return std::find(kKeywords.begin(), kKeywords.end(), word) != kKeywords.end();
}

bool is_word_byte(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
         (static_cast<unsigned char>(c) & 0x80) != 0;
}

// The value in SI units for a place that needs `want`; `place` names that place in messages
// ("a resistor", "'rated' on a resistor"). Only sinusoid amplitudes may be rms. Every value of
// a file is converted here, by convert_value (exactly; see units.hpp).
double to_si(const RawValue& v, Dimension want, const Text& place, bool rms_allowed) {
  Dimension dim = v.unit.dimension.value_or(want);
  if (dim != want) {
    fail(v.loc, fmt::format("'{}' is {}, but {} needs {}", v.quote(), dimension_noun(dim), place.str(),
                            dimension_noun(want)));
  }
  if (v.unit.rms && !rms_allowed) {
    fail(v.loc, fmt::format("'{}' is an rms value; rms applies only to the amplitude of a cosine or sine, not to {}",
                            v.quote(), place.str()));
  }
  Converted c = convert_value(v.number_text, v.unit, want);
  switch (c.fault) {
    case ValueFault::none: break;
    case ValueFault::not_a_number: fail(v.loc, fmt::format("'{}' is not a number", v.quote()));
    case ValueFault::overflow: fail(v.loc, fmt::format("'{}' is out of range", v.quote()));
    case ValueFault::subnormal:
      // Such a value passes the checks for zero and then breaks the circuit's arithmetic (1/R
      // overflows), so that the failure would surface far from its cause.
      fail(v.loc, fmt::format("'{}' for {} is too small to compute with: below {:.2g} {} double precision loses its "
                              "digits; give the real value{}",
                              v.quote(), place.str(), std::numeric_limits<double>::min(), dimension_symbol(want),
                              want == Dimension::resistance ? " (a connection of no resistance is a wire: join the "
                                                              "two nodes)"
                                                            : ""));
  }
  return c.value;
}

// A time on the time axis (an event, a window bound, a step, a resolution, a claim's instant,
// a closing-time sweep) lies within kMaxTime of t = 0. The message when it does not, or "".
std::string time_limit_fault(const RawValue& v, double t) {
  if (std::fabs(t) <= kMaxTime) return {};
  const double mag = std::fabs(t);
  const double gap = std::nextafter(mag, std::numeric_limits<double>::infinity()) - mag;
  static_assert(kMaxTime == 1e9, "the message says 1e9 s");
  return fmt::format("'{}' is beyond 1e9 s (about 30 years), the longest time netfold computes with: there double "
                     "precision cannot tell apart instants less than {} apart; check the value",
                     v.quote(), format_si(gap, "s"));
}


}  // namespace netfold::parser
