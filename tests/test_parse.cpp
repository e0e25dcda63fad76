// Tests of the `.nf` parser against docs/netlist-format.md. Each group is headed by the rule
// it checks, quoted from the format description; rules marked "(decision)" are the project's
// own reading of a point the description leaves open, recorded in docs/netlist-format.md.
#include <catch2/catch.hpp>

#include <charconv>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <random>
#include <sstream>
#include <string>

#include <fmt/format.h>

#include "netfold/parse.hpp"
#include "netfold/report.hpp"
#include "netfold/solve.hpp"
#include "parse_helpers.hpp"
#include "temp_dir.hpp"

using namespace netfold;
using netfold_test::parse_errors;
using netfold_test::parses_ok;

namespace {

const Element& element(const Circuit& c, std::string_view name) {
  auto id = c.find_element(name);
  REQUIRE(id.has_value());
  return c.element(*id);
}

const std::string& node_name(const Circuit& c, NodeId id) { return c.nodes().at(id); }

// Relative closeness for values that go through a decimal conversion and one multiplication.
Approx near(double x) { return Approx(x).epsilon(1e-12).margin(1e-300); }

constexpr double kPi = std::numbers::pi;
constexpr double kDeg = kPi / 180.0;  // source: definition of the degree, π/180 rad (SI Brochure, table 8)

// A minimal valid circuit to which a test adds the line it is about.
const std::string kBase = "R0: resistor a -> gnd, 1k\n";

}  // namespace

// =============================================================================================
// Lexical rules
// =============================================================================================

// "`#` starts a comment that runs to the end of the line. Blank lines are ignored."
TEST_CASE("comments and blank lines are ignored, and a '#' inside a title is text", "[parse]") {
  Circuit c = parses_ok(
      "# a comment line\n"
      "\n"
      "   \t  \n"
      "title \"bench #3\"   # the comment after the title\n"
      "R1: resistor a -> gnd, 1k  # a trailing comment, value 1k\n"
      "#R2: resistor a -> gnd, 2k\n");
  CHECK(c.title() == "bench #3");
  CHECK(c.elements().size() == 1);
}

TEST_CASE("a title string must end on its own line", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "title \"open\n", 2, 7, "unterminated string");
}

// "A line ending in `\` continues on the next line."
TEST_CASE("a trailing backslash joins the next line, also before a comment", "[parse]") {
  Circuit c = parses_ok(
      "C1: capacitor a -> gnd, \\\n"
      "    470 nF, \\   # the value\n"
      "    rated 400 V\n"
      "R1: resistor a -> gnd, 1k\n");
  const Element& c1 = element(c, "C1");
  CHECK(c1.value == near(470e-9));
  REQUIRE(c1.ratings.size() == 1);
  CHECK(c1.ratings[0].limit == near(400));
  CHECK(c1.ratings[0].loc.line == 3);  // continuation lines keep their own line numbers
  CHECK(c1.ratings[0].loc.col == 5);
}

TEST_CASE("an error on a continuation line is reported at that physical line and column", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, \\\n  470 nF\n", 3, 3, "is a capacitance");
}

TEST_CASE("a backslash anywhere but at the end of a line is an error", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> \\ gnd, 1k\n", 2, 19, "'\\' continues a statement only");
}

// (decision) "CRLF line ends are accepted; a UTF-8 byte-order mark at the start is skipped;
// tabs are whitespace."
TEST_CASE("CRLF line ends, a byte-order mark and tabs are accepted", "[parse]") {
  Circuit c = parses_ok("\xEF\xBB\xBFR1:\tresistor a\t->\tgnd,\t1k\r\nwatch R1.v\r\n");
  CHECK(element(c, "R1").value == near(1000));
  CHECK(c.watches().at(0).text == "R1.v");
}

TEST_CASE("columns start after the byte-order mark", "[parse]") {
  REQUIRE_PARSE_ERROR("\xEF\xBB\xBFR1: resistr a -> gnd, 1k\n", 1, 5, "unknown element kind 'resistr'");
}

TEST_CASE("columns after a CRLF line are counted on the next line", "[parse]") {
  REQUIRE_PARSE_ERROR("R0: resistor a -> gnd, 1k\r\nR1: resistor a -> gnd, 1 nF\r\n", 2, 24, "is a capacitance");
}

// "UTF-8 text." (decision: a column counts code points, not bytes)
TEST_CASE("columns count characters, not bytes", "[parse]") {
  // 'Ω' is two bytes and 'µ' two; the error column is that of the character.
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1 k\xCE\xA9, rated 1 \xC2\xB5H\n", 2, 36,
                      "is an inductance, but 'rated' on a resistor needs a power");
}

TEST_CASE("a NUL byte makes the file not text, reported where it is", "[parse]") {
  std::string text = kBase + "R1: resistor a -> gnd, 1k";
  text += '\0';
  text += "\n";
  REQUIRE_PARSE_ERROR(text, 2, 26, "the file is not text: it holds a NUL byte");
}

TEST_CASE("invalid UTF-8 makes the file not text, reported where it is", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "title \"caf\xE9\"\n", 2, 11, "the file is not text: invalid UTF-8 (byte 0xE9)");
  REQUIRE_PARSE_ERROR(kBase + "# \xC0\xAF overlong\n", 2, 3, "invalid UTF-8 (byte 0xC0)");
  REQUIRE_PARSE_ERROR(kBase + "# \xED\xA0\x80 surrogate\n", 2, 3, "invalid UTF-8 (byte 0xED)");
  REQUIRE_PARSE_ERROR(kBase + "# truncated \xE2\x84", 2, 13, "invalid UTF-8 (byte 0xE2)");
}

TEST_CASE("a character that belongs to no token is an error naming it", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd; 1k\n", 2, 22, "unexpected character ';'");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a \x01-> gnd, 1k\n", 2, 16, "unexpected control character U+0001");
  REQUIRE_PARSE_ERROR(kBase + "R\xC3\xA9: resistor a -> gnd, 1k\n", 2, 2, "unexpected character '\xC3\xA9'");
}

// "Names (elements, nodes) are `[A-Za-z_][A-Za-z0-9_]*`, case-sensitive."
TEST_CASE("names are case-sensitive and may hold digits and underscores", "[parse]") {
  Circuit c = parses_ok("r1: resistor A -> gnd, 1k\nR1: resistor a -> gnd, 2k\n_x_2: resistor a -> A, 3k\n");
  CHECK(c.elements().size() == 3);
  CHECK(element(c, "r1").value == near(1000));
  CHECK(element(c, "R1").value == near(2000));
  CHECK(c.find_node("A") != c.find_node("a"));
  CHECK(node_name(c, element(c, "_x_2").neg) == "A");
}

TEST_CASE("an element name must be a name", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "2R: resistor a -> gnd, 1k\n", 2, 1, "found '2R:'");
  REQUIRE_PARSE_ERROR(kBase + "k\xCE\xA9: resistor a -> gnd, 1k\n", 2, 1, "'k\xCE\xA9' is not a valid name");
}

// "Element names and node names live in separate namespaces; a node is referred to as `@name`
// wherever it could be confused with an element (observables, expectations)."
TEST_CASE("an element and a node may share a name", "[parse]") {
  Circuit c = parses_ok("a: resistor a -> gnd, 1k\nwatch a.v, @a\n");
  REQUIRE(c.watches().size() == 2);
  CHECK(c.watches()[0].kind == ObservableKind::element_voltage);
  CHECK(c.watches()[0].element == *c.find_element("a"));
  CHECK(c.watches()[1].kind == ObservableKind::node_voltage);
  CHECK(c.watches()[1].node_a == *c.find_node("a"));
}

// "The reference node is called `gnd` unless a `ground NAME` statement names another."
TEST_CASE("the reference node is gnd by default", "[parse]") {
  Circuit c = parses_ok("R1: resistor a -> gnd, 1k\n");
  CHECK(node_name(c, c.ground()) == "gnd");
  CHECK(c.ground_loc().line == 0);
}

TEST_CASE("a ground statement names the reference, wherever it stands", "[parse]") {
  Circuit c = parses_ok("R1: resistor a -> n, 1k\nR2: resistor a -> gnd, 1k\nground n\n");
  CHECK(node_name(c, c.ground()) == "n");
  CHECK(c.ground_loc().line == 3);
  CHECK(c.ground_loc().col == 1);
  // With another reference, `gnd` is an ordinary node.
  CHECK(c.find_node("gnd").has_value());
  CHECK(*c.find_node("gnd") != c.ground());
}

TEST_CASE("a circuit that never touches the reference node is an error", "[parse]") {
  auto errors = parse_errors("R1: resistor a -> b, 1k\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].loc.line == 0);
  CHECK(errors[0].message ==
        "no element connects to the reference node 'gnd'; connect one, or name the reference with 'ground NODE'");
  REQUIRE_PARSE_ERROR("ground n\nR1: resistor a -> b, 1k\n", 1, 8, "no element connects to the reference node 'n'");
}

TEST_CASE("ground may be given only once", "[parse]") {
  REQUIRE_PARSE_ERROR("ground a\n" + kBase + "ground gnd\n", 3, 1, "'ground' may be given only once; it is already given on line 1");
  REQUIRE_PARSE_ERROR(kBase + "ground @a\n", 2, 8, "write 'n', not '@n'");
}

// "Unicode and ASCII spellings are both accepted: `Ω`/`ohm`, `µ`/`u`, `±`/`+-`, `°`/`deg`."
TEST_CASE("Unicode and ASCII spellings of units and signs mean the same", "[parse]") {
  Circuit c = parses_ok(
      "R1: resistor a -> gnd, 4.7 k\xCE\xA9\n"      // Ω GREEK CAPITAL LETTER OMEGA, U+03A9
      "R2: resistor a -> gnd, 4.7k\xE2\x84\xA6\n"   // Ω OHM SIGN, U+2126
      "R3: resistor a -> gnd, 4.7 kohm\n"
      "C1: capacitor a -> b, 2.2 \xC2\xB5" "F\n"    // µ MICRO SIGN, U+00B5
      "L1: inductor b -> gnd, 2.2 \xCE\xBC" "H\n"   // μ GREEK SMALL LETTER MU, U+03BC
      "R4: resistor b -> gnd, 2.2 uohm\n"
      "V1: voltage-source v -> gnd, cosine 1 V 50 Hz phase 30\xC2\xB0 + cosine 1 V 60 Hz phase 30 deg\n"
      "R5: resistor v -> gnd, 1k\n"
      "expect tau = 1 ms \xC2\xB1 1%\n"
      "expect rth = 1 kohm +- 1%\n");
  CHECK(element(c, "R1").value == near(4700));
  CHECK(element(c, "R2").value == near(4700));
  CHECK(element(c, "R3").value == near(4700));
  CHECK(element(c, "C1").value == near(2.2e-6));
  CHECK(element(c, "L1").value == near(2.2e-6));
  CHECK(element(c, "R4").value == near(2.2e-6));
  const auto& s = element(c, "V1").waveform.sinusoids;
  REQUIRE(s.size() == 2);
  CHECK(s[0].phase == near(30 * kDeg));
  CHECK(s[1].phase == near(30 * kDeg));
  REQUIRE(c.claims().size() == 2);
  CHECK(c.claims()[0].tolerance == near(1));
  CHECK(c.claims()[0].tolerance_is_percent);
  CHECK(c.claims()[1].tolerance == near(1));
}

// =============================================================================================
// Values
// =============================================================================================

// "`NUMBER [PREFIX][UNIT]`, with or without a space between number and unit: `470n`, `470 nF`,
// `4.7k`, `4.7 kΩ`, `4.7kohm`, `1e-3 F`, `-90 deg`, `230 Vrms`, `50 Hz`."
TEST_CASE("every value example of the format reads as its SI value", "[parse]") {
  Circuit c = parses_ok(
      "C1: capacitor a -> gnd, 470n\n"
      "C2: capacitor a -> gnd, 470 nF\n"
      "R1: resistor a -> gnd, 4.7k\n"
      "R2: resistor a -> gnd, 4.7 k\xCE\xA9\n"
      "R3: resistor a -> gnd, 4.7kohm\n"
      "C3: capacitor a -> gnd, 1e-3 F\n"
      "V1: voltage-source b -> gnd, cosine 230 Vrms 50 Hz phase -90 deg\n"
      "R4: resistor b -> gnd, 1k\n");
  // source: the SI Brochure, BIPM, 9th edition (2019), table 7 (prefixes n = 1e-9, k = 1e3)
  CHECK(element(c, "C1").value == near(470e-9));
  CHECK(element(c, "C2").value == near(470e-9));
  CHECK(element(c, "R1").value == near(4700));
  CHECK(element(c, "R2").value == near(4700));
  CHECK(element(c, "R3").value == near(4700));
  CHECK(element(c, "C3").value == near(1e-3));
  const Sinusoid& s = element(c, "V1").waveform.sinusoids.at(0);
  // source: definition of the rms value of a sinusoid, peak = rms × √2 (from memory)
  CHECK(s.amplitude == near(230 * std::sqrt(2.0)));
  CHECK(s.frequency == near(50));
  CHECK(s.phase == near(-kPi / 2));  // -90° = −π/2 rad
}

// (decision) "Number scanning accepts `470`, `4.7`, `.5`, `1e-3`, `-90`, `+5` and does not
// swallow the `..` range operator."
TEST_CASE("numbers may be integers, decimals, start with a point, carry an exponent or a sign", "[parse]") {
  Circuit c = parses_ok(
      "R1: resistor a -> gnd, 470\n"
      "R2: resistor a -> gnd, 4.7\n"
      "R3: resistor a -> gnd, .5\n"
      "R4: resistor a -> gnd, 1e-3\n"
      "R5: resistor a -> gnd, +5\n"
      "R6: resistor a -> gnd, 2.5E+3\n"
      "V1: voltage-source b -> gnd, step -90 at -1\n"
      "R7: resistor b -> gnd, 1k\n"
      "window 0..40ms\n");
  CHECK(element(c, "R1").value == near(470));
  CHECK(element(c, "R2").value == near(4.7));
  CHECK(element(c, "R3").value == near(0.5));
  CHECK(element(c, "R4").value == near(1e-3));
  CHECK(element(c, "R5").value == near(5));
  CHECK(element(c, "R6").value == near(2500));
  CHECK(element(c, "V1").waveform.steps.at(0).level == near(-90));
  CHECK(element(c, "V1").waveform.steps.at(0).time == near(-1));
  REQUIRE(c.window().has_value());
  CHECK(c.window()->from == 0);
  CHECK(c.window()->to == near(0.040));
}

// (decision) "1e300 and 1e-300 are valid numbers; a non-finite result is out of range."
TEST_CASE("very large and very small numbers are kept, but overflow is out of range", "[parse]") {
  Circuit c = parses_ok("R1: resistor a -> gnd, 1e300\nR2: resistor a -> gnd, 1e-300\n");
  CHECK(element(c, "R1").value == near(1e300));
  CHECK(element(c, "R2").value == near(1e-300));
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1e400\n", 2, 24, "'1e400' is out of range");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1e300 T\n", 2, 24, "'1e300 T' is out of range");
}

