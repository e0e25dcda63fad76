// Tests of claim evaluation: every claim kind passing and failing, with the margin it fails
// by. Expected values are derived here from the element values (first-order RC/RL circuit
// theory, common practice, no source), never copied from netfold's output.
#include <catch2/catch.hpp>

#include <cmath>
#include <memory>
#include <numbers>
#include <string>

#include <fmt/format.h>

#include "amend_helpers.hpp"
#include "netfold/claims.hpp"
#include "netfold/parse.hpp"
#include "netfold/solve.hpp"

using namespace netfold;

namespace {

constexpr double kPi = std::numbers::pi;

// A circuit, its solution and its claims' results, kept alive together (a Solution refers to
// its Circuit).
struct Evaluated {
  std::unique_ptr<Circuit> circuit;
  std::unique_ptr<Solution> solution;
  std::vector<ClaimResult> results;
};

Evaluated evaluate_text(const std::string& text) {
  Evaluated e;
  e.circuit = std::make_unique<Circuit>(parse_netlist(text, "claims.nf"));
  e.solution = std::make_unique<Solution>(solve(*e.circuit));
  e.results = evaluate_claims(*e.circuit, *e.solution);
  return e;
}

// The one claim `claim` added to `circuit`.
ClaimResult one_claim(const std::string& circuit, const std::string& claim) {
  Evaluated e = evaluate_text(circuit + "expect " + claim + "\n");
  REQUIRE(e.results.size() == 1);
  INFO(e.results[0].message);
  return e.results[0];
}

// |actual − expected| ≤ rel·|expected| (≤ rel when expected is 0), printing both.
#define CHECK_CLOSE(actual, expected, rel)                                               \
  do {                                                                                   \
    const double a_ = (actual), e_ = (expected);                                         \
    INFO("actual " << a_ << ", expected " << e_);                                       \
    CHECK(std::fabs(a_ - e_) <= (rel) * (e_ == 0.0 ? 1.0 : std::fabs(e_)));              \
  } while (0)

// 10 kohm and 470 nF: tau = 4.7 ms. A 5 V step at 1 ms through a switch closed at 0.
const std::string kRc =
    "V1: voltage-source s -> gnd, step 5 V at 1 ms\n"
    "K1: switch s -> a, closes at 0 s, opens at 30 ms\n"
    "R1: resistor a -> b, 10 kohm\n"
    "C1: capacitor b -> gnd, 470 nF\n"
    "watch C1.v, R1.i\n"
    "window 0 .. 40 ms\n";
constexpr double kTau = 10e3 * 470e-9;

// 1 V, 50 Hz cosine into 1 kohm and 3.183 µF: ωRC = 1 at 50 Hz (approximately).
const std::string kAc =
    "V1: voltage-source s -> gnd, cosine 1 V 50 Hz\n"
    "K1: switch s -> a, closes at 0 s\n"
    "R1: resistor a -> b, 1 kohm\n"
    "C1: capacitor b -> gnd, 3.183 uF\n"
    "watch @b\n";

}  // namespace

TEST_CASE("a time-constant claim passes with margin tolerance minus the distance", "[claims]") {
  // claimed 4.8 ms ± 0.2 ms, computed 4.7 ms: margin 0.2 − 0.1 = 0.1 ms.
  ClaimResult r = one_claim(kRc, "tau = 4.8 ms ± 0.2 ms");
  CHECK(r.passed);
  REQUIRE(r.computed);
  CHECK_CLOSE(*r.computed, kTau, 1e-9);
  REQUIRE(r.margin);
  CHECK_CLOSE(*r.margin, 0.2e-3 - (4.8e-3 - kTau), 1e-6);
  CHECK(r.location() == "claims.nf:7");
  CHECK(r.text == "tau = 4.8 ms ± 0.2 ms");
  CHECK(r.message == "computed 4.7 ms, claimed 4.8 ms ± 200 µs (margin 100 µs)");
}

