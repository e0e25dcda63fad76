// Tests of unit suffixes, command-line quantities and engineering formatting (units.hpp),
// against the SI definitions of prefixes and units.
#include <catch2/catch.hpp>

#include <charconv>
#include <cmath>
#include <limits>
#include <numbers>
#include <string>

#include "netfold/diagnostics.hpp"
#include "netfold/units.hpp"

using namespace netfold;

namespace {

Approx near(double x) { return Approx(x).epsilon(1e-12).margin(1e-300); }

// The suffix must be a unit of dimension `dim` (or none) scaling by `multiplier`.
void check_suffix(std::string_view text, std::optional<Dimension> dim, double multiplier, bool rms = false) {
  INFO("suffix '" << std::string(text) << "'");
  auto u = parse_unit_suffix(text);
  REQUIRE(u.has_value());
  CHECK(u->dimension == dim);
  CHECK(u->multiplier == near(multiplier));
  CHECK(u->rms == rms);
}

}  // namespace

// "Prefixes (SI): `f p n u µ m k M G T`. Case matters: `m` is milli, `M` is mega."
TEST_CASE("every SI prefix of the format has its SI factor", "[units]") {
  // source: the SI Brochure, BIPM, 9th edition (2019), table 7 (prefixes)
  check_suffix("f", std::nullopt, 1e-15);
  check_suffix("p", std::nullopt, 1e-12);
  check_suffix("n", std::nullopt, 1e-9);
  check_suffix("u", std::nullopt, 1e-6);
  check_suffix("\xC2\xB5", std::nullopt, 1e-6);  // µ MICRO SIGN U+00B5
  check_suffix("\xCE\xBC", std::nullopt, 1e-6);  // μ GREEK SMALL LETTER MU U+03BC
  check_suffix("m", std::nullopt, 1e-3);
  check_suffix("k", std::nullopt, 1e3);
  check_suffix("M", std::nullopt, 1e6);
  check_suffix("G", std::nullopt, 1e9);
  check_suffix("T", std::nullopt, 1e12);
}

// "Units: `ohm Ω`, `S` (siemens), `F`, `H`, `V`, `A`, `Vrms`, `Arms`, `W`, `J`, `A2s` (A²s), `s`,
// `Hz`, `deg`, `rad`, `%`."
TEST_CASE("every unit of the format has its dimension and scale", "[units]") {
  // source: the SI Brochure, BIPM, 9th edition (2019), table 4 (derived units: ohm, siemens,
  // farad, henry, volt, watt, joule, hertz, radian are coherent: scale 1) and table 2 (ampere,
  // second); the degree is (π/180) rad, table 8
  check_suffix("ohm", Dimension::resistance, 1);
  check_suffix("\xCE\xA9", Dimension::resistance, 1);      // Ω U+03A9
  check_suffix("\xE2\x84\xA6", Dimension::resistance, 1);  // Ω U+2126 OHM SIGN
  check_suffix("S", Dimension::conductance, 1);
  check_suffix("F", Dimension::capacitance, 1);
  check_suffix("H", Dimension::inductance, 1);
  check_suffix("V", Dimension::voltage, 1);
  check_suffix("A", Dimension::current, 1);
  check_suffix("Vrms", Dimension::voltage, 1, true);
  check_suffix("Arms", Dimension::current, 1, true);
  check_suffix("W", Dimension::power, 1);
  check_suffix("J", Dimension::energy, 1);
  check_suffix("A2s", Dimension::action, 1);
  check_suffix("A\xC2\xB2s", Dimension::action, 1);  // A²s
  check_suffix("s", Dimension::time, 1);
  check_suffix("Hz", Dimension::frequency, 1);
  check_suffix("rad", Dimension::angle, 1);
  check_suffix("deg", Dimension::angle, std::numbers::pi / 180);
  check_suffix("\xC2\xB0", Dimension::angle, std::numbers::pi / 180);  // °
  check_suffix("%", Dimension::percent, 1);
}

TEST_CASE("a prefix multiplies its unit, and case tells milli from mega and farad from femto", "[units]") {
  // source: the SI Brochure, BIPM, 9th edition (2019), table 7 (prefixes)
  check_suffix("kohm", Dimension::resistance, 1e3);
  check_suffix("k\xCE\xA9", Dimension::resistance, 1e3);
  check_suffix("Mohm", Dimension::resistance, 1e6);
  check_suffix("mohm", Dimension::resistance, 1e-3);
  check_suffix("mS", Dimension::conductance, 1e-3);
  check_suffix("nF", Dimension::capacitance, 1e-9);
  check_suffix("\xC2\xB5" "F", Dimension::capacitance, 1e-6);
  check_suffix("pF", Dimension::capacitance, 1e-12);
  check_suffix("mF", Dimension::capacitance, 1e-3);
  check_suffix("mH", Dimension::inductance, 1e-3);
  check_suffix("uH", Dimension::inductance, 1e-6);
  check_suffix("kV", Dimension::voltage, 1e3);
  check_suffix("mVrms", Dimension::voltage, 1e-3, true);
  check_suffix("mA", Dimension::current, 1e-3);
  check_suffix("kArms", Dimension::current, 1e3, true);
  check_suffix("MW", Dimension::power, 1e6);
  check_suffix("mW", Dimension::power, 1e-3);
  check_suffix("kJ", Dimension::energy, 1e3);
  check_suffix("kA2s", Dimension::action, 1e3);
  check_suffix("ms", Dimension::time, 1e-3);
  check_suffix("us", Dimension::time, 1e-6);
  check_suffix("ns", Dimension::time, 1e-9);
  check_suffix("kHz", Dimension::frequency, 1e3);
  check_suffix("MHz", Dimension::frequency, 1e6);
  check_suffix("mrad", Dimension::angle, 1e-3);
  check_suffix("f", std::nullopt, 1e-15);  // a lone f is the prefix femto, not a unit
}

