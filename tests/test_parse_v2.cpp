// Tests of the second-edition (v2) syntax of the `.nf` format against
// /work/shared/spec/netlist-format.md (the parts marked (v2)): diodes, state-triggered switch
// events, the new ratings and rate units, tolerances, joint sweeps and the new claims. Rules
// marked "(decision)" are the project's reading of a point the specification leaves open,
// recorded in docs/netlist-format.md ("Second edition syntax").
#include <catch2/catch.hpp>

#include <cstdint>
#include <string>
#include <string_view>

#include "netfold/parse.hpp"
#include "parse_helpers.hpp"

using namespace netfold;
using netfold_test::parse_errors;
using netfold_test::parses_ok;

namespace {

const Element& element(const Circuit& c, std::string_view name) {
  auto id = c.find_element(name);
  REQUIRE(id.has_value());
  return c.element(*id);
}

// The one rating of `kind` on `e` (the test fails when there is none or more than one).
const Rating& rating(const Element& e, RatingKind kind) {
  const Rating* found = nullptr;
  int count = 0;
  for (const Rating& r : e.ratings)
    if (r.kind == kind) found = &r, ++count;
  REQUIRE(count == 1);
  return *found;
}

// The 1-based column of the first `token` in `line` (ASCII lines only): where a message about
// that token must point.
std::uint32_t col_of(std::string_view line, std::string_view token, std::size_t from = 0) {
  const std::size_t at = line.find(token, from);
  REQUIRE(at != std::string_view::npos);
  return static_cast<std::uint32_t>(at + 1);
}

// A minimal valid circuit to which a test adds the line it is about.
const std::string kBase = "R0: resistor a -> gnd, 1k\n";

}  // namespace

// =============================================================================================
// Rate units
// =============================================================================================

// "(v2) rates `V/s` and `A/s`, where either part may carry a prefix" and "A value converts
// exactly: ... scale the decimal exponent, then convert once".
TEST_CASE("a rate converts exactly, with a prefix on either part", "[parse]") {
  Circuit c = parses_ok(kBase +
                        "C1: capacitor a -> gnd, 1u, rated-dvdt 5 V/us\n"
                        "C2: capacitor a -> gnd, 1u, rated-dvdt 2.2 kV/ms\n"
                        "C3: capacitor a -> gnd, 1u, rated-dvdt 200V/µs\n"
                        "L1: inductor a -> gnd, 1m, rated-didt 1.1 A/ms\n"
                        "L2: inductor a -> gnd, 1m, rated-didt 4.7kA/s\n"
                        "L3: inductor a -> gnd, 1m, rated-didt 3 mA/ns\n");
  // source: the decimal values 5·10⁶, 2.2·10⁶, 2·10⁸, 1.1·10³, 4.7·10³ and 3·10⁶ written as
  // C++ literals, which the compiler rounds once to the nearest double (common practice, no
  // source). 1.1 × 1000 in double arithmetic is 1100.0000000000002, so a prefix applied as a
  // multiplication would fail the L1 check.
  CHECK(rating(element(c, "C1"), RatingKind::dvdt).limit == 5e6);
  CHECK(rating(element(c, "C2"), RatingKind::dvdt).limit == 2.2e6);
  CHECK(rating(element(c, "C3"), RatingKind::dvdt).limit == 2e8);
  CHECK(rating(element(c, "L1"), RatingKind::didt).limit == 1100.0);
  CHECK(rating(element(c, "L2"), RatingKind::didt).limit == 4.7e3);
  CHECK(rating(element(c, "L3"), RatingKind::didt).limit == 3e6);
}