TEST_CASE("a time-constant claim made false on purpose fails by the right margin", "[claims]") {
  // claimed 5 ms ± 1% = ± 50 µs, computed 4.7 ms: margin 50 µs − 300 µs = −250 µs.
  ClaimResult r = one_claim(kRc, "tau = 5 ms ± 1%");
  CHECK_FALSE(r.passed);
  REQUIRE(r.margin);
  CHECK_CLOSE(*r.margin, 0.01 * 5e-3 - (5e-3 - kTau), 1e-6);
  CHECK(r.message == "computed 4.7 ms, claimed 5 ms ± 1% (margin -250 µs)");
}

TEST_CASE("a claim on a later segment uses that segment and a segment beyond the last fails", "[claims]") {
  // Segment 1: 0 .. 1 ms (no step yet), 2: 1 .. 30 ms, 3: the switch open, R_th = ∞.
  ClaimResult rth2 = one_claim(kRc, "rth[2] = 10 kohm ± 0.1%");
  CHECK(rth2.passed);
  CHECK_CLOSE(*rth2.computed, 10e3, 1e-9);
  // vth of segment 2 at its start: the open-circuit voltage is the 5 V of the step.
  ClaimResult vth2 = one_claim(kRc, "vth[2] = 5.1 V ± 50 mV");
  CHECK_FALSE(vth2.passed);
  CHECK_CLOSE(*vth2.margin, 0.05 - 0.1, 1e-6);
  ClaimResult vth1 = one_claim(kRc, "vth = 0 V ± 1 mV");
  CHECK(vth1.passed);

  ClaimResult beyond = one_claim(kRc, "tau[4] = 1 ms ± 1%");
  CHECK_FALSE(beyond.passed);
  CHECK_FALSE(beyond.computed);
  CHECK_FALSE(beyond.margin);
  CHECK(beyond.message.find("segment 4 does not exist: the window has 3 segments") != std::string::npos);
}

TEST_CASE("an infinite time constant passes a lower bound and fails an equality with a note", "[claims]") {
  // Segment 3: the switch is open and C1 sees no resistance: tau = ∞.
  ClaimResult above = one_claim(kRc, "tau[3] > 1 s");
  CHECK(above.passed);
  CHECK(std::isinf(*above.computed));
  CHECK(std::isinf(*above.margin));
  CHECK(*above.margin > 0);
  ClaimResult equal = one_claim(kRc, "tau[3] = 1 s ± 1%");
  CHECK_FALSE(equal.passed);
  CHECK(std::isinf(*equal.margin));
  CHECK(*equal.margin < 0);
  CHECK(equal.message.find("tau is infinite") != std::string::npos);
  ClaimResult below = one_claim(kRc, "rth[3] < 1 Gohm");
  CHECK_FALSE(below.passed);
  CHECK(below.message.find("rth is infinite") != std::string::npos);
  // The vth of a segment without a Thevenin equivalent is undefined, not a number.
  ClaimResult vth = one_claim(kRc, "vth[3] = 0 V ± 1 V");
  CHECK_FALSE(vth.passed);
  CHECK_FALSE(vth.computed);
  CHECK(vth.message.find("undefined") != std::string::npos);
}