// "Prefixes (SI): `f p n u µ m k M G T`. Case matters: `m` is milli, `M` is mega."
TEST_CASE("every prefix scales by its SI factor and case tells milli from mega", "[parse]") {
  Circuit c = parses_ok(
      "Rf: resistor a -> gnd, 1f\nRp: resistor a -> gnd, 1p\nRn: resistor a -> gnd, 1n\n"
      "Ru: resistor a -> gnd, 1u\nRmu: resistor a -> gnd, 1\xC2\xB5\nRm: resistor a -> gnd, 1m\n"
      "Rk: resistor a -> gnd, 1k\nRM: resistor a -> gnd, 1M\nRG: resistor a -> gnd, 1G\n"
      "RT: resistor a -> gnd, 1T\nRmo: resistor a -> gnd, 3 mohm\nRMo: resistor a -> gnd, 3 Mohm\n");
  // source: the SI Brochure, BIPM, 9th edition (2019), table 7 (prefixes)
  CHECK(element(c, "Rf").value == near(1e-15));
  CHECK(element(c, "Rp").value == near(1e-12));
  CHECK(element(c, "Rn").value == near(1e-9));
  CHECK(element(c, "Ru").value == near(1e-6));
  CHECK(element(c, "Rmu").value == near(1e-6));
  CHECK(element(c, "Rm").value == near(1e-3));
  CHECK(element(c, "Rk").value == near(1e3));
  CHECK(element(c, "RM").value == near(1e6));
  CHECK(element(c, "RG").value == near(1e9));
  CHECK(element(c, "RT").value == near(1e12));
  CHECK(element(c, "Rmo").value == near(3e-3));
  CHECK(element(c, "RMo").value == near(3e6));
}

// "A bare number takes the unit that its place expects." (decision: a bare angle is in degrees)
TEST_CASE("a bare number takes the unit of its place, and a bare angle is in degrees", "[parse]") {
  Circuit c = parses_ok(
      "V1: voltage-source a -> gnd, cosine 10 50 phase 30\n"
      "K1: switch a -> b, closes at 2, opens at 3\n"
      "R1: resistor b -> gnd, 10\n"
      "expect phase @a = 30 \xC2\xB1 1\n");
  const Sinusoid& s = element(c, "V1").waveform.sinusoids.at(0);
  CHECK(s.amplitude == near(10));  // volts
  CHECK(s.frequency == near(50));  // hertz
  CHECK(s.phase == near(30 * kDeg));
  CHECK(element(c, "K1").events.at(0).time == near(2));  // seconds
  CHECK(element(c, "R1").value == near(10));             // ohms
  CHECK(c.claims().at(0).value == near(30 * kDeg));
  CHECK(c.claims().at(0).tolerance == near(1 * kDeg));
}

TEST_CASE("angles in rad are taken as written, in deg converted by pi/180", "[parse]") {
  Circuit c = parses_ok("V1: voltage-source a -> gnd, cosine 1 50 phase 0.5 rad + sine 1 50 phase 45 deg\n"
                        "R1: resistor a -> gnd, 1\n");
  const auto& s = element(c, "V1").waveform.sinusoids;
  CHECK(s.at(0).phase == near(0.5));
  CHECK(s.at(1).phase == near(45 * kDeg - kPi / 2));
}

// "A unit that does not fit its place is an error (`470 nF` as a resistor value), never silently
// ignored." and, from "Errors": "`valve.nf:7:22: error: '470 nF' is a capacitance, but a resistor
// needs a resistance`"
TEST_CASE("a unit of the wrong dimension is an error worded as in the format description", "[parse]") {
  auto errors = parse_errors("free_r: resistor a -> gnd, 470 nF\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].loc.line == 1);
  CHECK(errors[0].loc.col == 28);
  CHECK(errors[0].message == "'470 nF' is a capacitance, but a resistor needs a resistance");
  CHECK(errors[0].format().rfind("test.nf:1:28: error: '470 nF' is a capacitance, but a resistor needs a resistance", 0) == 0);
  REQUIRE_PARSE_ERROR(kBase + "C1: capacitor a -> gnd, 4.7kohm\n", 2, 25,
                      "'4.7kohm' is a resistance, but a capacitor needs a capacitance");
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd, closes at 5 V\n", 2, 32, "'5 V' is a voltage, but 'closes at' needs a time");
}

// (decision) "A number followed directly by letters that are not a unit is an error."
TEST_CASE("letters glued to a number must be a unit", "[parse]") {
  auto errors = parse_errors("R1: resistor a -> gnd, 470x\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].message == "unknown unit 'x' in '470x'");
  CHECK(errors[0].loc.col == 27);
  REQUIRE_PARSE_ERROR(kBase + "C1: capacitor a -> gnd, 10 uF1\n", 2, 28, "found 'uF1', which is not a unit");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1 kdeg\n", 2, 26, "found 'kdeg', which is not a unit");
}

// "`Vrms`/`Arms` amplitudes are converted to peak (× √2) for sinusoids; on `dc` they are an
// error." and "`Vrms`/`Arms` on `dc` or `step` is an error."
TEST_CASE("rms amplitudes of sinusoids are converted to peak", "[parse]") {
  Circuit c = parses_ok("I1: current-source gnd -> a, sine 2 Arms 50 Hz + cosine 10 mArms 1 kHz\n"
                        "R1: resistor a -> gnd, 1k\n");
  const auto& s = element(c, "I1").waveform.sinusoids;
  // source: definition of the rms value of a sinusoid, peak = rms × √2 (from memory)
  CHECK(s.at(0).amplitude == near(2 * std::sqrt(2.0)));
  CHECK(s.at(1).amplitude == near(10e-3 * std::sqrt(2.0)));
}

TEST_CASE("rms values anywhere but a sinusoid amplitude are errors", "[parse]") {
  auto errors = parse_errors("V1: voltage-source a -> gnd, dc 5 Vrms\nR1: resistor a -> gnd, 1k\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].message ==
        "'5 Vrms' is an rms value; rms applies only to the amplitude of a cosine or sine, not to 'dc' on a voltage-source");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, step 5 Vrms at 0\n", 2, 35, "'5 Vrms' is an rms value");
  REQUIRE_PARSE_ERROR(kBase + "C1: capacitor a -> gnd, 1u, rated 400 Vrms\n", 2, 35, "is an rms value");
  REQUIRE_PARSE_ERROR(kBase + "expect vth = 1 Vrms \xC2\xB1 1%\n", 2, 14, "is an rms value");
}

// =============================================================================================
// Elements
// =============================================================================================

// "NAME: KIND NODE -> NODE, VALUE[, ATTRIBUTE VALUE]..." and "The arrow fixes the reference
// directions: the element's voltage is v(first) − v(second)"
TEST_CASE("an element line gives name, kind, ordered nodes, value and positions", "[parse]") {
  Circuit c = parses_ok("load:  resistor out -> gnd, 2.2 kohm, rated 0.25 W, pulse-rated 3 J\n");
  const Element& e = element(c, "load");
  CHECK(e.name == "load");
  CHECK(e.kind == ElementKind::resistor);
  CHECK(node_name(c, e.pos) == "out");
  CHECK(node_name(c, e.neg) == "gnd");
  CHECK(e.value == near(2200));
  CHECK(e.loc.line == 1);
  CHECK(e.loc.col == 1);
  CHECK(e.value_loc.col == 29);
  REQUIRE(e.ratings.size() == 2);
  CHECK(e.ratings[0].kind == RatingKind::mean_power);
  CHECK(e.ratings[0].limit == near(0.25));
  CHECK(e.ratings[0].loc.col == 39);
  CHECK(e.ratings[1].kind == RatingKind::energy);
  CHECK(e.ratings[1].limit == near(3));
}

TEST_CASE("nodes are created on first use, in order", "[parse]") {
  Circuit c = parses_ok("R1: resistor x -> y, 1\nR2: resistor y -> gnd, 1\nR3: resistor z -> x, 1\n");
  REQUIRE(c.nodes().size() == 4);
  CHECK(c.nodes()[0] == "x");
  CHECK(c.nodes()[1] == "y");
  CHECK(c.nodes()[2] == "gnd");
  CHECK(c.nodes()[3] == "z");
}

TEST_CASE("a malformed element line says what it expected", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a gnd, 1k\n", 2, 16, "expected '->' between the two nodes of R1, found 'gnd'");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd\n", 2, 22, "expected ',' and a resistance after the nodes, found end of line");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd,\n", 2, 23, "expected a resistance, found end of line");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, rated 1 W\n", 2, 24, "expected a resistance, found 'rated'");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor @a -> gnd, 1k\n", 2, 14, "write 'a', not '@a'");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1k 2k\n", 2, 27, "expected ',' or end of line, found '2k'");
  REQUIRE_PARSE_ERROR(kBase + "R1:\n", 2, 4, "expected an element kind");
}