TEST_CASE("a rate of the wrong kind, or a time that is not seconds, is refused at the value", "[parse]") {
  const std::string line = "C1: capacitor a -> gnd, 1u, rated-dvdt 5 A/us\n";
  REQUIRE_PARSE_ERROR(kBase + line, 2, col_of(line, "5 A/us"),
                      "'5 A/us' is a rate of change of current (A/s), but 'rated-dvdt' on a capacitor needs a rate "
                      "of change of voltage (V/s)");
  const std::string bad = "C1: capacitor a -> gnd, 1u, rated-dvdt 5V/uF\n";
  REQUIRE_PARSE_ERROR(kBase + bad, 2, col_of(bad, "V/uF"), "unknown unit 'V/uF' in '5V/uF'");
}

// =============================================================================================
// Diodes
// =============================================================================================

TEST_CASE("a diode's attributes fill the model, the first node being the anode", "[parse]") {
  Circuit c = parses_ok(kBase + "D1: diode a -> k, forward 0.7 V, on 20 mohm, off 10 Mohm, breakdown 5.1 V, "
                                "rated 3 A, rated 600 V, rated-i2t 12 A2s\n"
                                "R1: resistor k -> gnd, 1k\n");
  const Element& d = element(c, "D1");
  CHECK(d.kind == ElementKind::diode);
  CHECK(c.nodes().at(d.pos) == "a");
  CHECK(c.nodes().at(d.neg) == "k");
  CHECK(d.forward == 0.7);
  CHECK(d.r_on == 0.02);
  CHECK(d.r_off == 1e7);
  REQUIRE(d.breakdown.has_value());
  CHECK(*d.breakdown == 5.1);
  CHECK(rating(d, RatingKind::peak_forward_current).limit == 3.0);
  CHECK(rating(d, RatingKind::peak_reverse_voltage).limit == 600.0);
  CHECK(rating(d, RatingKind::i2t).limit == 12.0);
}

TEST_CASE("a diode without attributes is ideal: no drop, no resistance, open when blocking", "[parse]") {
  Circuit c = parses_ok(kBase + "D1: diode a -> gnd\n");
  const Element& d = element(c, "D1");
  CHECK(d.forward == 0.0);
  CHECK(d.r_on == 0.0);
  CHECK(d.r_off == kInfinity);
  CHECK_FALSE(d.breakdown.has_value());
  CHECK(d.ratings.empty());
}

// (decision) A diode's `rated` without a unit could be either rating: it is refused.
TEST_CASE("a diode's rating is read by its unit, and a bare or foreign one is refused", "[parse]") {
  const std::string bare = "D1: diode a -> gnd, rated 3\n";
  REQUIRE_PARSE_ERROR(kBase + bare, 2, col_of(bare, "3"), "'rated 3' on a diode needs its unit");
  const std::string watt = "D1: diode a -> gnd, rated 3 W\n";
  REQUIRE_PARSE_ERROR(kBase + watt, 2, col_of(watt, "3 W"),
                      "'3 W' is a power, but 'rated' on a diode needs a current (A) or a voltage (V)");
  const std::string twice = "D1: diode a -> gnd, rated 3 A, rated 4 A\n";
  REQUIRE_PARSE_ERROR(kBase + twice, 2, col_of(twice, "rated", 25), "'rated' with a current is given twice on D1");
}

// (decision) A negative forward drop and a breakdown of 0 V or less are refused.
TEST_CASE("a diode's forward drop is 0 or more and its breakdown voltage positive", "[parse]") {
  const std::string fwd = "D1: diode a -> gnd, forward -0.7 V\n";
  REQUIRE_PARSE_ERROR(kBase + fwd, 2, col_of(fwd, "-0.7"), "'forward' needs a voltage of 0 or more, found '-0.7 V'");
  const std::string bd = "D1: diode a -> gnd, breakdown 0 V\n";
  REQUIRE_PARSE_ERROR(kBase + bd, 2, col_of(bd, "0 V"), "'breakdown' needs a positive voltage");
  const std::string other = "D1: diode a -> gnd, initial 1 V\n";
  REQUIRE_PARSE_ERROR(kBase + other, 2, col_of(other, "initial"),
                      "a diode takes no attribute 'initial'; its attributes are: forward V, on R, off R, "
                      "breakdown V, rated A, rated V, rated-i2t X A2s");
}