TEST_CASE("peak, max, min and final claims compare the figures over the window", "[claims]") {
  // The step charges C1 from 1 ms to 30 ms (29 ms = 6.17 tau), then the switch holds it.
  const double v_hold = 5.0 * (1.0 - std::exp(-29e-3 / kTau));
  ClaimResult peak = one_claim(kRc, "peak C1.v > 5 V");
  CHECK_FALSE(peak.passed);
  CHECK_CLOSE(*peak.margin, v_hold - 5.0, 1e-6);
  ClaimResult max = one_claim(kRc, "max C1.v <= 5 V");
  CHECK(max.passed);
  CHECK_CLOSE(*max.margin, 5.0 - v_hold, 1e-6);
  ClaimResult min = one_claim(kRc, "min C1.v >= 0 V");
  CHECK(min.passed);
  CHECK(std::fabs(*min.computed) < 1e-12);
  ClaimResult final_value = one_claim(kRc, "final C1.v = 4.995 V ± 1 mV");
  CHECK_FALSE(final_value.passed);
  CHECK_CLOSE(*final_value.margin, 1e-3 - std::fabs(v_hold - 4.995), 1e-6);
  // The current peaks just after the step: 5 V / 10 kohm.
  ClaimResult current = one_claim(kRc, "peak R1.i < 0.4 mA");
  CHECK_FALSE(current.passed);
  CHECK_CLOSE(*current.margin, 0.4e-3 - 0.5e-3, 1e-6);
}

TEST_CASE("an at-time claim evaluates the closed form at that instant", "[claims]") {
  // One time constant after the step: 5 V × (1 − 1/e).
  const double expected = 5.0 * (1.0 - std::exp(-1.0));
  ClaimResult at = one_claim(kRc, fmt::format("C1.v at {} s = 3.2 V ± 10 mV", 1e-3 + kTau));
  CHECK_FALSE(at.passed);
  CHECK_CLOSE(*at.computed, expected, 1e-9);
  CHECK_CLOSE(*at.margin, 0.01 - std::fabs(expected - 3.2), 1e-6);
  ClaimResult lt = one_claim(kRc, fmt::format("C1.v at {} s < 3.2 V", 1e-3 + kTau));
  CHECK(lt.passed);
  CHECK_CLOSE(*lt.margin, 3.2 - expected, 1e-6);
  ClaimResult outside = one_claim(kRc, "C1.v at 50 ms < 1 V");
  CHECK_FALSE(outside.passed);
  CHECK(outside.message.find("outside the window") != std::string::npos);
}

TEST_CASE("amplitude and phase claims use the steady-state fundamental", "[claims]") {
  const double wrc = 2 * kPi * 50.0 * 1e3 * 3.183e-6;
  const double amplitude = 1.0 / std::sqrt(1.0 + wrc * wrc);
  const double phase_deg = -std::atan(wrc) * 180.0 / kPi;
  ClaimResult a = one_claim(kAc, "amplitude @b = 0.7 V ± 1 mV");
  CHECK_FALSE(a.passed);
  CHECK_CLOSE(*a.computed, amplitude, 1e-9);
  CHECK_CLOSE(*a.margin, 1e-3 - std::fabs(amplitude - 0.7), 1e-6);
  ClaimResult p = one_claim(kAc, "phase @b = -45 deg ± 0.1 deg");
  CHECK(p.passed);
  CHECK_CLOSE(*p.computed, phase_deg * kPi / 180.0, 1e-9);
  // The margin is in the quantity's unit, rad.
  CHECK_CLOSE(*p.margin, (0.1 - std::fabs(phase_deg + 45.0)) * kPi / 180.0, 1e-6);
}

TEST_CASE("phases compare as angles, the difference wrapped into (-180, 180] degrees", "[claims]") {
  // Sine ripple through an RC of ωRC = 2π: the phase is −90° − atan(2π) = −170.96°.
  const std::string ripple =
      "V1: voltage-source r -> gnd, sine 1 V 1 kHz\n"
      "R1: resistor r -> o, 100 ohm\n"
      "C1: capacitor o -> gnd, 10 uF\n";
  const double phase = -90.0 - std::atan(2 * kPi * 1e3 * 1e-3) * 180.0 / kPi;
  // 170° is 19.04° from −170.96° the short way round (not 340.96°).
  ClaimResult near = one_claim(ripple, "phase @o = 170 deg ± 20 deg");
  CHECK(near.passed);
  CHECK_CLOSE(*near.margin * 180.0 / kPi, 20.0 - (360.0 + phase - 170.0), 1e-6);
  ClaimResult far = one_claim(ripple, "phase @o = 170 deg ± 15 deg");
  CHECK_FALSE(far.passed);
  CHECK_CLOSE(*far.margin * 180.0 / kPi, 15.0 - (360.0 + phase - 170.0), 1e-6);
  CHECK(far.message.find("-170.96°") != std::string::npos);
}

