// Tests of the exact stress figures (src/response/stress.cpp): derivatives of the closed form,
// the largest rate of change, the largest rms over a fundamental period, the largest value of
// one sign, and the time after which a quantity stays below a level (spec v2, "Ratings").
#include <cmath>
#include <utility>
#include <numbers>
#include <stdexcept>

#include "engine_helpers.hpp"
#include "netfold/stress.hpp"

using namespace netfold;
using namespace netfold::testing;

namespace {

constexpr double kPi = std::numbers::pi;

// 10 V through 1 kohm onto 1 uF from 0 V, closed at 0 s: τ = 1 ms.
const char* kRcCharge =
    "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 0 s\nR1: resistor b -> c, 1 kohm\n"
    "C1: capacitor c -> gnd, 1 uF, initial 0 V\nwindow 0 .. 5 ms\n";

// 100 V on 1 uF discharged through 1 kohm from 0 s: τ = 1 ms.
const char* kRcDischarge =
    "C1: capacitor a -> gnd, 1 uF, initial 100 V\nK1: switch a -> b, closes at 0 s\nR1: resistor b -> gnd, 1 kohm\n"
    "window 0 .. 5 ms\n";

// ∫_τ^{τ+T} y² dt by composite Simpson on `n` intervals, from values of the solution only.
double simpson_square(const Solved& s, const Observable& o, double from, double to, int n) {
  const double h = (to - from) / n;
  double sum = 0.0;
  for (int k = 0; k <= n; ++k) {
    const double y = s->value(o, from + h * k);
    sum += y * y * (k == 0 || k == n ? 1.0 : (k % 2 == 1 ? 4.0 : 2.0));
  }
  return sum * h / 3.0;
}

// The largest rms over one period by brute force: a grid of `starts` + 1 starts, each integral
// by Simpson's rule; the rms and its start.
std::pair<double, double> brute_force_rms(const Solved& s, const Observable& o, double period, int starts) {
  const Window& w = s->window();
  double best = 0.0, at = w.from;
  for (int k = 0; k <= starts; ++k) {
    const double tau = w.from + (w.to - period - w.from) * k / starts;
    const double f = simpson_square(s, o, tau, tau + period, 4000);
    if (f > best) best = f, at = tau;
  }
  return {std::sqrt(best / period), at};
}

}  // namespace

TEST_CASE("the derivative of a wave is the wave's exact derivative at every instant", "[stress]") {
  Wave w;
  w.t0 = 1e-3;
  w.t1 = 41e-3;
  w.a = -200.0;
  w.offset = 3.0;
  w.drift = 5.0;
  w.transient = -2.0;
  w.phasors = {{50.0, {1.0, 2.0}}, {150.0, {0.5, -1.0}}};
  const Wave d = derivative_of(w);
  for (int k = 0; k <= 40; ++k) {
    const double t = w.t0 + (w.t1 - w.t0) * k / 40.0, h = 1e-7;
    // source: definition of the derivative; central difference, error O(h²) (common practice).
    const double numeric = (w.value(t + h) - w.value(t - h)) / (2.0 * h);
    INFO("t = " << t);
    CHECK(std::fabs(d.value(t) - w.derivative(t)) <= 1e-12 * (std::fabs(w.derivative(t)) + 1000.0));
    CHECK(std::fabs(d.value(t) - numeric) <= 1e-5 * (std::fabs(numeric) + 1000.0));
  }
  // An infinite time constant: a ramp of slope `drift` (φ(0, s) = s).
  Wave ramp;
  ramp.t1 = 1.0;
  ramp.drift = 7.0;
  ramp.offset = 1.0;
  CHECK(derivative_of(ramp).value(0.5) == 7.0);
}

TEST_CASE("a power has no derivative of the closed form's shape", "[stress]") {
  Piece power{constant_wave(0.0, 1.0, 2.0), constant_wave(0.0, 1.0, 3.0)};
  CHECK_THROWS_AS(derivative_of(power), std::invalid_argument);
}