// =============================================================================================
// Switches
// =============================================================================================

TEST_CASE("state-triggered switch events mix with timed ones, alternating and in time order", "[parse]") {
  Circuit c = parses_ok(kBase + "K1: switch a -> b, closes at voltage zero after 2 ms, opens at current zero after "
                                "10 ms, closes at 30 ms, rated 16 A, rated 400 V, rated-didt 50 A/us\n"
                                "R1: resistor b -> gnd, 1k\n");
  const Element& k = element(c, "K1");
  REQUIRE(k.events.size() == 3);
  CHECK(k.events[0].closes);
  CHECK(k.events[0].trigger == EventTrigger::voltage_zero);
  CHECK(k.events[0].time == 2e-3);
  CHECK_FALSE(k.events[1].closes);
  CHECK(k.events[1].trigger == EventTrigger::current_zero);
  CHECK(k.events[1].time == 10e-3);
  CHECK(k.events[2].trigger == EventTrigger::time);
  CHECK(k.events[2].time == 30e-3);
  CHECK(rating(k, RatingKind::peak_current).limit == 16.0);
  CHECK(rating(k, RatingKind::peak_voltage).limit == 400.0);
  CHECK(rating(k, RatingKind::didt).limit == 5e7);
}

// "A switch's bare `rated` is a current" was the first edition's reading; it stays.
TEST_CASE("a switch's bare rating is still a current", "[parse]") {
  Circuit c = parses_ok(kBase + "K1: switch a -> gnd, closes at 0 s, rated 3\n");
  CHECK(rating(element(c, "K1"), RatingKind::peak_current).limit == 3.0);
}

TEST_CASE("a switch's triggered events are refused in the wrong pairing, order or spelling", "[parse]") {
  const std::string pair = "K1: switch a -> gnd, closes at current zero after 1 ms\n";
  REQUIRE_PARSE_ERROR(kBase + pair, 2, col_of(pair, "current"),
                      "a switch closes at current zero is not an event of the format");
  const std::string order = "K1: switch a -> gnd, opens at current zero after 5 ms, closes at 2 ms\n";
  REQUIRE_PARSE_ERROR(kBase + order, 2, col_of(order, "2 ms"),
                      "switch events must come in time order: '2 ms' is not after '5 ms'");
  const std::string alt = "K1: switch a -> gnd, closes at 1 ms, closes at voltage zero after 5 ms\n";
  REQUIRE_PARSE_ERROR(kBase + alt, 2, col_of(alt, "closes", 30), "its events must alternate");
  const std::string after = "K1: switch a -> gnd, opens at current zero 5 ms\n";
  REQUIRE_PARSE_ERROR(kBase + after, 2, col_of(after, "5 ms"), "expected 'after T' after 'current zero', found '5'");
}

// =============================================================================================
// Ratings by kind
// =============================================================================================

TEST_CASE("rated-rms, rated-dvdt and rated-i2t fill the capacitor's ratings; rated-rms takes Arms as it is",
          "[parse]") {
  Circuit c = parses_ok(kBase +
                        "C1: capacitor a -> gnd, 1u, rated-rms 2.5 A, rated-i2t 3 A2s\n"
                        "C2: capacitor a -> gnd, 1u, rated-rms 2.5 Arms\n"
                        "R1: resistor a -> gnd, 1k, rated-i2t 4 A2s\n"
                        "V1: voltage-source a -> gnd, dc 1, rated-i2t 5 A2s\n"
                        "I1: current-source a -> gnd, dc 1 mA, rated-i2t 6 A2s\n");
  CHECK(rating(element(c, "C1"), RatingKind::rms_current).limit == 2.5);
  // (decision) `Arms` on an rms rating is the rms value itself, not a peak to convert.
  CHECK(rating(element(c, "C2"), RatingKind::rms_current).limit == 2.5);
  CHECK(rating(element(c, "C1"), RatingKind::i2t).limit == 3.0);
  CHECK(rating(element(c, "R1"), RatingKind::i2t).limit == 4.0);
  CHECK(rating(element(c, "V1"), RatingKind::i2t).limit == 5.0);
  CHECK(rating(element(c, "I1"), RatingKind::i2t).limit == 6.0);
}