TEST_CASE("the amplitude of a DC-only circuit is a failed claim, not a NaN", "[claims]") {
  ClaimResult r = one_claim(kRc, "amplitude C1.v = 1 V ± 1%");
  CHECK_FALSE(r.passed);
  CHECK_FALSE(r.computed);
  CHECK_FALSE(r.margin);
  CHECK(r.message.find("no sinusoidal source") != std::string::npos);
  ClaimResult p = one_claim(kRc, "phase C1.v < 10 deg");
  CHECK_FALSE(p.passed);
  CHECK_FALSE(p.computed);
}

TEST_CASE("energy and i2t claims integrate over the window", "[claims]") {
  // Charging C from 0 to V through R dissipates ½CV²·(1 − e^{−2T/τ}) in R; ∫i²dt is that / R.
  const double t_charge = 29e-3;
  const double energy = 0.5 * 470e-9 * 25.0 * (1.0 - std::exp(-2.0 * t_charge / kTau));
  const double i2t = energy / 10e3;
  ClaimResult e = one_claim(kRc, "energy R1 = 6 uJ ± 0.1 uJ");
  CHECK_FALSE(e.passed);
  CHECK_CLOSE(*e.computed, energy, 1e-6);
  CHECK_CLOSE(*e.margin, 0.1e-6 - std::fabs(energy - 6e-6), 1e-5);
  ClaimResult i = one_claim(kRc, "i2t R1 < 5e-10 A2s");
  CHECK_FALSE(i.passed);
  CHECK_CLOSE(*i.computed, i2t, 1e-6);
  CHECK_CLOSE(*i.margin, 5e-10 - i2t, 1e-5);
}

TEST_CASE("a worst-peak claim takes the largest peak over the declared sweep", "[claims]") {
  // 1 V through 1 kohm onto C1 with a residual voltage from −3 V to 2 V: the peak |v| is the
  // residual itself when it exceeds 1 V, so the worst is 3 V at −3 V; the current starts at
  // (1 V − v0) / 1 kohm, worst 4 mA. R1.i is not watched: the search must still cover it.
  const std::string swept =
      "V1: voltage-source s -> gnd, dc 1 V\n"
      "K1: switch s -> a, closes at 0 s\n"
      "R1: resistor a -> b, 1 kohm\n"
      "C1: capacitor b -> gnd, 1 uF\n"
      "watch C1.v\n"
      "sweep C1.initial -3 V .. 2 V step 0.5 V\n";
  ClaimResult v = one_claim(swept, "worst peak C1.v = 3.1 V ± 50 mV");
  CHECK_FALSE(v.passed);
  CHECK_CLOSE(*v.computed, 3.0, 1e-6);
  CHECK_CLOSE(*v.margin, 0.05 - 0.1, 1e-4);
  ClaimResult i = one_claim(swept, "worst peak R1.i < 4.5 mA");
  CHECK(i.passed);
  CHECK_CLOSE(*i.computed, 4e-3, 1e-6);
  CHECK_CLOSE(*i.margin, 0.5e-3, 1e-4);
  CHECK(i.message.find("over sweep C1.initial") != std::string::npos);
}

TEST_CASE("a worst-peak claim without a sweep fails saying a sweep is needed", "[claims]") {
  ClaimResult r = one_claim(kRc, "worst peak C1.v < 10 V");
  CHECK_FALSE(r.passed);
  CHECK_FALSE(r.computed);
  CHECK(r.message.find("needs a sweep") != std::string::npos);
}