TEST_CASE("an unknown kind is quoted whole and the kinds are listed", "[parse]") {
  auto errors = parse_errors(kBase + "V1: voltage-sourc a -> gnd, dc 1\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].loc.col == 5);
  CHECK(errors[0].message ==
        "unknown element kind 'voltage-sourc'; the kinds are resistor, capacitor, inductor, voltage-source, "
        "current-source, switch, diode, vcvs, vccs, ccvs or cccs");
}

// (decision) "An element whose two nodes are the same node is an error."
TEST_CASE("an element connecting a node to itself is an error at the second node", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> a, 1k\n", 2, 19, "both ends of R1 are node 'a'");
}

// (decision) "non-positive R/L/C is an error"
TEST_CASE("resistance, capacitance and inductance must be positive", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 0\n", 2, 24, "a resistor needs a positive resistance, found '0'");
  REQUIRE_PARSE_ERROR(kBase + "C1: capacitor a -> gnd, -1 uF\n", 2, 25, "a capacitor needs a positive capacitance, found '-1 uF'");
  REQUIRE_PARSE_ERROR(kBase + "L1: inductor a -> gnd, 0 H\n", 2, 24, "an inductor needs a positive inductance");
}

// (decision) "Duplicate element names: point at the second, mention the first's line."
TEST_CASE("a second element of the same name is an error that names the first's line", "[parse]") {
  REQUIRE_PARSE_ERROR("R1: resistor a -> gnd, 1k\n\nR1: resistor a -> gnd, 2k\n", 3, 1,
                      "duplicate element name 'R1': the first 'R1' is on line 1");
}

// The table: "`capacitor` | capacitance (F) | `initial V` (voltage at t = 0−), `rated V` (peak
// voltage)" and "`inductor` | inductance (H) | `initial A` (current at t = 0−), `rated A`"
TEST_CASE("capacitor and inductor take initial and rated in their own units", "[parse]") {
  Circuit c = parses_ok("C1: capacitor a -> gnd, 10 uF, initial -12 V, rated 63 V\n"
                        "L1: inductor a -> b, 5 mH, rated 2 A, initial 150 mA\n"
                        "R1: resistor b -> gnd, 1k\n");
  const Element& c1 = element(c, "C1");
  REQUIRE(c1.initial.has_value());
  CHECK(*c1.initial == near(-12));
  REQUIRE(c1.ratings.size() == 1);
  CHECK(c1.ratings[0].kind == RatingKind::peak_voltage);
  CHECK(c1.ratings[0].limit == near(63));
  const Element& l1 = element(c, "L1");
  CHECK(*l1.initial == near(0.150));
  CHECK(l1.ratings.at(0).kind == RatingKind::peak_current);
  CHECK(l1.ratings.at(0).limit == near(2));
  CHECK_FALSE(element(c, "R1").initial.has_value());
  REQUIRE_PARSE_ERROR(kBase + "C1: capacitor a -> gnd, 1u, initial 5 A\n", 2, 37, "'5 A' is a current, but 'initial' on a capacitor needs a voltage");
  REQUIRE_PARSE_ERROR(kBase + "L1: inductor a -> gnd, 1m, rated 5 V\n", 2, 34, "'5 V' is a voltage, but 'rated' on an inductor needs a current");
}

// (decision) "An attribute the kind does not take is an error that lists what the kind takes;
// so is a repeated non-event attribute."
TEST_CASE("an attribute the kind does not take is an error listing the kind's attributes", "[parse]") {
  auto errors = parse_errors(kBase + "R1: resistor a -> gnd, 1k, initial 5 V\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].loc.col == 28);
  CHECK(errors[0].message == "a resistor takes no attribute 'initial'; its attributes are: rated P W, pulse-rated E J, rated-i2t X A2s, tolerance P%");
  REQUIRE_PARSE_ERROR(kBase + "I1: current-source a -> gnd, dc 1 mA, rated 1 A\n", 2, 39, "a current-source takes no attribute 'rated'; its attributes are: rated-i2t X A2s, tolerance P%");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1k, 5 W\n", 2, 28, "expected an attribute of a resistor (rated P W, pulse-rated E J, rated-i2t X A2s, tolerance P%), found '5'");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1k,\n", 2, 27, "found end of line");
}

TEST_CASE("a repeated attribute is an error", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1k, rated 1 W, rated 2 W\n", 2, 39,
                      "'rated' is given twice on R1; a resistor takes each of these once: rated P W, pulse-rated E J, rated-i2t X A2s, tolerance P%");
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd, closes at 0, on 1, on 2\n", 2, 41, "'on' is given twice on K1");
}

// (decision) "Ratings must be > 0."
TEST_CASE("a rating must be positive", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1k, rated 0 W\n", 2, 34, "a rating must be positive, found '0 W'");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, dc 1, rated -1 A\n", 2, 42, "a rating must be positive");
}

// "`voltage-source` | waveform (below); first node is the + terminal | `rated A`"
TEST_CASE("a voltage-source takes a waveform in volts and a current rating", "[parse]") {
  Circuit c = parses_ok("V1: voltage-source p -> gnd, dc 12 V, rated 3 A\nR1: resistor p -> gnd, 1k\n");
  const Element& v = element(c, "V1");
  CHECK(v.kind == ElementKind::voltage_source);
  CHECK(node_name(c, v.pos) == "p");
  CHECK(v.waveform.dc == near(12));
  CHECK(v.value == 0);
  CHECK(v.value_loc.col == 30);
  CHECK(v.ratings.at(0).kind == RatingKind::peak_current);
  CHECK(v.ratings.at(0).limit == near(3));
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, dc 5 A\n", 2, 33, "'5 A' is a current, but 'dc' on a voltage-source needs a voltage");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd\n", 2, 28, "expected ',' and a waveform after the nodes, found end of line");
}

// "`current-source` | waveform; drives its current through itself from the first node to the second"
TEST_CASE("a current-source takes a waveform in amperes", "[parse]") {
  Circuit c = parses_ok("I1: current-source gnd -> a, dc 2 mA + step 1 mA at 5 ms\nR1: resistor a -> gnd, 1k\n");
  const Element& i = element(c, "I1");
  CHECK(i.kind == ElementKind::current_source);
  CHECK(node_name(c, i.pos) == "gnd");
  CHECK(i.waveform.dc == near(2e-3));
  CHECK(i.waveform.steps.at(0).level == near(1e-3));
  REQUIRE_PARSE_ERROR(kBase + "I1: current-source a -> gnd, dc 5 V\n", 2, 33, "'5 V' is a voltage, but 'dc' on a current-source needs a current");
}

// "`switch` | none | `closes at T`, `opens at T` (one or more, in time order, separated by
// commas); `on R` (default 0), `off R` (default open circuit); `rated A` (peak current),
// `rated-i2t X A2s`" and "Each event repeats its keyword: `closes at 0 s, opens at 16.7 ms,
// closes at 25 ms`."
TEST_CASE("a switch takes its events in order, its resistances and its ratings", "[parse]") {
  Circuit c = parses_ok(
      "K1: switch a -> b, closes at 0 s, opens at 16.7 ms, closes at 25 ms, on 10 mohm, off 1 Mohm, "
      "rated 3 A, rated-i2t 50 A2s\n"
      "R1: resistor b -> gnd, 1k\nR2: resistor a -> gnd, 1k\n");
  const Element& k = element(c, "K1");
  CHECK(k.kind == ElementKind::switch_);
  REQUIRE(k.events.size() == 3);
  CHECK(k.events[0].closes);
  CHECK(k.events[0].time == 0);
  CHECK_FALSE(k.events[1].closes);
  CHECK(k.events[1].time == near(16.7e-3));
  CHECK(k.events[2].closes);
  CHECK(k.events[2].time == near(25e-3));
  CHECK(k.events[1].loc.col == 35);
  CHECK(k.r_on == near(10e-3));
  CHECK(k.r_off == near(1e6));
  REQUIRE(k.ratings.size() == 2);
  CHECK(k.ratings[0].kind == RatingKind::peak_current);
  CHECK(k.ratings[0].limit == near(3));
  CHECK(k.ratings[1].kind == RatingKind::i2t);
  CHECK(k.ratings[1].limit == near(50));
  CHECK(k.value_loc.col == 5);  // a switch has no value; its kind stands in
  CHECK_FALSE(k.closed_before_zero());
}

TEST_CASE("a switch is ideal by default: no resistance closed, open circuit open", "[parse]") {
  Circuit c = parses_ok("K1: switch a -> gnd, opens at 1 ms\n");
  const Element& k = element(c, "K1");
  CHECK(k.r_on == 0);
  CHECK(k.r_off == kInfinity);
  // "A switch's state before t = 0 is the opposite of its first event"
  CHECK(k.closed_before_zero());
}

TEST_CASE("a switch without events is an error worded exactly", "[parse]") {
  auto errors = parse_errors(kBase + "K1: switch a -> gnd, on 1 ohm\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].loc.line == 2);
  CHECK(errors[0].loc.col == 1);
  CHECK(errors[0].message ==
        "switch K1 never changes state: give it a 'closes at' or 'opens at' event, or replace it by a resistor");
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd\n", 2, 1, "switch K1 never changes state");
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd, 5 ms\n", 2, 22, "expected an attribute of a switch");
}

// "A switch's state before t = 0 is the opposite of its first event; its events alternate."
// (decision: times strictly increase and are ≥ 0)
TEST_CASE("switch events must alternate, rise strictly and not precede t = 0", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd, closes at 1 ms, closes at 2 ms\n", 2, 38,
                      "K1 already closes at 1 ms; its events must alternate between 'closes at' and 'opens at'");
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd, closes at 5 ms, opens at 5 ms\n", 2, 47,
                      "switch events must come in time order: '5 ms' is not after '5 ms'");
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd, opens at -1 ms\n", 2, 31,
                      "a switch event cannot happen before t = 0, found '-1 ms'");
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd, closes 1 ms\n", 2, 29, "expected 'at' after 'closes', found '1'");
}

TEST_CASE("switch resistances: on may be zero, off must be positive", "[parse]") {
  Circuit c = parses_ok("K1: switch a -> gnd, closes at 0, on 0 ohm\n");
  CHECK(element(c, "K1").r_on == 0);
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd, closes at 0, off 0\n", 2, 39, "'off' needs a positive resistance, found '0'");
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> gnd, closes at 0, on -1\n", 2, 38, "'on' needs a resistance of 0 or more");
}

// "`vcvs` | `gain K` | `sense NODE -> NODE` (controlling voltage)", "`vccs` | `gain G S`",
// "`sense A -> B` is v(A) − v(B), with bare node names (`@` is optional there; `gnd` or the
// named ground is allowed)."
TEST_CASE("voltage-controlled sources take a gain and two sense nodes in either order", "[parse]") {
  Circuit c = parses_ok(
      "E1: vcvs o -> gnd, gain 1e5, sense p -> o\n"
      "G1: vccs gnd -> m, sense @o -> @gnd, gain 2 mS\n"
      "R1: resistor p -> gnd, 1k\nR2: resistor m -> gnd, 1k\n");
  const Element& e = element(c, "E1");
  CHECK(e.kind == ElementKind::vcvs);
  CHECK(e.value == near(1e5));
  CHECK(e.value_loc.col == 25);
  CHECK(node_name(c, e.sense_pos) == "p");
  CHECK(node_name(c, e.sense_neg) == "o");
  CHECK(e.sense_element == kNone);
  const Element& g = element(c, "G1");
  CHECK(g.value == near(2e-3));
  CHECK(node_name(c, g.sense_pos) == "o");
  CHECK(g.sense_neg == c.ground());
}

TEST_CASE("a sense node may be the named reference, and must be a node of the circuit", "[parse]") {
  Circuit c = parses_ok("ground n\nE1: vcvs o -> n, gain 2, sense p -> n\nR1: resistor p -> n, 1k\n");
  CHECK(element(c, "E1").sense_neg == c.ground());
  REQUIRE_PARSE_ERROR(kBase + "E1: vcvs o -> gnd, gain 2, sense q -> gnd\n", 2, 34, "unknown node 'q'");
  REQUIRE_PARSE_ERROR("ground n\nE1: vcvs o -> n, gain 2, sense o -> gnd\n", 2, 37,
                      "unknown node 'gnd'; the reference node of this file is 'n'");
  REQUIRE_PARSE_ERROR(kBase + "E1: vcvs o -> gnd, gain 2, sense R0 -> gnd\n", 2, 34,
                      "unknown node 'R0'; 'R0' is an element, not a node");
  REQUIRE_PARSE_ERROR(kBase + "E1: vcvs o -> gnd, gain 2, sense a -> a\n", 2, 39, "E1 senses node 'a' against itself");
}

// "`ccvs` | `gain R ohm` | `sense ELEMENT` (current through that element, along its arrow)",
// "`cccs` | `gain K` | `sense ELEMENT`"
TEST_CASE("current-controlled sources sense an element, also one defined later", "[parse]") {
  Circuit c = parses_ok(
      "H1: ccvs t -> gnd, sense Rs, gain 10 kohm\n"
      "F1: cccs gnd -> o, gain 2, sense H1\n"
      "Rs: resistor t -> gnd, 1k\nRo: resistor o -> gnd, 1k\n");
  const Element& h = element(c, "H1");
  CHECK(h.kind == ElementKind::ccvs);
  CHECK(h.value == near(1e4));
  CHECK(h.sense_element == *c.find_element("Rs"));
  CHECK(h.sense_pos == kNone);
  const Element& f = element(c, "F1");
  CHECK(f.value == near(2));
  CHECK(f.sense_element == *c.find_element("H1"));
}