TEST_CASE("an RC step's largest dv/dt is V/(R·C) just after the switch closes", "[stress]") {
  // source: textbook RC charging, v = V·(1 − e^{−t/RC}), dv/dt = (V/RC)·e^{−t/RC}: largest at 0+.
  auto s = solve_text(kRcCharge);
  const RateFigure r = largest_rate(*s, observable(s, "C1.v"));
  CHECK_REL(r.value, 10.0 / (1e3 * 1e-6), 1e-12);
  CHECK(r.time == 0.0);
  CHECK_FALSE(r.before_event);
  // A capacitor's dv/dt is i/C exactly (its defining equation).
  CHECK_REL(r.value, find_peak(*s, observable(s, "C1.i")).value / 1e-6, 1e-12);
}

TEST_CASE("an RL step's largest di/dt is V/L just after the switch closes", "[stress]") {
  // source: textbook RL, i = (V/R)·(1 − e^{−tR/L}), di/dt = (V/L)·e^{−tR/L}: largest at 0+.
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 0 s\nR1: resistor b -> c, 10 ohm\n"
      "L1: inductor c -> gnd, 1 mH, initial 0 A\nwindow 0 .. 1 ms\n");
  const RateFigure r = largest_rate(*s, observable(s, "L1.i"));
  CHECK_REL(r.value, 10.0 / 1e-3, 1e-12);
  CHECK(r.time == 0.0);
}

TEST_CASE("a sinusoid's largest dv/dt is A·ω and its rms A/√2", "[stress]") {
  // source: exact, d/dt A·cos(ωt) = −A·ω·sin(ωt); rms of A·cos over a period is A/√2.
  auto s = solve_text("supply: voltage-source a -> gnd, cosine 100 V 50 Hz\nR1: resistor a -> gnd, 10 ohm\n"
                      "window 0 .. 70 ms\n");
  const double omega = 2.0 * kPi * 50.0;
  CHECK_REL(largest_rate(*s, observable(s, "R1.v")).value, 100.0 * omega, 1e-12);
  const RmsFigure r = largest_rms(*s, observable(s, "R1.i"));
  CHECK_REL(r.value, 10.0 / std::sqrt(2.0), 1e-9);
  CHECK_FALSE(r.over_window);
  CHECK_REL(r.span, 20e-3, 1e-15);
}

TEST_CASE("a capacitor's ripple current and dv/dt in an RC divider follow the phasor solution", "[stress]") {
  // source: phasor analysis of a series RC (textbook): V_C = V/(1 + jωRC), I = jωC·V_C; the
  // circuit starts in its steady state (no switch), so every period has rms |I|/√2 and the
  // largest dv/dt is ω·|V_C|.
  auto s = solve_text("supply: voltage-source a -> gnd, cosine 100 V 50 Hz\nR1: resistor a -> b, 10 ohm\n"
                      "C1: capacitor b -> gnd, 100 uF\nwindow 0 .. 60 ms\n");
  const double omega = 2.0 * kPi * 50.0;
  const std::complex<double> vc = 100.0 / std::complex<double>(1.0, omega * 10.0 * 100e-6);
  const std::complex<double> i = std::complex<double>(0.0, omega * 100e-6) * vc;
  CHECK_REL(largest_rms(*s, observable(s, "C1.i")).value, std::abs(i) / std::sqrt(2.0), 1e-9);
  CHECK_REL(largest_rate(*s, observable(s, "C1.v")).value, omega * std::abs(vc), 1e-9);
}

TEST_CASE("without a sinusoid the rms is taken over the window: an RC pulse", "[stress]") {
  // source: closed-form integral, ∫_0^W (V/R)²·e^{−2t/RC} dt = (V/R)²·(RC/2)·(1 − e^{−2W/RC}).
  auto s = solve_text(kRcCharge);
  const double i0 = 10.0 / 1e3, rc = 1e-3, w = 5e-3;
  const double i2t = i0 * i0 * rc / 2.0 * (1.0 - std::exp(-2.0 * w / rc));
  const RmsFigure r = largest_rms(*s, observable(s, "R1.i"));
  CHECK(r.over_window);
  CHECK_REL(r.value, std::sqrt(i2t / w), 1e-12);
  CHECK(r.from == 0.0);
  CHECK_REL(r.span, w, 1e-15);
}

