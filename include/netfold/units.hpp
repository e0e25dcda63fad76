#pragma once
/// \file units.hpp
/// Values with SI prefixes and units, as written in `.nf` files and on the command line,
/// and their formatting back into engineering notation for reports.

#include <cstddef>
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
  voltage_rate, ///< (v2) V/s: `V/us`, `kV/s` ... (either part may carry a prefix)
  current_rate, ///< (v2) A/s: `A/us`, `A/ms` ...
};

/// "a resistance", "a time", ... as used in messages.
std::string_view dimension_noun(Dimension d);
/// The SI symbol used in reports: "Ω", "F", "V", "A2s"(as "A²s"), "s", "Hz", "°" ...
std::string_view dimension_symbol(Dimension d);

/// A unit suffix as written after a number: its prefix as a power of ten, the unit's own
/// factor, its dimension, and whether it was an rms unit (`Vrms`, `Arms`). A suffix that is only
/// a prefix (`470n`) has no dimension.
struct UnitSuffix {
  double multiplier = 1.0;                ///< 10^exponent × scale, rounded: for display only (convert with convert_value)
  std::optional<Dimension> dimension;     ///< empty for a bare prefix
  bool rms = false;                       ///< Vrms or Arms
  int exponent = 0;                       ///< the SI prefix's power of ten: −15 (f) .. 12 (T)
  double scale = 1.0;                     ///< the unit's own factor: π/180 for deg and °, else 1
};

/// Interprets a unit suffix such as `nF`, `kΩ`, `kohm`, `ms`, `Vrms`, `deg`, `°`, `%`, `A2s`,
/// `µ`, `u`, `k`, or (v2) a rate `V/us`, `kV/s`, `A/ms`, whose exponent is the numerator's prefix
/// less the denominator's, so that the value still converts in one rounding. Returns nothing when the text is not a unit.
/// Case matters: `m` is milli, `M` is mega; `F` is farad, `f` femto.
std::optional<UnitSuffix> parse_unit_suffix(std::string_view text);

/// Why a written value has no SI value.
enum class ValueFault {
  none,           ///< converted
  not_a_number,   ///< the text is not `[+|-]digits[.digits][(e|E)[+|-]digits]`
  overflow,       ///< beyond the largest double (about 1.8e308)
  subnormal,      ///< non-zero, but below the smallest normal double (about 2.2e-308): precision lost
};

/// A value in SI units, or why it has none.
struct Converted {
  double value = 0.0;                  ///< in SI base units (radians for angles, peak for rms)
  ValueFault fault = ValueFault::none;  ///< value is meaningful only when none
};

/// Length of the number at the start of `text` (`[+|-]digits[.digits][(e|E)[+|-]digits]`, the
/// leading digits optional as in `.5`; a point followed by another point is not taken, so that
/// `0..40ms` is `0`, `..`, `40ms`), or 0 when it starts with none.
std::size_t number_length(std::string_view text);

/// The one conversion of a written value to SI units. The decimal is converted exactly: the
/// prefix's power of ten is added to the number's own exponent and the decimal is rounded once
/// (std::from_chars), so `5 us` is the double nearest 5·10⁻⁶, the same number as `5e-6 s`.
/// Only then are factors that are not powers of ten applied, each rounding once more: the
/// unit's scale (deg), degrees for a bare number where `want` is an angle, and √2 for Vrms/Arms.
/// `number` is the numeric text alone, sign included.
Converted convert_value(std::string_view number, const UnitSuffix& unit, Dimension want);

/// A number with its unit, as parsed from the command line (for example `--at 12ms`).
struct Quantity {
  double value = 0.0;  ///< in SI base units
  Dimension dimension = Dimension::ratio;
  bool rms = false;    ///< always false: an rms unit is refused outside sinusoid amplitudes
};

/// Parses `TEXT` (a number, optional space, optional prefix and unit) as `expected`, converted
/// by convert_value. A bare number takes `expected`; a bare angle is in degrees. Throws
/// InputError (exit 2) naming `option` when the text is not a value, its unit does not fit, it
/// is Vrms/Arms, or double precision cannot carry it (out of range, or subnormal).
Quantity parse_quantity_argument(std::string_view text, Dimension expected, std::string_view option);

/// Engineering notation with an SI prefix and `digits` significant digits:
/// format_si(0.006667, "s") == "6.667 ms"; format_si(4700, "Ω") == "4.7 kΩ".
/// Trailing zeros are dropped; infinities print as "∞"; a NaN is a bug and prints "undefined".
std::string format_si(double value, std::string_view unit, int digits = 4);

/// A value in `%.17g`-style shortest round-trip decimal, for CSV and JSON.
std::string format_exact(double value);

}  // namespace netfold