TEST_CASE("order operators give the signed distance to the bound and treat the bound as written", "[claims]") {
  Evaluated e = evaluate_text(kRc + "expect min C1.v >= 0 V\nexpect min C1.v > 0 V\nexpect min C1.v <= 0 V\n"
                                    "expect min C1.v < 0 V\n");
  REQUIRE(e.results.size() == 4);
  // min C1.v is exactly 0 V (the capacitor rests at 0 until the step): >= and <= pass, > and < fail.
  REQUIRE(*e.results[0].computed == 0.0);
  CHECK(e.results[0].passed);
  CHECK_FALSE(e.results[1].passed);
  CHECK(e.results[2].passed);
  CHECK_FALSE(e.results[3].passed);
  for (const auto& r : e.results) CHECK(*r.margin == 0.0);
}

TEST_CASE("claims of a circuit that does not solve are failed with the reason", "[claims]") {
  Circuit c = parse_netlist("V1: voltage-source a -> gnd, dc 1 V\nR1: resistor a -> gnd, 1 kohm\n"
                            "expect peak R1.i < 1 A\nexpect tau = 1 ms ± 1%\n",
                            "unsolved.nf");
  std::vector<ClaimResult> r = unevaluated_claims(c, "not evaluated: the circuit does not solve");
  REQUIRE(r.size() == 2);
  for (const auto& x : r) {
    CHECK_FALSE(x.passed);
    CHECK_FALSE(x.computed);
    CHECK(x.message == "not evaluated: the circuit does not solve");
  }
  CHECK(r[1].location() == "unsolved.nf:4");
}

TEST_CASE("a resistive circuit has no time constant to claim", "[claims]") {
  ClaimResult r = one_claim("V1: voltage-source a -> gnd, dc 1 V\nR1: resistor a -> gnd, 1 kohm\n", "tau < 1 s");
  CHECK_FALSE(r.passed);
  CHECK_FALSE(r.computed);
  CHECK(r.message.find("no capacitor or inductor") != std::string::npos);
  // Its other claims still work: 1 V across 1 kohm.
  ClaimResult i = one_claim("V1: voltage-source a -> gnd, dc 1 V\nR1: resistor a -> gnd, 1 kohm\n",
                            "peak R1.i = 1 mA ± 1 uA");
  CHECK(i.passed);
  CHECK_CLOSE(*i.margin, 1e-6, 1e-3);
}

namespace {

// The claims `claims` added to the circuit in `text`, evaluated.
std::vector<ClaimResult> amended_claims(const std::string& text, std::vector<netfold::testing::ClaimAmendment> claims) {
  auto s = netfold::testing::solve_amended(text, {{}, std::move(claims)});
  return evaluate_claims(*s.circuit, *s);
}

netfold::testing::ClaimAmendment v2_claim(ClaimQuantity q, CompareOp op, double value, Dimension d,
                                         std::string element, std::string observable = {}) {
  Claim c;
  c.quantity = q;
  c.op = op;
  c.value = value;
  c.dimension = d;
  return {c, std::move(element), std::move(observable)};
}

// 100 V on 1 uF discharged through 1 kohm from 0 s: τ = 1 ms.
const std::string kDischarge =
    "C1: capacitor a -> gnd, 1 uF, initial 100 V\nK1: switch a -> b, closes at 0 s\nR1: resistor b -> gnd, 1 kohm\n"
    "window 0 .. 5 ms\n";

}  // namespace