TEST_CASE("a controlled source needs its gain and sense, in the units of its kind", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "E1: vcvs a -> gnd, sense a -> gnd\n", 2, 1, "vcvs E1 needs 'gain K'");
  REQUIRE_PARSE_ERROR(kBase + "G1: vccs a -> gnd, gain 1 mS\n", 2, 1, "vccs G1 needs 'sense NODE -> NODE'");
  REQUIRE_PARSE_ERROR(kBase + "H1: ccvs a -> gnd, gain 1k\n", 2, 1, "ccvs H1 needs 'sense ELEMENT'");
  REQUIRE_PARSE_ERROR(kBase + "E1: vcvs a -> gnd, gain 5 V, sense a -> gnd\n", 2, 25, "'5 V' is a voltage, but 'gain' on a vcvs needs a plain number");
  REQUIRE_PARSE_ERROR(kBase + "G1: vccs a -> gnd, gain 5 ohm, sense a -> gnd\n", 2, 25, "needs a conductance");
  REQUIRE_PARSE_ERROR(kBase + "H1: ccvs a -> gnd, gain 5 S, sense R0\n", 2, 25, "needs a resistance");
  REQUIRE_PARSE_ERROR(kBase + "F1: cccs a -> gnd, gain 2, sense F1\n", 2, 34, "F1 cannot sense its own current");
  REQUIRE_PARSE_ERROR(kBase + "F1: cccs a -> gnd, gain 2, sense Rx\n", 2, 34, "unknown element 'Rx'");
  REQUIRE_PARSE_ERROR(kBase + "F1: cccs a -> gnd, gain 2, sense a\n", 2, 34, "unknown element 'a'; 'a' is a node");
  REQUIRE_PARSE_ERROR(kBase + "F1: cccs a -> gnd, gain 2, sense @a\n", 2, 34, "write 'sense ELEMENT'");
  REQUIRE_PARSE_ERROR(kBase + "F1: cccs a -> gnd, gain 2, gain 3, sense R0\n", 2, 28, "'gain' is given twice on F1");
}

// =============================================================================================
// Waveforms
// =============================================================================================

// "dc LEVEL", "cosine AMPLITUDE FREQUENCY [phase ANGLE]", "sine AMPLITUDE FREQUENCY [phase ANGLE]",
// "step LEVEL at TIME", "WAVEFORM + WAVEFORM + ...", and "`sine A f phase p` is `cosine A f
// phase (p − 90°)`."
TEST_CASE("waveform terms superpose; sines are stored as cosines shifted by -90 degrees", "[parse]") {
  Circuit c = parses_ok(
      "V1: voltage-source a -> gnd, dc 1 V + cosine 10 V 50 Hz + sine 2 V 150 Hz phase 30 deg "
      "+ dc 0.5 + step -3 V at 2 ms + step 1 V at -1 ms\n"
      "R1: resistor a -> gnd, 1k\n");
  const Waveform& w = element(c, "V1").waveform;
  CHECK(w.dc == near(1.5));  // several dc terms add
  REQUIRE(w.sinusoids.size() == 2);
  CHECK(w.sinusoids[0].amplitude == near(10));
  CHECK(w.sinusoids[0].frequency == near(50));
  CHECK(w.sinusoids[0].phase == 0);
  CHECK(w.sinusoids[0].loc.col == 39);
  CHECK(w.sinusoids[1].amplitude == near(2));
  CHECK(w.sinusoids[1].frequency == near(150));
  CHECK(w.sinusoids[1].phase == near(30 * kDeg - kPi / 2));
  REQUIRE(w.steps.size() == 2);
  CHECK(w.steps[0].level == near(-3));
  CHECK(w.steps[0].time == near(2e-3));
  CHECK(w.steps[1].time == near(-1e-3));  // a step may come before t = 0
  // sin(2π·150·t + 30°) at t = 1 ms, against the stored cosine
  double t = 1e-3;
  CHECK(w.value_at(t) == Approx(1.5 + 10 * std::cos(2 * kPi * 50 * t) + 2 * std::sin(2 * kPi * 150 * t + 30 * kDeg) + 1));
}

// (decision) "Frequency must be > 0; zero frequency on a sinusoid is an error suggesting `dc`."
TEST_CASE("a sinusoid needs a positive frequency", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, cosine 1 V 0 Hz\n", 2, 41,
                      "zero frequency on a sinusoid: a constant is written 'dc LEVEL'");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, sine 1 V -50 Hz\n", 2, 39,
                      "a sinusoid needs a positive frequency, found '-50 Hz'");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, cosine 1 V 50 V\n", 2, 41,
                      "'50 V' is a voltage, but 'cosine' (after its amplitude) needs a frequency");
}

TEST_CASE("a malformed waveform says what it expected", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, 5 V\n", 2, 30,
                      "expected a waveform (dc, cosine, sine or step), found '5 V'; a constant is written 'dc 5 V'");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, square 5 V\n", 2, 30,
                      "expected a waveform (dc, cosine, sine or step), found 'square'");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, step 5 V 1 ms\n", 2, 39, "expected 'at TIME' after the level of 'step'");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, dc 1 +\n", 2, 36, "expected a waveform");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, dc 1 dc 2\n", 2, 35, "expected '+', ',' or end of line, found 'dc'");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source a -> gnd, cosine 1 V 50 Hz phase 2 s\n", 2, 53, "'2 s' is a time, but 'phase' needs an angle");
}

// =============================================================================================
// Directives
// =============================================================================================

// "title \"TEXT\"" (decision: `\"` and `\\` are its escapes; at most once)
TEST_CASE("a title is a quoted string with two escapes, given once", "[parse]") {
  Circuit c = parses_ok("title \"a \\\"quoted\\\" \\\\ title\"\n" + kBase);
  CHECK(c.title() == "a \"quoted\" \\ title");
  CHECK(parses_ok(kBase).title().empty());
  REQUIRE_PARSE_ERROR("title \"one\"\n" + kBase + "title \"two\"\n", 3, 1, "'title' may be given only once; it is already given on line 1");
  REQUIRE_PARSE_ERROR(kBase + "title untitled\n", 2, 7, "expected a quoted title");
  REQUIRE_PARSE_ERROR(kBase + "title \"t\" more\n", 2, 11, "expected end of line, found 'more'");
  REQUIRE_PARSE_ERROR(kBase + "title \"a\\nb\"\n", 2, 9, "'\\n' is not an escape");
}

// "window FROM .. TO" and "In `window FROM .. TO` each bound has its own unit; a bare number is in
// seconds." (decision: 0 ≤ FROM < TO)
TEST_CASE("a window has two bounds, each with its own unit", "[parse]") {
  Circuit c = parses_ok(kBase + "window 500 us .. 0.04\n");
  REQUIRE(c.window().has_value());
  CHECK(c.window()->from == near(500e-6));
  CHECK(c.window()->to == near(0.04));
  CHECK(c.window()->loc.line == 2);
  CHECK_FALSE(parses_ok(kBase).window().has_value());
  REQUIRE_PARSE_ERROR(kBase + "window -1 ms .. 5 ms\n", 2, 8, "the window starts at t = 0 or later, found '-1 ms'");
  REQUIRE_PARSE_ERROR(kBase + "window 5 ms .. 5 ms\n", 2, 16, "the window must end after it starts: '5 ms' is not after '5 ms'");
  REQUIRE_PARSE_ERROR(kBase + "window 0 5 ms\n", 2, 10, "expected '..' between the start and the end of the window");
  REQUIRE_PARSE_ERROR(kBase + "window 0 .. 1\nwindow 0 .. 2\n", 3, 1, "'window' may be given only once");
}

// "resolution DT" (decision: DT > 0, at most once)
TEST_CASE("a resolution is one positive time step", "[parse]") {
  Circuit c = parses_ok(kBase + "resolution 10 us\n");
  REQUIRE(c.resolution().has_value());
  CHECK(*c.resolution() == near(10e-6));
  REQUIRE_PARSE_ERROR(kBase + "resolution 0\n", 2, 12, "'resolution' needs a positive time step, found '0'");
  REQUIRE_PARSE_ERROR(kBase + "resolution 1 kHz\n", 2, 12, "'1 kHz' is a frequency, but 'resolution' needs a time");
  REQUIRE_PARSE_ERROR(kBase + "resolution 1 us\nresolution 2 us\n", 3, 1, "'resolution' may be given only once");
}

// (extension) "golden-tolerance X: a positive plain number is a relative tolerance, `X %` a
// percentage; stored as a relative fraction."
TEST_CASE("a golden tolerance is a relative number or a percentage", "[parse]") {
  CHECK(*parses_ok(kBase + "golden-tolerance 1e-6\n").golden_tolerance() == near(1e-6));
  CHECK(*parses_ok(kBase + "golden-tolerance 0.5 %\n").golden_tolerance() == near(0.005));
  CHECK(*parses_ok(kBase + "golden-tolerance 2%\n").golden_tolerance() == near(0.02));
  CHECK_FALSE(parses_ok(kBase).golden_tolerance().has_value());
  REQUIRE_PARSE_ERROR(kBase + "golden-tolerance 5 mV\n", 2, 18,
                      "'5 mV' is a voltage, but 'golden-tolerance' needs a plain number or a percentage");
  REQUIRE_PARSE_ERROR(kBase + "golden-tolerance 0\n", 2, 18, "'golden-tolerance' needs a positive tolerance");
  REQUIRE_PARSE_ERROR(kBase + "golden-tolerance 1%\ngolden-tolerance 2%\n", 3, 1, "'golden-tolerance' may be given only once");
}

// (decision) "A line whose first word is a directive keyword but whose second token is `:` is an
// element named like the keyword."
TEST_CASE("an element may be named like a directive", "[parse]") {
  Circuit c = parses_ok("title: resistor a -> gnd, 1k\nwatch: resistor a -> gnd, 2k\nwatch title.i, watch.v\n");
  CHECK(element(c, "title").value == near(1000));
  CHECK(element(c, "watch").value == near(2000));
  CHECK(c.watches().size() == 2);
  CHECK(c.title().empty());
}

// (decision) "Anything else is an error: expected an element (`NAME: kind a -> b, value`) or a
// directive, found '...'."
TEST_CASE("a line that is neither element nor directive is an error quoting its start", "[parse]") {
  auto errors = parse_errors(kBase + "wach R0.v\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].loc.col == 1);
  CHECK(errors[0].message == "expected an element (NAME: kind a -> b, value) or a directive, found 'wach'");
  REQUIRE_PARSE_ERROR(kBase + "  @a: resistor a -> gnd, 1k\n", 2, 3, "found '@a:'");
}

// =============================================================================================
// Observables
// =============================================================================================

// "`X.v`, `X.i`, `X.p` — voltage across, current through, power absorbed by element X;
// `@n` — voltage of node n against the reference; `@a - @b` — voltage between two nodes."
// (decision: canonical text `X.v`, `@a`, `@a - @b`)
TEST_CASE("watch lists observables of every kind, with canonical text", "[parse]") {
  Circuit c = parses_ok(
      "R1: resistor a -> b, 1k\nR2: resistor b -> gnd, 1k\n"
      "watch R1.v, R1.i, R1.p\n"
      "watch @a,@a-@b, @a   -   @b\n");
  const auto& w = c.watches();
  REQUIRE(w.size() == 6);  // several watch lines accumulate
  CHECK(w[0].kind == ObservableKind::element_voltage);
  CHECK(w[0].text == "R1.v");
  CHECK(w[0].element == *c.find_element("R1"));
  CHECK(w[0].dimension() == Dimension::voltage);
  CHECK(w[1].kind == ObservableKind::element_current);
  CHECK(w[1].text == "R1.i");
  CHECK(w[1].dimension() == Dimension::current);
  CHECK(w[2].kind == ObservableKind::element_power);
  CHECK(w[2].text == "R1.p");
  CHECK(w[2].dimension() == Dimension::power);
  CHECK(w[3].kind == ObservableKind::node_voltage);
  CHECK(w[3].text == "@a");
  CHECK(w[3].node_a == *c.find_node("a"));
  CHECK(w[4].kind == ObservableKind::node_difference);
  CHECK(w[4].text == "@a - @b");
  CHECK(w[4].node_b == *c.find_node("b"));
  CHECK(w[5].text == "@a - @b");
  CHECK(w[4].loc.line == 4);
  CHECK(w[4].loc.col == 10);
  CHECK(parses_ok(kBase).watches().empty());
}

// (decision) "References are resolved after the whole file is read."
TEST_CASE("a watch may name elements and nodes defined further down", "[parse]") {
  Circuit c = parses_ok("watch late.i, @far\nlate: resistor far -> gnd, 1k\n");
  CHECK(c.watches().at(0).element == *c.find_element("late"));
  CHECK(c.watches().at(1).node_a == *c.find_node("far"));
}

TEST_CASE("the reference node may be watched", "[parse]") {
  Circuit c = parses_ok(kBase + "watch @a - @gnd\n");
  CHECK(c.watches().at(0).node_b == c.ground());
}

// (decision) "Unknown element/node is an error at its column; when the name exists in the other
// namespace, say so."
TEST_CASE("unknown names in observables are errors that point to the other namespace", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "watch R9.v\n", 2, 7, "unknown element 'R9'");
  REQUIRE_PARSE_ERROR(kBase + "watch @zz\n", 2, 8, "unknown node 'zz'");
  REQUIRE_PARSE_ERROR(kBase + "watch a.v\n", 2, 7, "unknown element 'a'; 'a' is a node, and a node is written '@a'");
  REQUIRE_PARSE_ERROR(kBase + "watch @R0\n", 2, 8, "unknown node 'R0'; 'R0' is an element, not a node (its voltage is 'R0.v')");
  REQUIRE_PARSE_ERROR(kBase + "watch a\n", 2, 7, "'a' is a node; a node is written '@a'");
  REQUIRE_PARSE_ERROR(kBase + "watch R0\n", 2, 7, "'R0' is an element; write 'R0.v', 'R0.i' or 'R0.p'");
  REQUIRE_PARSE_ERROR(kBase + "watch zz\n", 2, 7, "unknown element or node 'zz'");
}