TEST_CASE("a v2 rating on a kind that does not take it is refused at its keyword", "[parse]") {
  const std::string dvdt = "L1: inductor a -> gnd, 1m, rated-dvdt 5 V/us\n";
  REQUIRE_PARSE_ERROR(kBase + dvdt, 2, col_of(dvdt, "rated-dvdt"), "an inductor takes no attribute 'rated-dvdt'");
  const std::string didt = "C1: capacitor a -> gnd, 1u, rated-didt 5 A/us\n";
  REQUIRE_PARSE_ERROR(kBase + didt, 2, col_of(didt, "rated-didt"), "a capacitor takes no attribute 'rated-didt'");
  // (decision) the controlled sources take no ratings at all, rated-i2t included.
  const std::string i2t = "E1: vcvs a -> gnd, gain 2, sense a -> gnd, rated-i2t 1 A2s\n";
  REQUIRE_PARSE_ERROR(kBase + i2t, 2, col_of(i2t, "rated-i2t"), "a vcvs takes no attribute 'rated-i2t'");
}

// =============================================================================================
// Tolerances
// =============================================================================================

TEST_CASE("a tolerance is read as exact fractions, symmetric or with a bound of each sign", "[parse]") {
  Circuit c = parses_ok(kBase +
                        "R1: resistor a -> gnd, 1k, tolerance 5%\n"
                        "C1: capacitor a -> gnd, 1u, tolerance -20% .. +10%\n"
                        "L1: inductor a -> gnd, 1m, tolerance 0.1 %\n"
                        "V1: voltage-source a -> gnd, cosine 230 Vrms 50 Hz, tolerance 10%\n"
                        "I1: current-source a -> gnd, dc 1 mA, tolerance -5% .. 0%\n");
  // source: the decimal fractions as C++ literals, each rounded once (common practice, no source).
  const Element& r = element(c, "R1");
  REQUIRE(r.tolerance.has_value());
  CHECK(r.tolerance->lower == -0.05);
  CHECK(r.tolerance->upper == 0.05);
  CHECK(r.tolerance->loc.line == 2);
  CHECK(element(c, "C1").tolerance->lower == -0.2);
  CHECK(element(c, "C1").tolerance->upper == 0.1);
  CHECK(element(c, "L1").tolerance->upper == 0.001);
  CHECK(element(c, "V1").tolerance->lower == -0.1);
  CHECK(element(c, "I1").tolerance->lower == -0.05);
  CHECK(element(c, "I1").tolerance->upper == 0.0);
  CHECK_FALSE(element(c, "R0").tolerance.has_value());
}

