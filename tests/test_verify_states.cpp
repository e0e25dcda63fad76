// The cross-check with several storage elements (verify.hpp, integrate.hpp): closed forms of
// circuits with two and three states pass against CVODE on the full nodal equations; the
// numerical path's own states agree with textbook results; a closed form falsified through the
// engine's test seams fails.

#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <numbers>

#include "netfold/parse.hpp"
#include "netfold/verify.hpp"
#include "response/test_seams.hpp"

using namespace netfold;

namespace {

constexpr double kPi = std::numbers::pi;

VerifyReport check(const Circuit& c, const SolveOptions& so = {}) {
  Solution s = solve(c, so);
  VerifyReport r = verify_closed_form(s);
  INFO(r.message);
  for (const auto& n : r.notes) INFO(n);
  REQUIRE(std::isfinite(r.max_rel_error));
  for (double a : r.integrator_atol) REQUIRE(std::isfinite(a));
  return r;
}

std::size_t index_of(const Solution& s, const std::string& text) {
  for (std::size_t i = 0; i < s.observables().size(); ++i)
    if (s.observables()[i].text == text) return i;
  FAIL("no observable " << text);
  return 0;
}

double max_abs(const std::vector<double>& v) {
  double m = 0.0;
  for (double y : v) m = std::max(m, std::fabs(y));
  return m;
}

// Series RLC on a 10 V step: 10 mH, 1 µF, R = 200 Ω (critical: R = 2·√(L/C)) or 20 Ω (ζ = 0.1).
std::string series_rlc(const char* r) {
  return std::string("title \"series RLC step\"\nV1: voltage-source a -> gnd, dc 10 V\n"
                     "K1: switch a -> b, closes at 0 s\nR1: resistor b -> c, ") +
         r +
         "\nL1: inductor c -> d, 10 mH\nC1: capacitor d -> gnd, 1 uF\n"
         "watch L1.i, C1.v, R1.p\nwindow 0 s .. 2 ms\n";
}

// An LC input filter switched onto a 48 V bus at 1 ms: 100 µH with 0.1 Ω, 100 µF, a 10 Ω load.
const char* const kInputFilter = R"(title "LC input filter on a DC bus"
bus: voltage-source p -> gnd, dc 48 V
K1: switch p -> a, closes at 1 ms
Rd: resistor a -> b, 0.1 ohm
Lf: inductor b -> c, 100 uH
Cf: capacitor c -> gnd, 100 uF
load: resistor c -> gnd, 10 ohm
watch Cf.v, Lf.i, @a - @c
window 0 s .. 8 ms
)";

// A two-stage RC filter on a 50 Hz sine, in steady state until its input contact opens at
// 12 ms: the periodic steady state of two states before t = 0.
const char* const kTwoStageRc = R"(title "two-stage RC filter"
mains: voltage-source l -> gnd, sine 325 V 50 Hz phase 20 deg
K1: switch l -> a, opens at 12 ms
R1: resistor a -> b, 1 kohm
C1: capacitor b -> gnd, 10 uF
R2: resistor b -> c, 10 kohm
C2: capacitor c -> gnd, 1 uF
load: resistor c -> gnd, 47 kohm
watch C1.v, C2.v, R1.i, R2.i
window 0 s .. 60 ms
)";

// A capacitor bank energised through an inrush-limiting reactor at the voltage peak (5 ms), on
// a supply with 1 mH of source inductance that also feeds a 10 Ω load: three states, the
// reactor's loop open (held at 0 A) before the contact closes.
const char* const kCapacitorBank = R"(title "capacitor bank energised through a reactor"
mains: voltage-source s -> gnd, cosine 325 V 50 Hz
Rs: resistor s -> t, 50 mohm
Ls: inductor t -> bus, 1 mH
feeder: resistor bus -> gnd, 10 ohm
K1: switch bus -> x, closes at 5 ms
Lr: inductor x -> y, 100 uH
Rr: resistor y -> z, 10 mohm
Cb: capacitor z -> gnd, 100 uF
Rdis: resistor z -> gnd, 100 kohm
watch Cb.v, Lr.i, Ls.i, @bus
window 0 s .. 30 ms
)";

}  // namespace