TEST_CASE("the largest rms over a period matches a brute-force search with numerical integrals", "[stress]") {
  // An inductor switched onto a sine at its zero (the largest DC offset), closed at 10 ms so
  // that the rms figure is a maximum inside the window rather than at its start. The check:
  // every start on an 800-point grid, each integral by Simpson's rule on 4000 intervals
  // (common practice, no source); the exact figure is at least the best grid value and within
  // the grid's resolution of it.
  auto s = solve_text(
      "supply: voltage-source s -> gnd, sine 325 V 50 Hz\nK1: switch s -> a, closes at 10 ms\n"
      "R1: resistor a -> b, 1 ohm\nL1: inductor b -> gnd, 31.83 mH, initial 0 A\nwindow 0 .. 100 ms\n");
  const Observable o = observable(s, "L1.i");
  const RmsFigure r = largest_rms(*s, o);
  const auto [brute, brute_at] = brute_force_rms(s, o, 20e-3, 800);
  CHECK(r.value >= brute * (1.0 - 1e-9));
  CHECK_REL(r.value, brute, 1e-4);
  // The maximum lies between the events' kinks (K1 closes at 10 ms), where only a root of the
  // slope finds it: within two grid steps (0.1 ms) of the grid's best start.
  CHECK(std::fabs(r.from - brute_at) <= 2 * 80e-3 / 800);
  CHECK(r.from != 10e-3);
}

TEST_CASE("I²t of a half-sine pulse follows the surge convention I²·t/2", "[stress]") {
  // source: rectifier datasheets rate surge I²t as I_FSM²·t/2 for a half-sine of duration t
  // (from memory: ∫_0^t (I·sin(πs/t))² ds = I²·t/2).
  auto s = solve_text("supply: voltage-source a -> gnd, sine 100 V 50 Hz\nK1: switch a -> b, closes at 0 s, opens at 10 ms\n"
                      "fuse: resistor b -> gnd, 2 ohm\nwindow 0 .. 30 ms\n");
  CHECK_REL(element_i2t(*s, *s.circuit->find_element("fuse")), 50.0 * 50.0 * 10e-3 / 2.0, 1e-12);
}

TEST_CASE("a derivative that jumps at an event: the value just before it is reported as such", "[stress]") {
  // |di/dt| of A·cos(ωt)/R is (A·ω/R)·|sin ωt|, rising until K1 opens at 4 ms; afterwards the
  // current is 0. The largest figure is the left limit at 4 ms (exact).
  auto s = solve_text("supply: voltage-source a -> gnd, cosine 100 V 50 Hz\nK1: switch a -> b, opens at 4 ms\n"
                      "R1: resistor b -> gnd, 10 ohm\nwindow 0 .. 20 ms\n");
  const double omega = 2.0 * kPi * 50.0;
  const RateFigure r = largest_rate(*s, observable(s, "R1.i"));
  CHECK_REL(r.value, 10.0 * omega * std::sin(omega * 4e-3), 1e-12);
  CHECK(r.time == 4e-3);
  CHECK(r.before_event);
}