TEST_CASE("a tolerance of 100 % below, with bounds of the wrong sign, or on another kind is refused", "[parse]") {
  const std::string full = "R1: resistor a -> gnd, 1k, tolerance 100%\n";
  REQUIRE_PARSE_ERROR(kBase + full, 2, col_of(full, "100%"),
                      "a tolerance of '100%' below could take the value of a resistor to zero or below");
  const std::string deep = "C1: capacitor a -> gnd, 1u, tolerance -150% .. +10%\n";
  REQUIRE_PARSE_ERROR(kBase + deep, 2, col_of(deep, "-150%"), "a tolerance stays under 100 %");
  const std::string sign = "C1: capacitor a -> gnd, 1u, tolerance 5% .. 10%\n";
  REQUIRE_PARSE_ERROR(kBase + sign, 2, col_of(sign, "5%"), "the lower bound of a tolerance is 0 or below, found '5%'");
  const std::string upper = "C1: capacitor a -> gnd, 1u, tolerance -5% .. -1%\n";
  REQUIRE_PARSE_ERROR(kBase + upper, 2, col_of(upper, "-1%"), "the upper bound of a tolerance is 0 or above");
  const std::string unit = "R1: resistor a -> gnd, 1k, tolerance 50 ohm\n";
  REQUIRE_PARSE_ERROR(kBase + unit, 2, col_of(unit, "50 ohm"), "a tolerance is a percentage");
  const std::string kind = "K1: switch a -> gnd, closes at 0 s, tolerance 5%\n";
  REQUIRE_PARSE_ERROR(kBase + kind, 2, col_of(kind, "tolerance"), "a switch takes no attribute 'tolerance'");
  const std::string diode = "D1: diode a -> gnd, tolerance 5%\n";
  REQUIRE_PARSE_ERROR(kBase + diode, 2, col_of(diode, "tolerance"), "a diode takes no attribute 'tolerance'");
}

// =============================================================================================
// Joint sweeps
// =============================================================================================

TEST_CASE("the targets of one sweep line share its line index; the next line starts another", "[parse]") {
  Circuit c = parses_ok(
      "V1: voltage-source a -> gnd, cosine 10 V 50 Hz\n"
      "K1: switch a -> b, closes at 1 ms\n"
      "C1: capacitor b -> gnd, 1u\n"
      "R1: resistor b -> gnd, 1k\n"
      "sweep K1.closes 0 ms .. 20 ms step 1 ms, C1.initial 0 V .. 100 V, V1.phase 0 .. 90 deg\n"
      "sweep C1.initial -5 V .. 5 V\n");
  const auto& s = c.sweeps();
  REQUIRE(s.size() == 4);
  CHECK(s[0].target == SweepTarget::switch_closes);
  CHECK(s[0].step == 1e-3);
  CHECK(s[1].target == SweepTarget::storage_initial);
  CHECK(s[1].to == 100.0);
  CHECK(s[2].target == SweepTarget::source_phase);
  CHECK(s[0].line == s[1].line);
  CHECK(s[1].line == s[2].line);
  CHECK(s[3].line == s[0].line + 1);
  CHECK(s[3].from == -5.0);
}

TEST_CASE("a target named twice on one sweep line is refused at its second mention", "[parse]") {
  const std::string base = "C1: capacitor a -> gnd, 1u\n";
  const std::string line = "sweep C1.initial 0 V .. 1 V, C1.initial 2 V .. 3 V\n";
  REQUIRE_PARSE_ERROR(kBase + base + line, 3, col_of(line, "C1", 10),
                      "'C1.initial' is named twice on this sweep line");
  const std::string trail = "sweep C1.initial 0 V .. 1 V,\n";
  REQUIRE_PARSE_ERROR(kBase + base + trail, 3, col_of(trail, ",") + 1, "expected a sweep target");
}

// =============================================================================================
// Claims
// =============================================================================================

TEST_CASE("frequency[k] and damping[k] are read like tau[k]", "[parse]") {
  Circuit c = parses_ok(kBase +
                        "L1: inductor a -> b, 1m\n"
                        "C1: capacitor b -> gnd, 1u\n"
                        "expect frequency[2] = 5.03 kHz ± 1%\n"
                        "expect damping < 0.5\n");
  REQUIRE(c.claims().size() == 2);
  const Claim& f = c.claims()[0];
  CHECK(f.quantity == ClaimQuantity::frequency);
  CHECK(f.segment == 2);
  CHECK(f.dimension == Dimension::frequency);
  CHECK(f.value == 5030.0);
  const Claim& d = c.claims()[1];
  CHECK(d.quantity == ClaimQuantity::damping);
  CHECK(d.segment == 1);
  CHECK(d.dimension == Dimension::ratio);
  CHECK(d.value == 0.5);
}