TEST_CASE("issue 17: a time-below claim is the RC discharge time τ·ln(V0/level)", "[claims]") {
  // source: textbook RC discharge, v = V0·e^{−t/RC}: below 60 V from RC·ln(100/60) = 0.511 ms.
  auto c = v2_claim(ClaimQuantity::time_below, CompareOp::le, 1e-3, Dimension::time, "", "C1.v");
  c.claim.level = 60.0;
  auto late = c;
  late.claim.after = 0.2e-3;
  auto never = c;
  never.claim.level = 0.1;  // 100 V·e^{−5} = 0.67 V at the window's end
  auto outside = c;
  outside.claim.after = 6e-3;
  const auto r = amended_claims(kDischarge, {c, late, never, outside});
  REQUIRE(r.size() == 4);
  CHECK(r[0].passed);
  CHECK_CLOSE(*r[0].computed, 1e-3 * std::log(100.0 / 60.0), 1e-10);
  CHECK_THAT(r[0].message, Catch::Contains("the last event at 0 s"));
  CHECK_CLOSE(*r[1].computed, 1e-3 * std::log(100.0 / 60.0) - 0.2e-3, 1e-10);
  CHECK_FALSE(r[2].passed);
  CHECK_FALSE(r[2].computed);
  CHECK_THAT(r[2].message, Catch::Contains("|C1.v| does not stay below 100 mV"));
  CHECK_FALSE(r[3].passed);
  CHECK_THAT(r[3].message, Catch::Contains("outside 0 s .. 5 ms"));
  Claim text_of = c.claim;
  text_of.observable.text = "C1.v";
  text_of.after = 0.2e-3;
  CHECK(claim_quantity_text(text_of, parse_netlist(kDischarge, "x.nf")) == "time-below C1.v 60 V after 200 µs");
}

TEST_CASE("issue 17: dvdt, didt and rms claims compare the exact stress figures", "[claims]") {
  // source: textbook RC discharge, i = (V0/R)·e^{−t/RC}: 0.1 A at 0+, so |dv/dt| = i/C =
  // 1e5 V/s = 0.1 V/µs and |di/dt| = 0.1 A/1 ms = 100 A/s at 0+; without a sinusoid the rms is
  // over the window: sqrt(0.1²·(τ/2)·(1 − e^{−10})/5 ms).
  const double rms = std::sqrt(0.01 * 0.5e-3 * (1.0 - std::exp(-10.0)) / 5e-3);
  const auto r = amended_claims(kDischarge, {v2_claim(ClaimQuantity::dvdt, CompareOp::lt, 0.05e6, Dimension::voltage, "C1"),
                                             v2_claim(ClaimQuantity::didt, CompareOp::lt, 200.0, Dimension::current, "R1"),
                                             v2_claim(ClaimQuantity::rms, CompareOp::gt, 0.01, Dimension::current, "R1")});
  REQUIRE(r.size() == 3);
  CHECK_FALSE(r[0].passed);
  CHECK_CLOSE(*r[0].computed, 1e5, 1e-12);
  CHECK_THAT(r[0].message, Catch::Contains("computed 0.1 V/µs, claimed < 0.05 V/µs"));
  CHECK(r[1].passed);
  CHECK_CLOSE(*r[1].computed, 100.0, 1e-12);
  CHECK(r[2].passed);
  CHECK_CLOSE(*r[2].computed, rms, 1e-12);
  CHECK_THAT(r[2].message, Catch::Contains("over the window 0 s .. 5 ms"));
}

TEST_CASE("issue 17: a power claim is the sustained power a resistor's rated P is judged by", "[claims]") {
  // source: V_rms²/R (exact): 230²/26.45 = 2000 W while the contactor is closed; 0 W after.
  const std::string heater =
      "grid: voltage-source l -> n, cosine 230 Vrms 50 Hz\nK1: switch l -> h, closes at 0 s, opens at 100 ms\n"
      "R_heater: resistor h -> n, 26.45 ohm\nground n\n";
  auto c = v2_claim(ClaimQuantity::power, CompareOp::eq, 2000.0, Dimension::power, "R_heater");
  c.claim.tolerance = 0.01;
  c.claim.tolerance_is_percent = true;
  const auto r = amended_claims(heater, {c});
  REQUIRE(r.size() == 1);
  CHECK(r[0].passed);
  CHECK_CLOSE(*r[0].computed, 230.0 * 230.0 / 26.45, 1e-12);
  CHECK_THAT(r[0].message, Catch::Contains("segment 1, 0 s .. 100 ms"));
}