TEST_CASE("a malformed observable says what it expected", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "watch R0.q\n", 2, 10, "expected v, i or p after 'R0.', found 'q'");
  REQUIRE_PARSE_ERROR(kBase + "watch @a - a\n", 2, 12, "expected '@node' after '-', found 'a'");
  REQUIRE_PARSE_ERROR(kBase + "watch @a - @a\n", 2, 13, "'@a - @a' is always zero");
  REQUIRE_PARSE_ERROR(kBase + "watch\n", 2, 6, "expected an observable (X.v, X.i, X.p, @n or @a - @b), found end of line");
  REQUIRE_PARSE_ERROR(kBase + "watch R0.v R0.i\n", 2, 12, "expected ',' or end of line, found 'R0'");
  REQUIRE_PARSE_ERROR(kBase + "watch R0.v,\n", 2, 12, "expected an observable");
}

// =============================================================================================
// Claims
// =============================================================================================

// "expect QUANTITY OP VALUE [± TOLERANCE]" and "OP: `=`, `<`, `<=`, `>`, `>=`; with `=`, a
// tolerance is required (absolute, or `± 2%`)."
TEST_CASE("a claim keeps quantity, operator, value, tolerance, dimension and text", "[parse]") {
  Circuit c = parses_ok(
      "L1: inductor a -> gnd, 10 mH\nR1: resistor a -> gnd, 10\n"
      "expect tau = 1 ms \xC2\xB1 1%     # 10 mH / 10 ohm\n"
      "expect rth[2] = 10 ohm +- 0.5 ohm\n"
      "expect   vth < 5 V   \n"
      "expect tau[3] <= 2 ms\nexpect tau > 0.1 ms\nexpect tau >= 0.1 ms\n");
  const auto& k = c.claims();
  REQUIRE(k.size() == 6);
  CHECK(k[0].quantity == ClaimQuantity::tau);
  CHECK(k[0].segment == 1);
  CHECK(k[0].op == CompareOp::eq);
  CHECK(k[0].value == near(1e-3));
  CHECK(k[0].tolerance == near(1));
  CHECK(k[0].tolerance_is_percent);
  CHECK(k[0].dimension == Dimension::time);
  CHECK(k[0].text == "tau = 1 ms \xC2\xB1 1%");
  CHECK(k[0].loc.line == 3);
  CHECK(k[0].loc.col == 1);
  CHECK(k[1].quantity == ClaimQuantity::rth);
  CHECK(k[1].segment == 2);
  CHECK(k[1].tolerance == near(0.5));
  CHECK_FALSE(k[1].tolerance_is_percent);
  CHECK(k[1].dimension == Dimension::resistance);
  CHECK(k[2].quantity == ClaimQuantity::vth);
  CHECK(k[2].op == CompareOp::lt);
  CHECK(k[2].dimension == Dimension::voltage);
  CHECK(k[2].text == "vth < 5 V");  // trimmed
  CHECK(k[3].op == CompareOp::le);
  CHECK(k[3].segment == 3);
  CHECK(k[4].op == CompareOp::gt);
  CHECK(k[5].op == CompareOp::ge);
}

// "`peak OBS` (largest |value| in the window), `max OBS`, `min OBS`, `final OBS`, `OBS at TIME`,
// `amplitude OBS` and `phase OBS` (of the steady-state fundamental), `energy X` (joules absorbed
// by X over the window), `i2t X` (A²s through X over the window), `worst peak OBS`"
TEST_CASE("every claim quantity reads with the dimension of what it measures", "[parse]") {
  Circuit c = parses_ok(
      "V1: voltage-source a -> gnd, cosine 1 V 50 Hz\nR1: resistor a -> gnd, 1k\n"
      "expect peak R1.i < 2 mA\n"
      "expect max @a <= 1.1 V\n"
      "expect min @a >= -1.1 V\n"
      "expect final R1.p = 0.5 mW \xC2\xB1 10%\n"
      "expect @a at 5 ms > -2 V\n"
      "expect amplitude R1.v = 1 V \xC2\xB1 1 mV\n"
      "expect phase @a = 0 deg \xC2\xB1 0.5\n"
      "expect energy R1 < 1 J\n"
      "expect i2t R1 < 1 A2s\n"
      "expect worst peak @a < 2 V\n");
  const auto& k = c.claims();
  REQUIRE(k.size() == 10);
  CHECK(k[0].quantity == ClaimQuantity::peak);
  CHECK(k[0].observable.text == "R1.i");
  CHECK(k[0].dimension == Dimension::current);
  CHECK(k[0].value == near(2e-3));
  CHECK(k[1].quantity == ClaimQuantity::max);
  CHECK(k[1].observable.text == "@a");
  CHECK(k[2].quantity == ClaimQuantity::min);
  CHECK(k[2].value == near(-1.1));
  CHECK(k[3].quantity == ClaimQuantity::final_value);
  CHECK(k[3].dimension == Dimension::power);
  CHECK(k[4].quantity == ClaimQuantity::at_time);
  CHECK(k[4].time == near(5e-3));
  CHECK(k[4].observable.text == "@a");
  CHECK(k[5].quantity == ClaimQuantity::amplitude);
  CHECK(k[5].tolerance == near(1e-3));
  CHECK(k[6].quantity == ClaimQuantity::phase);
  CHECK(k[6].dimension == Dimension::angle);
  CHECK(k[6].tolerance == near(0.5 * kDeg));
  CHECK(k[7].quantity == ClaimQuantity::energy);
  CHECK(k[7].element == *c.find_element("R1"));
  CHECK(k[7].dimension == Dimension::energy);
  CHECK(k[8].quantity == ClaimQuantity::i2t);
  CHECK(k[8].dimension == Dimension::action);
  CHECK(k[9].quantity == ClaimQuantity::worst_peak);
  CHECK(k[9].observable.text == "@a");
}

TEST_CASE("an observable named like a claim keyword is still an observable", "[parse]") {
  Circuit c = parses_ok("peak: resistor a -> gnd, 1k\nexpect peak.v at 1 ms < 1 V\nexpect peak peak.i < 1 A\n");
  CHECK(c.claims().at(0).quantity == ClaimQuantity::at_time);
  CHECK(c.claims().at(0).observable.text == "peak.v");
  CHECK(c.claims().at(1).quantity == ClaimQuantity::peak);
}

TEST_CASE("an equality claim needs a tolerance, and only an equality takes one", "[parse]") {
  auto errors = parse_errors(kBase + "expect tau = 5 ms\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].loc.col == 18);
  CHECK(errors[0].message == "expected a tolerance after '= 5 ms', such as '± 1%', found end of line");
  REQUIRE_PARSE_ERROR(kBase + "expect peak @a < 1 kV \xC2\xB1 1%\n", 2, 23, "a tolerance goes only with '='; '<' is already a bound");
  REQUIRE_PARSE_ERROR(kBase + "expect tau = 5 ms \xC2\xB1 0\n", 2, 21, "a tolerance must be positive, found '0'");
  REQUIRE_PARSE_ERROR(kBase + "expect tau = 5 ms \xC2\xB1 1 V\n", 2, 21, "'1 V' is a voltage, but the tolerance of 'tau' needs a time");
}

TEST_CASE("a claim's value must have the dimension of its quantity", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "expect tau < 5 V\n", 2, 14, "'5 V' is a voltage, but 'tau' needs a time");
  REQUIRE_PARSE_ERROR(kBase + "expect peak R0.i < 5 V\n", 2, 20, "'5 V' is a voltage, but 'peak R0.i' needs a current");
  REQUIRE_PARSE_ERROR(kBase + "expect energy R0 < 5 W\n", 2, 20, "but 'energy R0' needs an energy");
  REQUIRE_PARSE_ERROR(kBase + "expect i2t R0 < 5 J\n", 2, 17, "needs an I\xC2\xB2t (A2s)");
}

// "For `.p` observables they are not defined (JSON null)." (amplitude and phase)
TEST_CASE("amplitude and phase of a power are errors", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "expect amplitude R0.p < 1 W\n", 2, 18, "'amplitude' is not defined for a power");
  REQUIRE_PARSE_ERROR(kBase + "expect phase R0.p < 1 deg\n", 2, 14, "'phase' is not defined for a power");
}

TEST_CASE("a malformed claim says what it expected", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "expect speed < 1\n", 2, 8, "unknown claim quantity 'speed'");
  REQUIRE_PARSE_ERROR(kBase + "expect tau[0] < 1 s\n", 2, 12, "segments are numbered from 1, found '0'");
  REQUIRE_PARSE_ERROR(kBase + "expect tau[1.5] < 1 s\n", 2, 12, "expected a segment number (1, 2, ...), found '1.5'");
  REQUIRE_PARSE_ERROR(kBase + "expect tau[2 < 1 s\n", 2, 14, "expected ']' after the segment number");
  REQUIRE_PARSE_ERROR(kBase + "expect tau == 1 s\n", 2, 13, "expected a time, found '='");
  REQUIRE_PARSE_ERROR(kBase + "expect tau 1 s\n", 2, 12, "expected a comparison (=, <, <=, >, >=), found '1'");
  REQUIRE_PARSE_ERROR(kBase + "expect worst @a < 1\n", 2, 14, "expected 'peak' after 'worst'");
  REQUIRE_PARSE_ERROR(kBase + "expect @a < 1\n", 2, 11, "expected 'at TIME' after the observable");
  REQUIRE_PARSE_ERROR(kBase + "expect energy @a < 1\n", 2, 15, "'energy' takes an element, not a node");
  REQUIRE_PARSE_ERROR(kBase + "expect energy R9 < 1\n", 2, 15, "unknown element 'R9'");
  REQUIRE_PARSE_ERROR(kBase + "expect peak @zz < 1\n", 2, 14, "unknown node 'zz'");
}

// =============================================================================================
// Sweeps
// =============================================================================================

// "sweep TARGET FROM .. TO [step S]  # ... SOURCE.phase (every sinusoid of that source shifts by
// the same angle), STORAGE.initial, SWITCH.closes (the time of that switch's first 'closes' event"
TEST_CASE("sweeps of a phase, an initial state and a closing time, each in its own unit", "[parse]") {
  Circuit c = parses_ok(
      "sweep supply.phase -90 .. 90 deg step 15\n"
      "sweep C1.initial -5 V .. 5 V\n"
      "sweep L1.initial 0 .. 2 step 100 mA\n"
      "sweep K1.closes 0..10ms step 1ms\n"
      "supply: voltage-source l -> gnd, cosine 1 V 50 Hz\n"
      "K1: switch l -> a, closes at 0, opens at 20 ms\n"
      "C1: capacitor a -> gnd, 1u\nL1: inductor a -> gnd, 1m\n");
  const auto& s = c.sweeps();
  REQUIRE(s.size() == 4);
  CHECK(s[0].target == SweepTarget::source_phase);
  CHECK(s[0].element == *c.find_element("supply"));
  CHECK(s[0].from == near(-kPi / 2));
  CHECK(s[0].to == near(kPi / 2));
  REQUIRE(s[0].step.has_value());
  CHECK(*s[0].step == near(15 * kDeg));
  CHECK(s[0].text == "supply.phase");
  CHECK(s[0].loc.line == 1);
  CHECK(s[0].loc.col == 7);
  CHECK(s[1].target == SweepTarget::storage_initial);
  CHECK(s[1].from == near(-5));
  CHECK_FALSE(s[1].step.has_value());
  CHECK(s[2].to == near(2));  // an inductor's initial state is a current
  CHECK(*s[2].step == near(0.1));
  CHECK(s[3].target == SweepTarget::switch_closes);
  CHECK(s[3].to == near(0.01));
  CHECK(*s[3].step == near(1e-3));
  CHECK(s[3].text == "K1.closes");
}