TEST_CASE("a share claim holds its level in the observable's unit and its value in percent", "[parse]") {
  Circuit c = parses_ok(
      "V1: voltage-source a -> gnd, cosine 10 V 50 Hz\n"
      "K1: switch a -> b, closes at 1 ms\n"
      "R1: resistor b -> gnd, 1k\n"
      "expect share peak K1.i > 50 mA <= 25%\n"
      "sweep K1.closes 0 ms .. 20 ms\n");
  REQUIRE(c.claims().size() == 1);
  const Claim& s = c.claims()[0];
  CHECK(s.quantity == ClaimQuantity::share_peak);
  CHECK(s.dimension == Dimension::percent);
  CHECK(s.level == 0.05);
  CHECK(s.op == CompareOp::le);
  CHECK(s.value == 25.0);
  CHECK(s.observable.kind == ObservableKind::element_current);
  CHECK(s.text == "share peak K1.i > 50 mA <= 25%");
}

TEST_CASE("a share claim without a sweep, or with a level of the wrong unit, is refused", "[parse]") {
  const std::string line = "expect share peak @a > 5 V < 10%\n";
  REQUIRE_PARSE_ERROR(kBase + line, 2, col_of(line, "share"),
                      "this file declares no sweep; add a line such as 'sweep SWITCH.closes 0 ms .. 20 ms'");
  const std::string unit = "expect share peak @a > 5 A < 10%\nsweep R0.phase 0 .. 90\n";
  REQUIRE_PARSE_ERROR(kBase + unit, 2, col_of(unit, "5 A"), "'5 A' is a current, but the level of 'share peak @a'");
  const std::string op = "expect share peak @a < 5 V < 10%\n";
  REQUIRE_PARSE_ERROR(kBase + op, 2, col_of(op, "<"), "expected '>' and a level after the observable");
}

TEST_CASE("a time-below claim holds its level, its start and a value in seconds", "[parse]") {
  Circuit c = parses_ok(kBase +
                        "expect time-below @a 60 V after 5 ms <= 1 s\n"
                        "expect time-below R0.i 2 mA < 20 ms\n");
  REQUIRE(c.claims().size() == 2);
  const Claim& t = c.claims()[0];
  CHECK(t.quantity == ClaimQuantity::time_below);
  CHECK(t.dimension == Dimension::time);
  CHECK(t.level == 60.0);
  REQUIRE(t.after.has_value());
  CHECK(*t.after == 5e-3);
  CHECK(t.value == 1.0);
  CHECK(c.claims()[1].level == 2e-3);
  CHECK_FALSE(c.claims()[1].after.has_value());
}

TEST_CASE("a time-below claim needs a positive level and a start at or after t = 0", "[parse]") {
  const std::string zero = "expect time-below @a 0 V < 1 s\n";
  REQUIRE_PARSE_ERROR(kBase + zero, 2, col_of(zero, "0 V"), "'time-below' needs a positive level");
  const std::string before = "expect time-below @a 1 V after -1 ms < 1 s\n";
  REQUIRE_PARSE_ERROR(kBase + before, 2, col_of(before, "-1 ms"), "'after' is a time at or after t = 0");
}

TEST_CASE("dvdt, didt, rms and power claims name an element and take rates, currents and powers", "[parse]") {
  Circuit c = parses_ok(kBase +
                        "C1: capacitor a -> gnd, 1u\n"
                        "expect dvdt C1 < 5 V/us\n"
                        "expect didt R0 < 2 A/ms\n"
                        "expect rms C1 <= 3 A\n"
                        "expect power R0 < 0.25 W\n");
  REQUIRE(c.claims().size() == 4);
  CHECK(c.claims()[0].quantity == ClaimQuantity::dvdt);
  CHECK(c.claims()[0].dimension == Dimension::voltage_rate);
  CHECK(c.claims()[0].value == 5e6);
  CHECK(c.claims()[0].element == *c.find_element("C1"));
  CHECK(c.claims()[1].quantity == ClaimQuantity::didt);
  CHECK(c.claims()[1].value == 2e3);
  CHECK(c.claims()[2].quantity == ClaimQuantity::rms);
  CHECK(c.claims()[2].dimension == Dimension::current);
  CHECK(c.claims()[3].quantity == ClaimQuantity::power);
  CHECK(c.claims()[3].value == 0.25);
}