TEST_CASE("verify passes on a critically damped series RLC step, whose numerical peak current is 2V/(e·R)",
          "[verify]") {
  Circuit c = parse_netlist(series_rlc("200 ohm"), "rlc.nf");
  Solution s = solve(c);
  VerifyReport r = verify_closed_form(s);
  INFO(r.message);
  CHECK(r.passed);
  CHECK(r.max_rel_error < 1e-8);
  REQUIRE(r.numerical.states.size() == 2);
  // Before t = 0 the contact is open: L1's loop is open (held at 0 A) and C1 floats, undetermined
  // (the format: started from 0 and reported).
  CHECK(r.numerical.initial_method == InitialStateMethod::undetermined);
  CHECK(r.numerical.initial_states == std::vector<double>{0.0, 0.0});
  // source: series RLC step response, textbook (from memory): at critical damping
  // i(t) = (V/L)·t·e^{−t·R/(2L)}, largest at t = 2L/R = 100 µs (a sample of the grid) with 2V/(e·R).
  const double peak = max_abs(r.numerical.values[index_of(s, "L1.i")]);
  CHECK(std::fabs(peak - 2.0 * 10.0 / (std::numbers::e * 200.0)) <= 1e-8 * peak);
}

TEST_CASE("verify passes on an underdamped series RLC step, whose numerical overshoot is e^(-ζπ/√(1-ζ²))",
          "[verify]") {
  Circuit c = parse_netlist(series_rlc("20 ohm"), "rlc.nf");
  Solution s = solve(c);
  VerifyReport r = verify_closed_form(s);
  INFO(r.message);
  CHECK(r.passed);
  CHECK(r.max_rel_error < 1e-8);
  // source: series RLC step response, textbook (from memory): the capacitor voltage overshoots
  // V by V·e^{−ζπ/√(1−ζ²)}, ζ = (R/2)·√(C/L) = 0.1. The grid (0.5 µs) meets the peak within
  // 0.25 µs, where the voltage is lower by at most ½·ω²·(0.25 µs)²·V ≈ 3e-6·V.
  const double zeta = 10.0 * std::sqrt(1e-6 / 10e-3);
  const double overshoot = 10.0 * std::exp(-zeta * kPi / std::sqrt(1.0 - zeta * zeta));
  const double peak = max_abs(r.numerical.values[index_of(s, "C1.v")]);
  CHECK(peak <= 10.0 + overshoot + 1e-9);
  CHECK(peak >= 10.0 + overshoot - 1e-5 * 10.0);
}

TEST_CASE("verify passes on an LC input filter switched onto a DC bus", "[verify]") {
  VerifyReport r = check(parse_netlist(kInputFilter, "filter.nf"));
  CHECK(r.passed);
  CHECK(r.max_rel_error < 1e-8);
  REQUIRE(r.numerical.initial_states.size() == 2);
  // The contact is open before t = 0: the filter rests (Lf held at 0 A, Cf discharged by the load).
  CHECK(r.numerical.initial_states[0] == 0.0);
  CHECK(r.numerical.initial_states[1] == 0.0);
}

TEST_CASE("verify passes on a two-stage RC filter whose periodic steady state before t = 0 comes from shooting "
          "with the monodromy matrix",
          "[verify]") {
  Circuit c = parse_netlist(kTwoStageRc, "rc2.nf");
  VerifyReport r = check(c);
  CHECK(r.passed);
  CHECK(r.max_rel_error < 1e-8);
  CHECK(r.numerical.initial_method == InitialStateMethod::shooting);
  CHECK(r.numerical.shooting_iterations >= 1);
  CHECK(r.numerical.shooting_iterations <= 5);
  // The phasor steady state of the same two-node network, derived by hand: nodal equations at b
  // and c with Y = jωC, V_a = 325∠(20° − 90°); source: nodal analysis, textbook (from memory).
  const std::complex<double> jw(0.0, 2.0 * kPi * 50.0);
  const std::complex<double> va = std::polar(325.0, (20.0 - 90.0) * kPi / 180.0);
  const double g1 = 1e-3, g2 = 1e-4, gl = 1.0 / 47e3;
  // [g1 + g2 + jωC1, −g2; −g2, g2 + gl + jωC2]·[vb; vc] = [g1·va; 0]
  const std::complex<double> a11 = g1 + g2 + jw * 10e-6, a12 = -g2, a22 = g2 + gl + jw * 1e-6;
  const std::complex<double> det = a11 * a22 - a12 * a12;
  const std::complex<double> vb = g1 * va * a22 / det, vc = -a12 * g1 * va / det;
  CHECK(std::fabs(r.numerical.initial_states[0] - vb.real()) <= 1e-8 * std::abs(vb));
  CHECK(std::fabs(r.numerical.initial_states[1] - vc.real()) <= 1e-8 * std::abs(vc));
}