TEST_CASE("a sweep must fit its target and rise", "[parse]") {
  const std::string base = "V1: voltage-source a -> gnd, dc 1\nR1: resistor a -> b, 1\nC1: capacitor b -> gnd, 1u\n"
                           "K1: switch a -> gnd, opens at 1\n";
  REQUIRE_PARSE_ERROR(base + "sweep R1.phase 0 .. 90\n", 5, 7, "'R1.phase' sweeps the phase of an independent source, but 'R1' is a resistor");
  REQUIRE_PARSE_ERROR(base + "sweep V1.phase 0 .. 90\n", 5, 7, "'V1' has no cosine or sine term");
  REQUIRE_PARSE_ERROR(base + "sweep R1.initial 0 .. 1\n", 5, 7, "'R1.initial' sweeps the initial state of a capacitor or inductor");
  REQUIRE_PARSE_ERROR(base + "sweep C1.closes 0 .. 1\n", 5, 7, "'C1.closes' sweeps the closing time of a switch, but 'C1' is a capacitor");
  REQUIRE_PARSE_ERROR(base + "sweep K1.closes 0 .. 1\n", 5, 7, "switch K1 has no 'closes at' event");
  REQUIRE_PARSE_ERROR(base + "sweep C1.initial 1 A .. 2 A\n", 5, 18, "'1 A' is a current, but 'C1.initial' needs a voltage");
  REQUIRE_PARSE_ERROR(base + "sweep C1.initial 5 .. 1\n", 5, 23, "a sweep range must rise: '1' is not above '5'");
  REQUIRE_PARSE_ERROR(base + "sweep C1.initial 1 .. 5 step 0\n", 5, 30, "a sweep step must be positive, found '0'");
  REQUIRE_PARSE_ERROR(base + "sweep C1.value 1 .. 5\n", 5, 10, "expected phase, initial or closes after 'C1.', found 'value'");
  REQUIRE_PARSE_ERROR(base + "sweep C1 1 .. 5\n", 5, 10, "expected '.phase', '.initial' or '.closes' after 'C1'");
  REQUIRE_PARSE_ERROR(base + "sweep C9.initial 1 .. 5\n", 5, 7, "unknown element 'C9'");
  REQUIRE_PARSE_ERROR(base + "sweep C1.initial 1 5\n", 5, 20, "expected '..' between the two ends of the sweep range");
}

// =============================================================================================
// Command-line arguments
// =============================================================================================

TEST_CASE("an observable argument reads like a watch entry, against a circuit", "[parse]") {
  Circuit c = parses_ok("R1: resistor a -> b, 1k\nR2: resistor b -> gnd, 1k\n");
  Observable o = parse_observable_argument(c, "@a-@b", "--watch");
  CHECK(o.kind == ObservableKind::node_difference);
  CHECK(o.text == "@a - @b");
  CHECK(parse_observable_argument(c, " R2.i ", "--watch").element == *c.find_element("R2"));
  try {
    parse_observable_argument(c, "R9.v", "--watch");
    FAIL("an unknown element was accepted");
  } catch (const InputError& e) {
    REQUIRE(e.diagnostics().size() == 1);
    CHECK(e.diagnostics()[0].format() == "netfold: error: --watch: unknown element 'R9'");
  }
  CHECK_THROWS_AS(parse_observable_argument(c, "", "--watch"), InputError);
  CHECK_THROWS_AS(parse_observable_argument(c, "@a\n@b", "--watch"), InputError);
  CHECK_THROWS_AS(parse_observable_argument(c, std::string("@a\0", 3), "--watch"), InputError);
}

// (decision) "parse_sweep_argument parses the CLI form `TARGET=FROM..TO`, spaces optional."
TEST_CASE("a sweep argument is TARGET=FROM..TO with optional spaces and step", "[parse]") {
  Circuit c = parses_ok("supply: voltage-source a -> gnd, sine 1 V 50 Hz\nR1: resistor a -> gnd, 1k\n");
  Sweep s = parse_sweep_argument(c, "supply.phase=-90deg..90deg");
  CHECK(s.target == SweepTarget::source_phase);
  CHECK(s.from == near(-kPi / 2));
  CHECK(s.to == near(kPi / 2));
  CHECK(s.text == "supply.phase");
  CHECK_FALSE(s.step.has_value());
  Sweep t = parse_sweep_argument(c, "supply.phase = 0 .. 1 rad step 0.1 rad");
  CHECK(t.to == near(1));
  CHECK(*t.step == near(0.1));
  try {
    parse_sweep_argument(c, "R1.phase=0..1");
    FAIL("a resistor's phase was accepted");
  } catch (const InputError& e) {
    CHECK(e.diagnostics().at(0).message.find(
              "--sweep 'R1.phase=0..1': 'R1.phase' sweeps the phase of an independent source") == 0);
  }
  CHECK_THROWS_AS(parse_sweep_argument(c, "supply.phase 0..1"), InputError);
  CHECK_THROWS_AS(parse_sweep_argument(c, "supply.phase=1..0"), InputError);
}

// =============================================================================================
// Collecting errors
// =============================================================================================

// (decision) "Collect independent errors: every line is parsed even after an error in an earlier
// line; stop after kMaxDiagnostics (20) and add a final 'too many errors' note. Throw InputError
// with all diagnostics in file order."
TEST_CASE("independent errors in one file are all reported, in file order", "[parse]") {
  auto errors = parse_errors(
      "watch R9.v\n"                          // resolved last, reported first
      "R1: resistor a -> gnd, 470 nF\n"
      "R2: resistor a -> gnd, 1k, rated 1 A\n"
      "C1: capacitor a -> gnd, 0\n"
      "R1: resistor a -> gnd, 2k\n"
      "V1: voltage-source a -> gnd, cosine 1 V 0 Hz\n");
  REQUIRE(errors.size() == 6);
  CHECK(errors[0].loc.line == 1);
  CHECK(errors[0].message == "unknown element 'R9'");
  CHECK(errors[1].loc.line == 2);
  CHECK(errors[1].message.find("is a capacitance") != std::string::npos);
  CHECK(errors[2].loc.line == 3);
  CHECK(errors[2].message.find("is a current, but 'rated' on a resistor needs a power") != std::string::npos);
  CHECK(errors[3].loc.line == 4);
  CHECK(errors[4].loc.line == 5);
  CHECK(errors[4].message.find("duplicate element name 'R1'") != std::string::npos);
  CHECK(errors[5].loc.line == 6);
  for (const auto& d : errors) CHECK(d.path == "test.nf");
}

TEST_CASE("two errors on one line are both reported when the first does not stop the line", "[parse]") {
  auto errors = parse_errors(kBase + "R1: resistor a -> a, 0\n");
  REQUIRE(errors.size() == 2);
  CHECK(errors[0].loc.col == 19);
  CHECK(errors[1].loc.col == 22);
}