TEST_CASE("the largest value of one sign: forward is the largest +y, reverse the largest -y", "[stress]") {
  // A diode's forward current is +i along its arrow and its reverse voltage −v; the sign
  // handling is checked on a resistor's voltage 1 V + 2 V·cos ωt: largest +v 3 V at 0, largest
  // −v 1 V at 10 ms (exact). Diodes themselves are not solved by this build.
  auto s = solve_text("V1: voltage-source a -> gnd, dc 1 V + cosine 2 V 50 Hz\nR1: resistor a -> gnd, 1 kohm\n"
                      "window 0 .. 20 ms\n");
  const Peak forward = largest_signed(*s, observable(s, "R1.v"), +1.0);
  const Peak reverse = largest_signed(*s, observable(s, "R1.v"), -1.0);
  CHECK_REL(forward.value, 3.0, 1e-12);
  CHECK(forward.time == Approx(0.0).margin(1e-12));
  CHECK_REL(reverse.value, 1.0, 1e-12);
  CHECK(reverse.time == Approx(10e-3).epsilon(1e-9));
  // A voltage that is never negative has no reverse stress.
  auto positive = solve_text("V1: voltage-source a -> gnd, dc 5 V + cosine 2 V 50 Hz\nR1: resistor a -> gnd, 1 kohm\n"
                             "window 0 .. 20 ms\n");
  CHECK(largest_signed(*positive, observable(positive, "R1.v"), -1.0).value == 0.0);
}

TEST_CASE("time below a level of an RC discharge is τ·ln(V0/level)", "[stress]") {
  // source: textbook RC discharge, v = V0·e^{−t/RC}: below V1 from RC·ln(V0/V1) on.
  auto s = solve_text(kRcDischarge);
  const Observable v = observable(s, "C1.v");
  const TimeBelow t = time_below(*s, v, 60.0);
  CHECK(t.stays_below);
  CHECK(t.from == 0.0);  // the last event: K1 closes at 0 s
  CHECK_REL(t.time, 1e-3 * std::log(100.0 / 60.0), 1e-10);
  // Measured from a later start.
  const TimeBelow later = time_below(*s, v, 60.0, 0.2e-3);
  CHECK_REL(later.time, 1e-3 * std::log(100.0 / 60.0) - 0.2e-3, 1e-10);
  // Below throughout: 0 s.
  CHECK(time_below(*s, v, 200.0).time == 0.0);
  // Not below by the window's end (100 V·e^{−5} = 0.67 V).
  CHECK_FALSE(time_below(*s, v, 0.1).stays_below);
}

TEST_CASE("time below counts the instant an event drops the value below the level", "[stress]") {
  // The discharge current 0.1 A·e^{−t/τ} is 81.9 mA when K1 opens at 0.2 ms and 0 after: from
  // 0 s, below 50 mA from the opening on (the left limit at the event is above the level).
  auto s = solve_text("C1: capacitor a -> gnd, 1 uF, initial 100 V\nK1: switch a -> b, closes at 0 s, opens at 0.2 ms\n"
                      "R1: resistor b -> gnd, 1 kohm\nwindow 0 .. 5 ms\n");
  const TimeBelow t = time_below(*s, observable(s, "R1.i"), 0.05, 0.0);
  CHECK(t.stays_below);
  CHECK(t.time == 0.2e-3);
  // From the last event (the opening) on, it is below at once.
  CHECK(time_below(*s, observable(s, "R1.i"), 0.05).time == 0.0);
  CHECK(last_event_time(*s) == 0.2e-3);
}

TEST_CASE("time below of a freewheeling inductor current matches the last sample at or above the level", "[stress]") {
  // An inductor's AC current after its supply is disconnected, in a freewheel resistor: the
  // check is the definition itself, the last sample at or above the level on a fine grid
  // (common practice, no source): the exact time is within one grid step after it.
  auto s = solve_text(
      "supply: voltage-source s -> gnd, cosine 100 V 50 Hz\nK1: switch s -> a, opens at 5 ms\n"
      "R1: resistor a -> gnd, 5 ohm\nL1: inductor a -> gnd, 100 mH\nwindow 0 .. 200 ms\n");
  const Observable i = observable(s, "L1.i");
  const TimeBelow t = time_below(*s, i, 0.5, 0.0);
  REQUIRE(t.stays_below);
  double last = 0.0;
  const int n = 200000;
  for (int k = 0; k <= n; ++k) {
    const double tk = 0.2 * k / n;
    if (std::fabs(s->value(i, tk)) >= 0.5) last = tk;
  }
  CHECK(t.time >= last);
  CHECK(t.time <= last + 0.2 / n);
}
