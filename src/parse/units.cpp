#include "netfold/units.hpp"

#include <algorithm>
#include <array>
#include <charconv>
#include <cmath>
#include <cstdlib>
#include <limits>
#include <string>
#include <numbers>
#include <utility>

#include <fmt/format.h>

#include "netfold/diagnostics.hpp"

namespace netfold {

std::string_view dimension_noun(Dimension d) {
  switch (d) {
    case Dimension::ratio: return "a plain number";
    case Dimension::resistance: return "a resistance";
    case Dimension::conductance: return "a conductance";
    case Dimension::capacitance: return "a capacitance";
    case Dimension::inductance: return "an inductance";
    case Dimension::voltage: return "a voltage";
    case Dimension::current: return "a current";
    case Dimension::power: return "a power";
    case Dimension::energy: return "an energy";
    case Dimension::action: return "an I²t (A2s)";
    case Dimension::time: return "a time";
    case Dimension::frequency: return "a frequency";
    case Dimension::angle: return "an angle";
    case Dimension::percent: return "a percentage";
    case Dimension::voltage_rate: return "a rate of change of voltage (V/s)";
    case Dimension::current_rate: return "a rate of change of current (A/s)";
  }
  return "a value";
}

std::string_view dimension_symbol(Dimension d) {
  switch (d) {
    case Dimension::ratio: return "";
    case Dimension::resistance: return "Ω";
    case Dimension::conductance: return "S";
    case Dimension::capacitance: return "F";
    case Dimension::inductance: return "H";
    case Dimension::voltage: return "V";
    case Dimension::current: return "A";
    case Dimension::power: return "W";
    case Dimension::energy: return "J";
    case Dimension::action: return "A²s";
    case Dimension::time: return "s";
    case Dimension::frequency: return "Hz";
    case Dimension::angle: return "°";
    case Dimension::percent: return "%";
    case Dimension::voltage_rate: return "V/s";
    case Dimension::current_rate: return "A/s";
  }
  return "";
}

namespace {

struct UnitEntry {
  std::string_view text;
  Dimension dimension;
  double scale;
  bool rms;
  bool takes_prefix;
};

// SI Brochure (BIPM, 9th edition), table 7 prefixes used by the format; units of table 4 plus
// the trade's Vrms/Arms and A²s. `deg` and `%` take no prefix.
constexpr double kDegree = std::numbers::pi / 180.0;
const std::array<UnitEntry, 20> kUnits{{
    {"ohm", Dimension::resistance, 1.0, false, true},
    {"\xCE\xA9", Dimension::resistance, 1.0, false, true},      // Ω U+03A9
    {"\xE2\x84\xA6", Dimension::resistance, 1.0, false, true},  // Ω U+2126 OHM SIGN
    {"S", Dimension::conductance, 1.0, false, true},
    {"F", Dimension::capacitance, 1.0, false, true},
    {"H", Dimension::inductance, 1.0, false, true},
    {"V", Dimension::voltage, 1.0, false, true},
    {"Vrms", Dimension::voltage, 1.0, true, true},
    {"A", Dimension::current, 1.0, false, true},
    {"Arms", Dimension::current, 1.0, true, true},
    {"W", Dimension::power, 1.0, false, true},
    {"J", Dimension::energy, 1.0, false, true},
    {"A2s", Dimension::action, 1.0, false, true},
    {"A\xC2\xB2s", Dimension::action, 1.0, false, true},  // A²s
    {"s", Dimension::time, 1.0, false, true},
    {"Hz", Dimension::frequency, 1.0, false, true},
    {"deg", Dimension::angle, kDegree, false, false},
    {"\xC2\xB0", Dimension::angle, kDegree, false, false},  // °
    {"rad", Dimension::angle, 1.0, false, true},
    {"%", Dimension::percent, 1.0, false, false},
}};

struct PrefixEntry {
  std::string_view text;
  int exponent;
};

const std::array<PrefixEntry, 11> kPrefixes{{
    {"f", -15}, {"p", -12}, {"n", -9}, {"u", -6}, {"\xC2\xB5", -6} /* µ U+00B5 */,
    {"\xCE\xBC", -6} /* μ U+03BC */, {"m", -3}, {"k", 3}, {"M", 6}, {"G", 9}, {"T", 12},
}};

const UnitEntry* find_unit(std::string_view text) {
  for (const auto& u : kUnits)
    if (u.text == text) return &u;
  return nullptr;
}

UnitSuffix make_suffix(int exponent, const UnitEntry* unit) {
  UnitSuffix s;
  s.exponent = exponent;
  if (unit) {
    s.scale = unit->scale;
    s.dimension = unit->dimension;
    s.rms = unit->rms;
  }
  s.multiplier = std::pow(10.0, exponent) * s.scale;
  return s;
}

bool is_digit(char c) { return c >= '0' && c <= '9'; }

// The double nearest to the decimal `number` × 10^`shift`, rounded once: the number's mantissa
// is kept as written and its exponent replaced by exponent + shift, which is exact. Values are
// short, so the text is rebuilt on the stack: a file of 10⁶ values allocates nothing here.
Converted exact_decimal(std::string_view number, int shift) {
  if (number.empty() || number_length(number) != number.size()) return {0.0, ValueFault::not_a_number};
  const bool negative = number[0] == '-';
  std::string_view body = number;
  if (number[0] == '-' || number[0] == '+') body.remove_prefix(1);
  const std::size_t e_at = body.find_first_of("eE");
  const std::string_view mantissa = body.substr(0, e_at);
  long long exponent = shift;
  if (e_at != std::string_view::npos) {
    std::string_view digits = body.substr(e_at + 1);
    const bool minus = digits[0] == '-';
    if (digits[0] == '-' || digits[0] == '+') digits.remove_prefix(1);
    long long e = 0;  // saturated far beyond any double's range
    for (char c : digits) e = std::min<long long>(e * 10 + (c - '0'), 1'000'000'000);
    exponent += minus ? -e : e;
  }
  std::array<char, 128> small{};
  std::string large;
  char* text = small.data();
  const std::size_t room = mantissa.size() + 24;
  if (room > small.size()) {
    large.resize(room);
    text = large.data();
  }
  std::copy(mantissa.begin(), mantissa.end(), text);
  text[mantissa.size()] = 'e';
  char* end = std::to_chars(text + mantissa.size() + 1, text + room, exponent).ptr;
  double x = 0.0;
  auto [stop, ec] = std::from_chars(text, end, x, std::chars_format::scientific);
  if (ec == std::errc::result_out_of_range) {
    // Overflow or underflow: the decimal exponent of the leading non-zero digit tells which.
    const std::size_t point = std::min(mantissa.find('.'), mantissa.size());
    const std::size_t lead = mantissa.find_first_not_of("0.");
    const long long place = lead < point ? static_cast<long long>(point - lead) - 1
                                         : -static_cast<long long>(lead - point);
    return {0.0, exponent + place > 0 ? ValueFault::overflow : ValueFault::subnormal};
  }
  if (ec != std::errc() || stop != end) return {0.0, ValueFault::not_a_number};
  return {negative ? -x : x, ValueFault::none};
}

// A prefix (possibly none) followed by exactly `unit`: its power of ten.
std::optional<int> prefixed(std::string_view text, std::string_view unit) {
  if (text.size() < unit.size() || text.substr(text.size() - unit.size()) != unit) return std::nullopt;
  std::string_view prefix = text.substr(0, text.size() - unit.size());
  if (prefix.empty()) return 0;
  for (const auto& p : kPrefixes)
    if (p.text == prefix) return p.exponent;
  return std::nullopt;
}

// `V/us`, `kV/s`, `A/ms`: a voltage or current over a time, each with an optional prefix. The
// prefixes' powers of ten are combined into one exponent, so that `5 V/us` converts in one
// rounding to the double nearest 5·10⁶.
std::optional<UnitSuffix> parse_rate(std::string_view text) {
  const std::size_t slash = text.find('/');
  const std::string_view top = text.substr(0, slash), bottom = text.substr(slash + 1);
  const std::optional<int> per = prefixed(bottom, "s");
  if (!per) return std::nullopt;
  for (auto [unit, dim] : {std::pair{std::string_view("V"), Dimension::voltage_rate},
                           std::pair{std::string_view("A"), Dimension::current_rate}}) {
    if (const std::optional<int> e = prefixed(top, unit)) {
      UnitSuffix s = make_suffix(*e - *per, nullptr);
      s.dimension = dim;
      return s;
    }
  }
  return std::nullopt;
}

}  // namespace

std::optional<UnitSuffix> parse_unit_suffix(std::string_view text) {
  if (text.empty()) return UnitSuffix{};
  if (text.find('/') != std::string_view::npos) return parse_rate(text);
  if (const UnitEntry* u = find_unit(text)) return make_suffix(0, u);
  for (const auto& p : kPrefixes) {
    if (text.substr(0, p.text.size()) != p.text) continue;
    std::string_view rest = text.substr(p.text.size());
    if (rest.empty()) return make_suffix(p.exponent, nullptr);
    if (const UnitEntry* u = find_unit(rest); u && u->takes_prefix) return make_suffix(p.exponent, u);
  }
  return std::nullopt;
}

std::size_t number_length(std::string_view s) {
  const std::size_t n = s.size();
  std::size_t j = 0;
  if (j < n && (s[j] == '+' || s[j] == '-')) ++j;
  const std::size_t start = j;
  while (j < n && is_digit(s[j])) ++j;
  bool digits = j > start;
  // A '.' followed by another '.' is the range operator: `0..40ms`.
  if (j < n && s[j] == '.' && !(j + 1 < n && s[j + 1] == '.') && (digits || (j + 1 < n && is_digit(s[j + 1])))) {
    ++j;
    while (j < n && is_digit(s[j])) ++j, digits = true;
  }
  if (!digits) return 0;
  if (j < n && (s[j] == 'e' || s[j] == 'E')) {
    std::size_t k = j + 1;
    if (k < n && (s[k] == '+' || s[k] == '-')) ++k;
    if (k < n && is_digit(s[k])) {
      j = k;
      while (j < n && is_digit(s[j])) ++j;
    }
  }
  return j;
}

Converted convert_value(std::string_view number, const UnitSuffix& unit, Dimension want) {
  Converted c = exact_decimal(number, unit.exponent);
  if (c.fault != ValueFault::none) return c;
  double x = c.value * unit.scale;
  if (want == Dimension::angle && !unit.dimension) x *= kDegree;  // a bare angle is in degrees
  // source: definition of the rms value of a sinusoid, peak = rms × √2 (from memory)
  if (unit.rms) x *= std::numbers::sqrt2;
  if (!std::isfinite(x)) return {0.0, ValueFault::overflow};
  if (x != 0.0 && std::fabs(x) < std::numeric_limits<double>::min()) return {0.0, ValueFault::subnormal};
  return {x, ValueFault::none};
}

Quantity parse_quantity_argument(std::string_view text, Dimension expected, std::string_view option) {
  std::string_view s = text;
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  const std::size_t length = number_length(s);
  if (length == 0) throw argument_error(option, fmt::format("expected {}, found '{}'", dimension_noun(expected), text));
  std::string_view number = s.substr(0, length);
  std::string_view suffix = s.substr(length);
  while (!suffix.empty() && suffix.front() == ' ') suffix.remove_prefix(1);
  auto unit = parse_unit_suffix(suffix);
  if (!unit) throw argument_error(option, fmt::format("unknown unit '{}' in '{}'", suffix, text));
  Dimension dim = unit->dimension.value_or(expected);
  if (dim != expected) {
    throw argument_error(option, fmt::format("'{}' is {}, but {} is needed here", text, dimension_noun(dim),
                                             dimension_noun(expected)));
  }
  if (unit->rms)
    throw argument_error(option, fmt::format("'{}': Vrms and Arms only go with the amplitude of a sinusoid", text));
  Converted c = convert_value(number, *unit, expected);
  switch (c.fault) {
    case ValueFault::none: break;
    case ValueFault::not_a_number:
      throw argument_error(option, fmt::format("expected {}, found '{}'", dimension_noun(expected), text));
    case ValueFault::overflow: throw argument_error(option, fmt::format("'{}' is out of range", text));
    case ValueFault::subnormal:
      throw argument_error(option, fmt::format("'{}' is too small for double precision to carry (below {:g}); "
                                               "give 0 or a larger value",
                                               text, std::numeric_limits<double>::min()));
  }
  return Quantity{c.value, dim, unit->rms};
}

std::string format_si(double value, std::string_view unit, int digits) {
  if (std::isnan(value)) return "undefined";
  if (std::isinf(value)) return fmt::format("{}∞{}{}", value < 0 ? "-" : "", unit.empty() ? "" : " ", unit);
  digits = std::max(1, digits);
  auto trim = [](std::string s) {
    if (s.find('.') != std::string::npos && s.find('e') == std::string::npos) {
      while (!s.empty() && s.back() == '0') s.pop_back();
      if (!s.empty() && s.back() == '.') s.pop_back();
    }
    return s;
  };
  auto join = [&](std::string number, std::string_view prefix) {
    if (unit.empty() && prefix.empty()) return number;
    if (unit == "°" || unit == "%") return number + std::string(unit);
    return fmt::format("{} {}{}", number, prefix, unit);
  };
  // A prefix on A²s would read as (mA)²s; the action stays unprefixed.
  bool prefixable = !(unit.empty() || unit == "°" || unit == "%" || unit == "A²s");
  if (value == 0.0) return join("0", "");
  if (!prefixable) {
    double mag = std::fabs(value);
    if (mag >= 1e-3 && mag < 1e9) {
      int exponent = static_cast<int>(std::floor(std::log10(mag)));
      int decimals = std::max(0, digits - 1 - exponent);
      return join(trim(fmt::format("{:.{}f}", value, decimals)), "");
    }
    return join(fmt::format("{:.{}g}", value, digits), "");
  }
  static constexpr std::array<std::string_view, 11> kNames{"f", "p", "n", "µ", "m", "", "k", "M", "G", "T", "P"};
  double mag = std::fabs(value);
  // Far outside the prefixes (and where the rounded text could be subnormal or overflow).
  if (!(mag >= 1e-18 && mag < 1e18)) return join(fmt::format("{:.{}g}", value, digits), "");
  // Round first, so that 999.96 µs becomes 1 ms rather than 1000 µs.
  double rounded = std::strtod(fmt::format("{:.{}e}", mag, digits - 1).c_str(), nullptr);
  int exp3 = static_cast<int>(std::floor(std::log10(rounded) / 3.0));
  if (exp3 < -5 || exp3 > 5) return join(fmt::format("{:.{}g}", value, digits), "");
  double mantissa = rounded / std::pow(10.0, 3 * exp3);
  int int_digits = mantissa >= 100 ? 3 : mantissa >= 10 ? 2 : 1;
  int decimals = std::max(0, digits - int_digits);
  std::string number = trim(fmt::format("{:.{}f}", mantissa, decimals));
  if (value < 0) number = "-" + number;
  return join(number, kNames[static_cast<std::size_t>(exp3 + 5)]);
}

std::string format_exact(double value) {
  if (!std::isfinite(value)) return std::isnan(value) ? "nan" : (value > 0 ? "inf" : "-inf");
  std::array<char, 32> buf{};
  auto [end, ec] = std::to_chars(buf.data(), buf.data() + buf.size(), value);
  (void)ec;
  return std::string(buf.data(), end);
}

}  // namespace netfold
