#pragma once
/// \file units.hpp
/// Values with SI prefixes and units, as written in `.nf` files and on the command line,
/// and their formatting back into engineering notation for reports.

#include <optional>
#include <string>
#include <string_view>

namespace netfold {

/// What a place in the grammar expects a value to measure. Values are stored in SI base
/// units: ohm, S, F, H, V, A, W, J, A²s, s, Hz, rad; `ratio` is a bare number (a gain).
enum class Dimension {
  ratio,        ///< dimensionless (vcvs and cccs gains)
  resistance,   ///< ohm (Ω)
  conductance,  ///< S
  capacitance,  ///< F
  inductance,   ///< H
  voltage,      ///< V (also Vrms, converted to peak where allowed)
  current,      ///< A (also Arms)
  power,        ///< W
  energy,       ///< J
  action,       ///< A²s, the "I²t" of fuses and contacts
  time,         ///< s
  frequency,    ///< Hz
  angle,        ///< rad internally; `deg` and `°` accepted; a bare angle is in degrees
  percent,      ///< % (tolerances only)
};

/// "a resistance", "a time", ... as used in messages.
std::string_view dimension_noun(Dimension d);
/// The SI symbol used in reports: "Ω", "F", "V", "A2s"(as "A²s"), "s", "Hz", "°" ...
std::string_view dimension_symbol(Dimension d);

/// A unit suffix as written after a number: prefix multiplier, dimension, and whether it
/// was an rms unit (`Vrms`, `Arms`). A suffix that is only a prefix (`470n`) has no dimension.
struct UnitSuffix {
  double multiplier = 1.0;                ///< SI prefix × unit scale (deg → π/180)
  std::optional<Dimension> dimension;     ///< empty for a bare prefix
  bool rms = false;                       ///< Vrms or Arms
};

/// Interprets a unit suffix such as `nF`, `kΩ`, `kohm`, `ms`, `Vrms`, `deg`, `°`, `%`, `A2s`,
/// `µ`, `u`, or `k`. Returns nothing when the text is not a unit.
/// Case matters: `m` is milli, `M` is mega; `F` is farad, `f` femto.
std::optional<UnitSuffix> parse_unit_suffix(std::string_view text);

/// A number with its unit, as parsed from the command line (for example `--at 12ms`).
struct Quantity {
  double value = 0.0;  ///< in SI base units
  Dimension dimension = Dimension::ratio;
  bool rms = false;    ///< always false: an rms unit is refused outside sinusoid amplitudes
};

/// Parses `TEXT` (a number, optional space, optional prefix and unit) as `expected`.
/// A bare number takes `expected`; a bare angle is in degrees. Throws InputError (exit 2)
/// naming `option` when the text is not a value, its unit does not fit, or it is Vrms/Arms.
Quantity parse_quantity_argument(std::string_view text, Dimension expected, std::string_view option);

/// Engineering notation with an SI prefix and `digits` significant digits:
/// format_si(0.006667, "s") == "6.667 ms"; format_si(4700, "Ω") == "4.7 kΩ".
/// Trailing zeros are dropped; infinities print as "∞"; a NaN is a bug and prints "undefined".
std::string format_si(double value, std::string_view unit, int digits = 4);

/// A value in `%.17g`-style shortest round-trip decimal, for CSV and JSON.
std::string format_exact(double value);

}  // namespace netfold