TEST_CASE("an empty suffix is a bare number", "[units]") { check_suffix("", std::nullopt, 1); }

TEST_CASE("text that is not a unit is refused", "[units]") {
  for (std::string_view text : {"x", "ohms", "Ohm", "OHM", "hz", "HZ", "v", "a", "sec", "mm", "kk", "kdeg", "m%",
                                "k\xC2\xB0", "Vpk", "A2", "F1", "kms", " V", "V "}) {
    INFO("suffix '" << std::string(text) << "'");
    CHECK_FALSE(parse_unit_suffix(text).has_value());
  }
}

TEST_CASE("the nouns of dimensions read as the parser's messages use them", "[units]") {
  CHECK(dimension_noun(Dimension::resistance) == "a resistance");
  CHECK(dimension_noun(Dimension::capacitance) == "a capacitance");
  CHECK(dimension_noun(Dimension::inductance) == "an inductance");
  CHECK(dimension_noun(Dimension::ratio) == "a plain number");
  CHECK(dimension_noun(Dimension::angle) == "an angle");
}

TEST_CASE("a command-line quantity reads number and unit, with or without a space", "[units]") {
  CHECK(parse_quantity_argument("12ms", Dimension::time, "--at").value == near(0.012));
  CHECK(parse_quantity_argument(" 12 ms ", Dimension::time, "--at").value == near(0.012));
  CHECK(parse_quantity_argument("4.7 k\xCE\xA9", Dimension::resistance, "--r").value == near(4700));
  CHECK(parse_quantity_argument("-2.5e-3 A", Dimension::current, "--i").value == near(-2.5e-3));
  CHECK(parse_quantity_argument("+5", Dimension::voltage, "--v").value == near(5));
  Quantity q = parse_quantity_argument("230 V", Dimension::voltage, "--v");
  CHECK_FALSE(q.rms);
  CHECK(q.dimension == Dimension::voltage);
  // No command-line value is a sinusoid amplitude, so an rms unit has no meaning there.
  CHECK_THROWS_WITH(parse_quantity_argument("230 Vrms", Dimension::voltage, "--v"),
                    Catch::Contains("Vrms and Arms only go with the amplitude of a sinusoid"));
}

// "A bare number takes the unit that its place expects." (decision: a bare angle is in degrees)
TEST_CASE("a bare command-line quantity takes the expected unit, and a bare angle is in degrees", "[units]") {
  CHECK(parse_quantity_argument("40", Dimension::time, "--at").value == near(40));
  CHECK(parse_quantity_argument("40m", Dimension::time, "--at").value == near(0.040));
  // source: definition of the degree, π/180 rad (the SI Brochure, BIPM, 9th edition (2019), table 8)
  CHECK(parse_quantity_argument("30", Dimension::angle, "--phase").value == near(30 * std::numbers::pi / 180));
  CHECK(parse_quantity_argument("-90 deg", Dimension::angle, "--phase").value == near(-std::numbers::pi / 2));
  CHECK(parse_quantity_argument("1 rad", Dimension::angle, "--phase").value == near(1));
}

TEST_CASE("a command-line quantity of the wrong kind is an input error naming the option", "[units]") {
  try {
    parse_quantity_argument("5 A", Dimension::voltage, "--v");
    FAIL("a current was taken as a voltage");
  } catch (const InputError& e) {
    CHECK(e.exit_code() == ExitCode::bad_input);
    CHECK(e.diagnostics().at(0).message == "--v: '5 A' is a current, but a voltage is needed here");
  }
  CHECK_THROWS_AS(parse_quantity_argument("abc", Dimension::time, "--at"), InputError);
  CHECK_THROWS_AS(parse_quantity_argument("5 parsecs", Dimension::time, "--at"), InputError);
  CHECK_THROWS_AS(parse_quantity_argument("", Dimension::time, "--at"), InputError);
  CHECK_THROWS_AS(parse_quantity_argument("1e400", Dimension::time, "--at"), InputError);
}

TEST_CASE("engineering notation picks the SI prefix and keeps the significant digits", "[units]") {
  // The two examples of units.hpp.
  CHECK(format_si(0.006667, "s") == "6.667 ms");
  CHECK(format_si(4700, "\xCE\xA9") == "4.7 k\xCE\xA9");
  CHECK(format_si(-0.119, "V") == "-119 mV");
  CHECK(format_si(1e6, "Hz") == "1 MHz");
  CHECK(format_si(0, "A") == "0 A");
  CHECK(format_si(999.96e-6, "s") == "1 ms");  // rounded first, then prefixed
  CHECK(format_si(30, "\xC2\xB0") == "30\xC2\xB0");
  CHECK(format_si(std::numeric_limits<double>::infinity(), "s") == "\xE2\x88\x9E s");
  CHECK(format_si(std::nan(""), "s") == "undefined");
}

TEST_CASE("exact formatting reads back to the same double", "[units]") {
  for (double x : {0.1, 1.0 / 3.0, 1e-300, 6.02214076e23, -2.5e-7, 0.0}) {
    std::string s = format_exact(x);
    double back = 0;
    auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), back);
    INFO(s);
    CHECK(ec == std::errc());
    CHECK(end == s.data() + s.size());
    CHECK(back == x);
  }
  CHECK(format_exact(std::numeric_limits<double>::infinity()) == "inf");
}