TEST_CASE("a failed element line does not make its references fail again", "[parse]") {
  auto errors = parse_errors(kBase + "R1: resistr x -> gnd, 1k\nwatch R1.i, @x\nexpect energy R1 < 1 J\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].message.find("unknown element kind 'resistr'") == 0);
}

TEST_CASE("after twenty errors parsing stops with a note", "[parse]") {
  std::string text = kBase;
  for (int i = 0; i < 30; ++i) text += fmt::format("R{}: resistor a -> gnd, 1 F\n", i + 1);
  auto errors = parse_errors(text);
  REQUIRE(errors.size() == kMaxDiagnostics + 1);
  CHECK(errors[kMaxDiagnostics - 1].loc.line == kMaxDiagnostics + 1);
  CHECK(errors.back().message == "too many errors; stopped after 20");
  CHECK(errors.back().loc.line == 0);
}

TEST_CASE("exactly twenty errors carry no note", "[parse]") {
  std::string text = kBase;
  for (int i = 0; i < 20; ++i) text += fmt::format("R{}: resistor a -> gnd, 1 F\n", i + 1);
  auto errors = parse_errors(text);
  REQUIRE(errors.size() == 20);
  CHECK(errors.back().message.find("too many") == std::string::npos);
}

// (decision) "A file that is empty or holds only comments: the file holds no circuit."
TEST_CASE("an empty file, or one of comments only, holds no circuit", "[parse]") {
  for (std::string text : {"", "\n\n", "# only a comment\n   # and another\n", "\xEF\xBB\xBF", "title \"x\"\n"}) {
    auto errors = parse_errors(text);
    REQUIRE(errors.size() == 1);
    CHECK(errors[0].message == "the file holds no circuit");
    CHECK(errors[0].loc.line == 0);
  }
}

// =============================================================================================
// Files
// =============================================================================================

TEST_CASE("a file is read as bytes, keeping its path for messages", "[parse]") {
  Circuit c = parse_netlist_file("tests/data/parse/crlf_bom.nf");
  CHECK(c.source().path() == "tests/data/parse/crlf_bom.nf");
  CHECK(c.title() == "CRLF line ends after a byte-order mark");
  CHECK(element(c, "R1").value == near(1000));
  CHECK(c.elements().size() == 2);
}

TEST_CASE("an unreadable file is an input error naming the file and the reason", "[parse]") {
  try {
    parse_netlist_file("tests/data/parse/no_such_file.nf");
    FAIL("a missing file was read");
  } catch (const InputError& e) {
    CHECK(e.exit_code() == ExitCode::bad_input);
    CHECK(e.diagnostics().at(0).message ==
          "cannot read tests/data/parse/no_such_file.nf: no such file or directory");
  }
  CHECK_THROWS_AS(parse_netlist_file("tests/data/parse"), InputError);
}

// Every example circuit parses, and holds at least one storage element (a transient to study).
TEST_CASE("every example netlist parses cleanly", "[parse]") {
  std::size_t count = 0;
  for (const auto& entry : std::filesystem::directory_iterator(NETFOLD_SOURCE_DIR "/netlists")) {
    if (entry.path().extension() != ".nf") continue;
    ++count;
    INFO(entry.path().string());
    try {
      Circuit c = parse_netlist_file(entry.path());
      CHECK(c.storage_elements().size() >= 1);
      CHECK_FALSE(c.title().empty());
      CHECK_FALSE(c.claims().empty());
    } catch (const InputError& e) {
      FAIL(e.what());
    }
  }
  CHECK(count >= 7);
}

// Every file of the error gallery fails, with the error its first line names:
// `# error LINE:COL: TEXT` (LINE:COL 0:0 for a message about the whole file).
TEST_CASE("every file of the error gallery fails with the error it names", "[parse]") {
  std::size_t count = 0;
  for (const auto& entry : std::filesystem::directory_iterator(NETFOLD_SOURCE_DIR "/netlists/bad")) {
    if (entry.path().extension() != ".nf") continue;
    ++count;
    INFO(entry.path().string());
    std::ifstream in(entry.path(), std::ios::binary);
    std::string first;
    std::getline(in, first);
    unsigned line = 0, col = 0;
    int consumed = 0;
    REQUIRE(std::sscanf(first.c_str(), "# error %u:%u: %n", &line, &col, &consumed) == 2);
    std::string expected = first.substr(static_cast<std::size_t>(consumed));
    try {
      parse_netlist_file(entry.path());
      FAIL("the file parsed");
    } catch (const InputError& e) {
      INFO(e.what());
      REQUIRE(e.diagnostics().size() == 1);
      const Diagnostic& d = e.diagnostics()[0];
      CHECK(d.loc.line == line);
      CHECK(d.loc.col == col);
      CHECK(d.message.find(expected) != std::string::npos);
    }
  }
  CHECK(count >= 20);
}

// The format description's own example ("## Example"), copied into netlists/valve_coil.nf but for
// free_r's rating: 2 W instead of 0.5 W, since free_r dissipates 1.23 W while the contact is closed
// and the second edition judges `rated P` by that (spec v2, "Ratings").
TEST_CASE("the example of the format description reads field by field", "[parse]") {
  Circuit c = parse_netlist_file("netlists/valve_coil.nf");
  CHECK(c.title() == "Valve coil with freewheel resistor");
  CHECK(node_name(c, c.ground()) == "n");
  REQUIRE(c.elements().size() == 5);

  const Element& supply = element(c, "supply");
  CHECK(supply.kind == ElementKind::voltage_source);
  CHECK(node_name(c, supply.pos) == "l");
  CHECK(node_name(c, supply.neg) == "n");
  REQUIRE(supply.waveform.sinusoids.size() == 1);
  // source: definition of the rms value of a sinusoid, peak = rms × √2 (from memory)
  CHECK(supply.waveform.sinusoids[0].amplitude == near(24 * std::sqrt(2.0)));
  CHECK(supply.waveform.sinusoids[0].frequency == near(50));
  CHECK(supply.waveform.sinusoids[0].phase == 0);
  CHECK(supply.waveform.dc == 0);

  const Element& k1 = element(c, "K1");
  CHECK(k1.kind == ElementKind::switch_);
  REQUIRE(k1.events.size() == 2);
  CHECK(k1.events[0].closes);
  CHECK(k1.events[0].time == 0);
  CHECK_FALSE(k1.events[1].closes);
  CHECK(k1.events[1].time == near(35e-3));
  CHECK_FALSE(k1.closed_before_zero());
  REQUIRE(k1.ratings.size() == 1);
  CHECK(k1.ratings[0].kind == RatingKind::peak_current);
  CHECK(k1.ratings[0].limit == near(3));

  CHECK(element(c, "coil_r").value == near(18));
  const Element& coil = element(c, "coil_l");
  CHECK(coil.kind == ElementKind::inductor);
  CHECK(coil.value == near(0.120));
  CHECK_FALSE(coil.initial.has_value());
  CHECK(coil.ratings.at(0).limit == near(2));
  const Element& free_r = element(c, "free_r");
  CHECK(free_r.value == near(470));
  CHECK(free_r.ratings.at(0).kind == RatingKind::mean_power);
  CHECK(free_r.ratings.at(0).limit == near(2));
  CHECK(c.storage_elements() == std::vector<ElementId>{*c.find_element("coil_l")});

  REQUIRE(c.watches().size() == 2);
  CHECK(c.watches()[0].text == "coil_l.i");
  CHECK(c.watches()[1].text == "@a");
  REQUIRE(c.sweeps().size() == 1);
  CHECK(c.sweeps()[0].target == SweepTarget::source_phase);
  CHECK(c.sweeps()[0].from == near(-kPi));
  CHECK(c.sweeps()[0].to == near(kPi));

  const auto& k = c.claims();
  REQUIRE(k.size() == 4);
  CHECK(k[0].quantity == ClaimQuantity::tau);
  CHECK(k[0].value == near(6.67e-3));
  CHECK(k[0].tolerance == near(1));
  CHECK(k[0].tolerance_is_percent);
  CHECK(k[0].text == "tau = 6.67 ms \xC2\xB1 1%");
  CHECK(k[1].segment == 2);
  CHECK(k[1].value == near(246e-6));
  CHECK(k[2].quantity == ClaimQuantity::peak);
  CHECK(k[2].op == CompareOp::lt);
  CHECK(k[2].value == near(1000));
  CHECK(k[3].quantity == ClaimQuantity::worst_peak);
  CHECK(k[3].observable.text == "coil_l.i");
  CHECK(k[3].value == near(2));
  CHECK(c.window() == std::nullopt);
}

// =============================================================================================
// Robustness
// =============================================================================================

namespace {

// The outcome of parsing arbitrary input must be a circuit or an InputError with positioned,
// printable diagnostics; anything else (another exception, a crash, a hang) fails the test.
bool parses_or_fails_cleanly(const std::string& text) {
  try {
    parse_netlist(text, "fuzz.nf");
    return true;
  } catch (const InputError& e) {
    bool ok = !e.diagnostics().empty();
    for (const auto& d : e.diagnostics()) ok = ok && !d.message.empty() && !d.format().empty();
    return ok;
  }
}

}  // namespace

TEST_CASE("random bytes give a clean outcome", "[parse]") {
  std::mt19937 rng(20240611);
  std::uniform_int_distribution<int> byte(0, 255), length(0, 3000);
  for (int i = 0; i < 300; ++i) {
    std::string text(static_cast<std::size_t>(length(rng)), '\0');
    for (char& ch : text) ch = static_cast<char>(byte(rng));
    CHECK(parses_or_fails_cleanly(text));
  }
}

TEST_CASE("random sequences of format fragments give a clean outcome", "[parse]") {
  // Fragments of valid syntax reach deeper into the parser than random bytes do.
  const std::vector<std::string> pieces{
      "R1", "C1", "K1", "V1", ":", " ", "  ", "\n", "\\\n", ",", "->", "@", ".", "..", "=", "<", ">=", "\xC2\xB1",
      "+-", "+", "-", "[", "]", "%", "#", "\"", "\\\"", "resistor", "capacitor", "inductor", "voltage-source",
      "current-source", "switch", "vcvs", "vccs", "ccvs", "cccs", "a", "b", "gnd", "1k", "470 nF", "-90 deg", ".5",
      "1e-3", "1e400", "230 Vrms", "50 Hz", "dc", "cosine", "sine", "step", "at", "phase", "closes", "opens", "on",
      "off", "rated", "pulse-rated", "rated-i2t", "initial", "gain", "sense", "title", "ground", "window",
      "resolution", "watch", "sweep", "expect", "golden-tolerance", "tau", "rth[2]", "vth", "peak", "worst",
      "final", "amplitude", "energy", "i2t", "v", "i", "p", "\xCE\xA9", "\xC2\xB5", "\xC2\xB0", "\r\n", "\t"};
  std::mt19937 rng(7);
  std::uniform_int_distribution<std::size_t> pick(0, pieces.size() - 1), length(1, 200);
  for (int i = 0; i < 2000; ++i) {
    std::string text;
    for (std::size_t n = length(rng); n > 0; --n) text += pieces[pick(rng)];
    INFO(text);
    REQUIRE(parses_or_fails_cleanly(text));
  }
}

TEST_CASE("a one-megabyte line gives a clean, short message", "[parse]") {
  std::string text = kBase + std::string(1 << 20, 'x') + "\n";
  auto errors = parse_errors(text);
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].loc.line == 2);
  CHECK(errors[0].message.size() < 200);
  CHECK(errors[0].format().size() < 600);
  // The same length as a title, a comment and a number is read, not rejected.
  CHECK(parses_ok(kBase + "title \"" + std::string(1 << 20, 't') + "\"\n").title().size() == (1u << 20));
  CHECK(parses_ok(kBase + "# " + std::string(1 << 20, '#') + "\n").elements().size() == 1);
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, " + std::string(1 << 20, '9') + "\n", 2, 24, "is out of range");
}

TEST_CASE("a long superposition of terms is read without recursion", "[parse]") {
  std::string text = "V1: voltage-source a -> gnd, dc 1";
  for (int i = 0; i < 100000; ++i) text += " + dc 1";
  text += "\nR1: resistor a -> gnd, 1k\n";
  Circuit c = parses_ok(text);
  CHECK(element(c, "V1").waveform.dc == near(100001));
}

TEST_CASE("a 100000-element file parses with every element in place", "[parse]") {
  constexpr int kCount = 100000;
  std::string text = "title \"long ladder\"\nV1: voltage-source n0 -> gnd, dc 1\n";
  for (int i = 1; i < kCount - 1; ++i)
    text += fmt::format("R{}: resistor n{} -> n{}, 1k\n", i, i - 1, i);
  text += fmt::format("C1: capacitor n{} -> gnd, 1 uF\nwatch C1.v\n", kCount - 2);
  Circuit c = parses_ok(text);
  REQUIRE(c.elements().size() == kCount);
  CHECK(c.nodes().size() == kCount);  // n0 ... n99998 and gnd
  const Element& mid = element(c, "R50000");
  CHECK(node_name(c, mid.pos) == "n49999");
  CHECK(node_name(c, mid.neg) == "n50000");
  CHECK(mid.loc.line == 50002);
  CHECK(c.watches().at(0).element == kCount - 1);
}