TEST_CASE("a dvdt claim on a non-capacitor, a power claim on a non-resistor, or a node is refused", "[parse]") {
  const std::string dvdt = "expect dvdt R0 < 5 V/us\n";
  REQUIRE_PARSE_ERROR(kBase + dvdt, 2, col_of(dvdt, "R0"), "'dvdt' takes a capacitor, but 'R0' is a resistor");
  const std::string power = "C1: capacitor a -> gnd, 1u\nexpect power C1 < 1 W\n";
  REQUIRE_PARSE_ERROR(kBase + power, 3, col_of("expect power C1 < 1 W", "C1"),
                      "'power' takes a resistor, but 'C1' is a capacitor");
  const std::string node = "expect rms @a < 1 A\n";
  REQUIRE_PARSE_ERROR(kBase + node, 2, col_of(node, "@"), "'rms' takes an element, not a node");
  const std::string unit = "expect didt R0 < 5 V/us\n";
  REQUIRE_PARSE_ERROR(kBase + unit, 2, col_of(unit, "5 V/us"), "'5 V/us' is a rate of change of voltage (V/s)");
}

TEST_CASE("a v2 error names the file, the line and the column", "[parse]") {
  auto errors = parse_errors(kBase + "D1: diode a -> gnd, rated 3\n");
  REQUIRE(errors.size() == 1);
  CHECK(errors[0].format().rfind("test.nf:2:27: error: 'rated 3' on a diode needs its unit", 0) == 0);
}

// =============================================================================================
// The specification's v2 example
// =============================================================================================

TEST_CASE("the specification's second-edition example parses into the model it describes", "[parse]") {
  Circuit c = parses_ok(
      "title \"Rectifier inrush at switch-on\"\n"
      "ground n\n"
      "mains:  voltage-source l -> n, cosine 230 Vrms 50 Hz, tolerance 10%\n"
      "K1:     switch l -> a, closes at 0 s, rated 16 A\n"
      "fuse:   resistor a -> b, 150 mohm, rated-i2t 5 A2s\n"
      "r_in:   resistor b -> c, 4.7 ohm, pulse-rated 20 J\n"
      "d1:     diode c -> p, forward 0.9 V, on 20 mohm, off 10 Mohm, rated 600 V\n"
      "d2:     diode m -> c, forward 0.9 V, on 20 mohm, off 10 Mohm\n"
      "d3:     diode n -> p, forward 0.9 V, on 20 mohm, off 10 Mohm\n"
      "d4:     diode m -> n, forward 0.9 V, on 20 mohm, off 10 Mohm\n"
      "c_bulk: capacitor p -> m, 220 uF, tolerance -20% .. +20%, rated 400 V\n"
      "r_load: resistor p -> m, 2.2 kohm\n"
      "watch fuse.i, c_bulk.v\n"
      "sweep K1.closes 0 ms .. 20 ms, c_bulk.initial 0 V .. 100 V\n"
      "expect worst peak fuse.i < 80 A\n"
      "expect share peak fuse.i > 60 A <= 25%\n");
  CHECK(c.elements().size() == 10);
  CHECK(rating(element(c, "d1"), RatingKind::peak_reverse_voltage).limit == 600.0);
  CHECK(element(c, "c_bulk").tolerance->lower == -0.2);
  REQUIRE(c.sweeps().size() == 2);
  CHECK(c.sweeps()[0].line == c.sweeps()[1].line);
  CHECK(c.claims().back().level == 60.0);
}