TEST_CASE("verify passes on a capacitor bank energised through a reactor at the voltage peak (three states, one "
          "held at zero before t = 0)",
          "[verify]") {
  VerifyReport r = check(parse_netlist(kCapacitorBank, "bank.nf"));
  CHECK(r.passed);
  CHECK(r.max_rel_error < 1e-7);
  REQUIRE(r.numerical.initial_states.size() == 3);
  CHECK(r.numerical.initial_method == InitialStateMethod::shooting);
  // Ls·di/dt = v_s − (Rs + 10 Ω)·i before t = 0: its phasor current, by hand; Lr's loop is open.
  const std::complex<double> i = 325.0 / std::complex<double>(10.05, 2.0 * kPi * 50.0 * 1e-3);
  CHECK(std::fabs(r.numerical.initial_states[0] - i.real()) <= 1e-8 * std::abs(i));
  CHECK(r.numerical.initial_states[1] == 0.0);
  CHECK(r.numerical.initial_states[2] == 0.0);
}

TEST_CASE("with several states, a closed form falsified through the engine's seams fails verify; the numerical "
          "run is unchanged",
          "[verify]") {
  Circuit c = parse_netlist(kCapacitorBank, "bank.nf");
  const NumericalRun clean = integrate_inputs(solve(c));
  struct Case {
    const char* what;
    seams::EngineFaults fault;
  };
  const Case cases[] = {
      {"every time constant × 1.01", {.tau_scale = 1.01}},
      {"Lr.i from its second node to its first", {.current_sign_flip = true}},
  };
  // The watched current of the bank circuit is an inductor's: flip its sign through the seam.
  for (const auto& k : cases) {
    seams::ScopedFaults fault(k.fault);
    Solution s = solve(c);
    VerifyReport r = verify_closed_form(s);
    INFO(k.what << ": " << r.message);
    CHECK_FALSE(r.passed);
    CHECK(r.max_rel_error > 1e-3);
    const NumericalRun run = integrate_inputs(s);
    CHECK(run.states == clean.states);
    CHECK(run.values == clean.values);
  }
  CHECK(check(c).passed);
}

TEST_CASE("with several states, a wrong sweep phase injected in the engine fails verify", "[verify]") {
  Circuit c = parse_netlist(kTwoStageRc, "rc2.nf");
  SolveOptions so;
  so.scenario.source_phases.push_back({*c.find_element("mains"), 75.0 * kPi / 180.0});
  CHECK(check(c, so).passed);
  for (double offset_deg : {90.0, 5.0}) {
    seams::ScopedFaults fault({.sweep_phase_offset = offset_deg * kPi / 180.0});
    VerifyReport r = check(c, so);
    INFO("phase off by " << offset_deg << "°: " << r.message);
    CHECK_FALSE(r.passed);
  }
}

TEST_CASE("with several states, given initial states are used as given and the others come from the steady state",
          "[verify]") {
  // source: common practice, no source: `initial` overrides its own state only (netlist-format.md,
  // "Several storage elements (v2)").
  Circuit c = parse_netlist(R"(V1: voltage-source a -> gnd, dc 12 V
K1: switch a -> b, opens at 1 ms
R1: resistor b -> c, 100 ohm
C1: capacitor c -> gnd, 10 uF, initial 3 V
R2: resistor c -> d, 100 ohm
C2: capacitor d -> gnd, 10 uF
R3: resistor d -> gnd, 200 ohm
watch C1.v, C2.v
window 0 s .. 10 ms
)",
                            "given.nf");
  Solution s = solve(c);
  VerifyReport r = verify_closed_form(s);
  INFO(r.message);
  CHECK(r.passed);
  REQUIRE(r.numerical.initial_states.size() == 2);
  CHECK(r.numerical.initial_states[0] == 3.0);
  // C2 from the DC operating point: a divider 12 V·200/(100 + 100 + 200).
  CHECK(r.numerical.initial_states[1] == Approx(6.0).epsilon(1e-12));
}