TEST_CASE("a keyword after a bare number is not called a misspelt unit", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 1k rated 1 W\n", 2, 27, "expected ',' or end of line, found 'rated'");
  auto errors = parse_errors(kBase + "R1: resistor a -> gnd, 10 rated 1 W\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].message == "expected ',' or end of line, found 'rated'");
  REQUIRE_PARSE_ERROR(kBase + "R1: resistor a -> gnd, 'x'\n", 2, 24, "unexpected character \"'\"");
}

// =============================================================================================
// Issue 12: values converted exactly, and limits that hold
// =============================================================================================

// Issue 12 item 5. Spec (v2) Values: "A value converts exactly: `5 us` is the double nearest to
// 5·10⁻⁶, the same number as `5e-6 s`". The reference is the compiler's literal (rounded to the
// nearest double; from memory).
TEST_CASE("issue 12 item 5: a value is the same double however it is written", "[parse]") {
  Circuit c = parses_ok(
      "V1: voltage-source a -> gnd, dc 1 V + step 1 V at 5 us + step 1 V at 9 ms + cosine 2.3 kVrms 50 Hz\n"
      "K1: switch a -> b, closes at 5 us, opens at 9 ms\n"
      "K2: switch a -> b, closes at 5us, opens at 9ms\n"
      "K3: switch a -> b, closes at 5 \xC2\xB5s, opens at 0.009 s\n"
      "K4: switch a -> b, closes at 5\xCE\xBCs, opens at 9e-3\n"
      "K5: switch a -> b, closes at 5000 ns, opens at .009\n"
      "K6: switch a -> b, closes at 5e-6 s, opens at 9000 us\n"
      "K7: switch a -> b, closes at 0.005 ms, opens at 9000000 ns\n"
      "R1: resistor b -> gnd, 4.7 k\xCE\xA9\n"
      "R2: resistor b -> gnd, 4.7kohm\n"
      "R3: resistor b -> gnd, 0.0047 M\xE2\x84\xA6\n"
      "C1: capacitor b -> gnd, 470 nF\n"
      "window 9 ms .. 30 ms\n"
      "resolution 100 us\n"
      "expect @a at 9 ms = 1 V \xC2\xB1 1 mV\n"
      "golden-tolerance 0.001 %\n");
  // Before: 5 × 1e-6 = 4.9999999999999996e-06 and 9 × 1e-3 = 0.009000000000000001.
  for (std::string_view k : {"K1", "K2", "K3", "K4", "K5", "K6", "K7"}) {
    INFO(std::string(k));
    CHECK(element(c, k).events.at(0).time == 5e-6);
    CHECK(element(c, k).events.at(1).time == 0.009);
  }
  CHECK(element(c, "V1").waveform.steps.at(0).time == 5e-6);
  CHECK(element(c, "V1").waveform.steps.at(1).time == 0.009);
  // source: definition of the rms value of a sinusoid, peak = rms × √2 (from memory); the rms
  // value is converted exactly first (2.3 × 1e3 would be 2299.9999999999995)
  CHECK(element(c, "V1").waveform.sinusoids.at(0).amplitude == 2300.0 * std::numbers::sqrt2);
  CHECK(element(c, "R1").value == 4700.0);
  CHECK(element(c, "R2").value == 4700.0);
  CHECK(element(c, "R3").value == 4700.0);
  CHECK(element(c, "C1").value == 470e-9);
  CHECK(c.window()->from == 0.009);
  CHECK(c.window()->to == 0.030);
  CHECK(*c.resolution() == 100e-6);
  CHECK(c.claims().at(0).time == 0.009);
  CHECK(*c.golden_tolerance() == 1e-5);  // 0.001 % = 1e-5, not 0.001 / 100
  // A sweep argument on the command line converts alike.
  Sweep s = parse_sweep_argument(c, "K1.closes=5 us..8 ms step 1 \xC2\xB5s");
  CHECK(s.from == 5e-6);
  CHECK(s.to == 0.008);
  CHECK(*s.step == 1e-6);
}

namespace {

// An RC charged through a contact that opens at 50 ns, spelt with prefixes or in plain seconds.
// With the contact open the resistor carries no current: just after the event R1.i is 0.
std::string contact_rc(bool prefixed) {
  return prefixed ? "V1: voltage-source a -> gnd, dc 10 V\n"
                    "K1: switch a -> b, closes at 0 s, opens at 50 ns\n"
                    "R1: resistor b -> c, 100 ohm\n"
                    "C1: capacitor c -> gnd, 100 pF, initial 0 V\n"
                    "watch C1.v, R1.i\n"
                    "window 0 s .. 100 ns\n"
                    "resolution 10 ns\n"
                  : "V1: voltage-source a -> gnd, dc 10 V\n"
                    "K1: switch a -> b, closes at 0 s, opens at 5e-8 s\n"
                    "R1: resistor b -> c, 100 ohm\n"
                    "C1: capacitor c -> gnd, 1e-10 F, initial 0 V\n"
                    "watch C1.v, R1.i\n"
                    "window 0 s .. 1e-7 s\n"
                    "resolution 1e-8 s\n";
}

std::vector<std::vector<double>> csv_rows(const std::string& csv) {
  std::vector<std::vector<double>> rows;
  std::istringstream in(csv);
  std::string line;
  std::getline(in, line);  // header
  while (std::getline(in, line)) {
    std::vector<double> row;
    std::size_t start = 0;
    for (;;) {
      std::size_t comma = line.find(',', start);
      std::string_view field(line.data() + start, (comma == std::string::npos ? line.size() : comma) - start);
      double x = 0;
      std::from_chars(field.data(), field.data() + field.size(), x);
      row.push_back(x);
      if (comma == std::string::npos) break;
      start = comma + 1;
    }
    rows.push_back(row);
  }
  return rows;
}

}  // namespace

// Issue 12 item 5, and the format's "Samples" rule: "a row at an event time holds the value just
// after the event". Before: `50 ns` was 5.0000000000000004e-08 while the row stood at 5e-08, so
// that row held the current before the contact opened (0.67 mA), and the CSV differed from the
// one of the same circuit spelt in seconds.
TEST_CASE("issue 12 item 5: a CSV row at an event spelt with a prefix holds the value just after it", "[parse]") {
  const std::string prefixed = waveform_csv(solve(parses_ok(contact_rc(true))));
  const std::string plain = waveform_csv(solve(parses_ok(contact_rc(false))));
  CHECK(prefixed == plain);
  auto rows = csv_rows(prefixed);
  auto at_event = std::find_if(rows.begin(), rows.end(), [](const auto& r) { return r.at(0) == 5e-8; });
  REQUIRE(at_event != rows.end());
  REQUIRE(at_event != rows.begin());
  // source: hand derivation — closed, i = 10 V / 100 ohm · e^(−t/τ), τ = 100 ohm · 100 pF = 10 ns:
  // 100 mA · e^-4 = 1.83 mA at 40 ns (and 0.674 mA just before 50 ns); open, no path: 0 A.
  const auto& before = *std::prev(at_event);
  CHECK(before.at(2) == Approx(0.1 * std::exp(-4.0)).epsilon(1e-9));
  CHECK(std::fabs(at_event->at(2)) <= 1e-15);
  // The capacitor voltage is continuous across the event: 10 V · (1 − e^-5).
  CHECK(at_event->at(1) == Approx(10.0 * (1.0 - std::exp(-5.0))).epsilon(1e-9));
}

// Issue 12, "Limits that do not hold": an event at 1e300 s and a window from 1e15 s were accepted.
// (decision) Every time on the time axis lies within kMaxTime = 1e9 s (about 30 years, the
// limit of the default window) of t = 0, refused at the value.
TEST_CASE("issue 12 limits: a time beyond 1e9 s is refused at the value, with the reason", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> b, closes at 1e300 s\nR1: resistor b -> gnd, 1k\n", 2, 30,
                      "'1e300 s' is beyond 1e9 s (about 30 years), the longest time netfold computes with");
  REQUIRE_PARSE_ERROR(kBase + "window 1e15 s .. 2e15 s\n", 2, 8, "'1e15 s' is beyond 1e9 s");
  REQUIRE_PARSE_ERROR(kBase + "window 1e15 s .. 2e15 s\n", 2, 8, "instants less than 125 ms apart");
  REQUIRE_PARSE_ERROR(kBase + "window 0 .. 1.1 Gs\n", 2, 13, "'1.1 Gs' is beyond 1e9 s");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source b -> gnd, step 1 V at -2e9 s\n", 2, 42, "'-2e9 s' is beyond 1e9 s");
  REQUIRE_PARSE_ERROR(kBase + "resolution 2e9\n", 2, 12, "'2e9' is beyond 1e9 s");
  REQUIRE_PARSE_ERROR(kBase + "expect @a at 1e10 s < 1 V\n", 2, 14, "'1e10 s' is beyond 1e9 s");
  REQUIRE_PARSE_ERROR(kBase + "K1: switch a -> b, closes at 1 ms\nsweep K1.closes 0 .. 2e9 s\n", 3, 22,
                      "'2e9 s' is beyond 1e9 s");
  auto errors = parse_errors(kBase + "window 1e15 s .. 2e15 s\n");
  CHECK(errors.size() == 1);  // one message for the window
  // At the limit, times are accepted.
  Circuit c = parses_ok(kBase + "K1: switch a -> b, closes at 1e9 s\nR1: resistor b -> gnd, 1k\nwindow 0 .. 1 Gs\n");
  CHECK(c.window()->to == 1e9);
}

// Issue 12, "Limits that do not hold": a fine `step` was cut at 100,001 grid points, silently
// leaving the end of the range unswept.
TEST_CASE("issue 12 limits: a sweep step finer than the grid limit is refused with the finest allowed", "[parse]") {
  const std::string supply = "V1: voltage-source a -> gnd, cosine 1 V 50 Hz\nR1: resistor a -> gnd, 1k\n"
                             "C1: capacitor a -> b, 1 uF\nR2: resistor b -> gnd, 1k\n";
  // 360° / 0.001° = 360,000 intervals; at most 100,000: a step of 360° / 1e5 = 0.0036°.
  REQUIRE_PARSE_ERROR(supply + "sweep V1.phase 0 .. 360 step 0.001\n", 5, 30,
                      "a step of '0.001' cuts the range of 'V1.phase' into 3.6e+05 intervals, more than the 100000 a "
                      "sweep computes; give a step of at least 0.0036\xC2\xB0");
  REQUIRE_PARSE_ERROR(supply + "sweep C1.initial -1 V .. 1 V step 1 uV\n", 5, 35, "give a step of at least 20 \xC2\xB5V");
  // A range wider than double precision carries has no grid at all.
  REQUIRE_PARSE_ERROR(supply + "sweep C1.initial -1e308 V .. 1e308 V\n", 5, 30,
                      "the range '-1e308 V' .. '1e308 V' is wider than double precision carries");
  // Exactly the limit is accepted.
  Circuit c = parses_ok(supply + "sweep V1.phase 0 .. 360 step 0.0036\n");
  CHECK(c.sweeps().at(0).step.has_value());
  try {
    parse_sweep_argument(c, "V1.phase=0..360 step 0.001");
    FAIL("the step was accepted");
  } catch (const InputError& e) {
    CHECK_THAT(e.diagnostics().at(0).format(),
               Catch::StartsWith("netfold: error: --sweep 'V1.phase=0..360 step 0.001': a step of '0.001'"));
  }
}

// Issue 12 (messages): "a `--sweep` error at `FILE:1:1` (name the option instead)". A closing
// time swept past the switch's next event was refused by the worst-case search at the sweep's
// position, which an argument does not have: `valve.nf:1:1: error: ...`.
TEST_CASE("issue 12 messages: a --sweep argument at fault is named, not placed at FILE:1:1", "[parse]") {
  Circuit c = parses_ok("V1: voltage-source a -> gnd, dc 5 V\nK1: switch a -> b, closes at 1 ms, opens at 5 ms, "
                        "closes at 9 ms\nR1: resistor b -> c, 1 kohm\nC1: capacitor c -> gnd, 1 uF\n");
  try {
    parse_sweep_argument(c, "K1.closes=0..8ms");
    FAIL("the sweep was accepted");
  } catch (const InputError& e) {
    REQUIRE(e.diagnostics().size() == 1);
    CHECK(e.diagnostics()[0].path.empty());
    CHECK(e.diagnostics()[0].format() ==
          "netfold: error: --sweep 'K1.closes=0..8ms': 'K1.closes' moves K1's first 'closes' up to 8ms, but it must "
          "stay before the switch's next event, 'opens at 5 ms' (line 2); narrow the range");
  }
  CHECK(parse_sweep_argument(c, "K1.closes=0..4ms").to == 0.004);
  // A switch whose first 'closes' follows an 'opens' keeps it after that event.
  Circuit d = parses_ok("V1: voltage-source a -> gnd, dc 5 V\nK1: switch a -> b, opens at 2 ms, closes at 4 ms\n"
                        "R1: resistor b -> c, 1 kohm\nC1: capacitor c -> gnd, 1 uF\n");
  CHECK_THROWS_WITH(parse_sweep_argument(d, "K1.closes=1ms..3ms"),
                    Catch::Contains("must stay after the switch's previous event, 'opens at 2 ms'"));
  CHECK(parse_sweep_argument(d, "K1.closes=3ms..5ms").from == 0.003);
}

// Issue 12 (messages): "the response grows, shorten the window" for a subnormal resistance.
// (decision) A non-zero value below the smallest normal double (2.2e-308) is refused at the value.
TEST_CASE("issue 12 messages: a subnormal value is refused at the value, in circuit terms", "[parse]") {
  REQUIRE_PARSE_ERROR("V1: voltage-source a -> gnd, dc 10 V\nR1: resistor a -> b, 1e-310 ohm\n"
                      "C1: capacitor b -> gnd, 1 uF\n",
                      2, 22,
                      "'1e-310 ohm' for a resistor is too small to compute with: below 2.2e-308 \xCE\xA9 double "
                      "precision loses its digits; give the real value (a connection of no resistance is a wire: "
                      "join the two nodes)");
  REQUIRE_PARSE_ERROR(kBase + "C1: capacitor a -> gnd, 1e-295 fF\n", 2, 25, "'1e-295 fF' for a capacitor is too small");
  REQUIRE_PARSE_ERROR(kBase + "V1: voltage-source b -> gnd, dc 1e-320 V\n", 2, 33, "too small to compute with");
  // Zero stays zero where zero is allowed (a contact's 'on' resistance).
  Circuit c = parses_ok(kBase + "K1: switch a -> b, closes at 0 s, on 0 ohm\nR1: resistor b -> gnd, 1k\n");
  CHECK(element(c, "K1").r_on == 0.0);
}

// Issue 12 item 10, the parse side: with a tolerance of 100 % of each column's peak, a golden
// file of zeros passes every waveform (|fresh − 0| ≤ 1 × peak of fresh).
TEST_CASE("issue 12 item 10: a golden tolerance of 100 % or more is refused", "[parse]") {
  REQUIRE_PARSE_ERROR(kBase + "golden-tolerance 100 %\n", 2, 18,
                      "'golden-tolerance' must be below 1 (100 %), found '100 %'");
  REQUIRE_PARSE_ERROR(kBase + "golden-tolerance 2\n", 2, 18, "must be below 1 (100 %)");
  CHECK(*parses_ok(kBase + "golden-tolerance 99 %\n").golden_tolerance() == 0.99);
}

// Issue 12, "Limits that do not hold": `netfold solve /dev/zero` ran out of memory (exit 3).
// (decision) A file over kMaxFileBytes (256 MiB) is refused before it is read; a NUL byte stops
// the reading at the block that holds it.
TEST_CASE("issue 12 limits: a file over 256 MiB is refused unread, and a device of NUL bytes at once", "[parse]") {
  netfold_test::TempDir dir("parse");
  const std::filesystem::path big = dir.path() / "big.nf";
  {
    std::ofstream out(big, std::ios::binary);
    out << "R1: resistor a -> gnd, 1k\n";
  }
  // A sparse file: no disk space and no memory are spent on it.
  std::filesystem::resize_file(big, kMaxFileBytes + 1);
  try {
    parse_netlist_file(big);
    FAIL("the file was read");
  } catch (const InputError& e) {
    CHECK(e.exit_code() == ExitCode::bad_input);
    CHECK(e.diagnostics().at(0).path == big.string());
    CHECK_THAT(e.diagnostics().at(0).message, Catch::StartsWith("the file is longer than 256 MiB"));
  }
  if (std::filesystem::exists("/dev/zero")) {
    try {
      parse_netlist_file("/dev/zero");
      FAIL("/dev/zero was read");
    } catch (const InputError& e) {
      CHECK(e.diagnostics().at(0).format().rfind("/dev/zero:1:1: error: the file is not text: it holds a NUL byte", 0) ==
            0);
    }
  }
}
