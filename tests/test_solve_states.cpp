// Tests of the engine with several storage elements (the modal closed form) against answers from
// outside the project: textbook second-order responses, IEEE C37.012's inrush formulas, energy
// balance.
#include <cmath>
#include <memory>
#include <numbers>
#include <string>

#include <catch2/catch.hpp>

#include "netfold/parse.hpp"
#include "netfold/solve.hpp"

using namespace netfold;

namespace {
constexpr double kPi = std::numbers::pi;

struct Solved {
  std::unique_ptr<Circuit> circuit;
  std::unique_ptr<Solution> solution;
  const Solution* operator->() const { return solution.get(); }
};

Solved solve_text(const std::string& text) {
  Solved s;
  s.circuit = std::make_unique<Circuit>(parse_netlist(text, "test.nf"));
  s.solution = std::make_unique<Solution>(solve(*s.circuit));
  return s;
}

Observable observable(const Solved& s, const std::string& text) {
  return parse_observable_argument(*s.circuit, text, "test");
}

Figures figures(const Solved& s, const std::string& text) { return compute_figures(*s.solution, observable(s, text)); }

// The slowest-decaying oscillatory mode of segment 1 (the `frequency`/`damping` claims' mode).
const NaturalMode& oscillatory_mode(const Solved& s) {
  for (const NaturalMode& m : s->segments().front().modes)
    if (m.oscillatory) return m;
  FAIL("segment 1 has no oscillatory mode");
  throw;  // unreachable: FAIL throws
}

/// |actual − expected| ≤ rel·|expected|, printing both.
#define CHECK_REL(actual, expected, rel)                                   \
  do {                                                                     \
    const double a_ = (actual), e_ = (expected);                           \
    INFO("actual " << a_ << ", expected " << e_ << ", rel tol " << (rel)); \
    CHECK(std::fabs(a_ - e_) <= (rel) * std::fabs(e_));                    \
  } while (0)
}  // namespace

TEST_CASE("a critically damped series RLC step peaks at 2V/(eR) at t = 2L/R", "[solve]") {
  // Source: series RLC step response at critical damping (textbook, from memory):
  // i(t) = (V/L)·t·e^{−t·R/2L}, largest at t = 2L/R with 2V/(e·R). R = 2√(L/C) = 200 ohm.
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 200 ohm\nL1: inductor c -> d, 1 mH\nC1: capacitor d -> gnd, 100 nF\n"
      "window 0 .. 200 us\n");
  const double V = 10.0, R = 200.0, L = 1e-3;
  Figures f = figures(s, "L1.i");
  CHECK_REL(f.peak, 2 * V / (std::numbers::e * R), 1e-9);
  // The time of a flat maximum is determined only to about √ε of the value.
  CHECK_REL(f.t_peak, 2 * L / R, 1e-6);
}

TEST_CASE("an underdamped series RLC step overshoots by exp(-zeta pi / sqrt(1 - zeta^2))", "[solve]") {
  // Source: second-order step response (textbook, from memory): ζ = (R/2)·√(C/L),
  // ω_d = ω_n·√(1 − ζ²), overshoot of the capacitor voltage above V is V·e^{−ζπ/√(1−ζ²)}.
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 10 ohm\nL1: inductor c -> d, 1 mH\nC1: capacitor d -> gnd, 1 uF\n"
      "window 0 .. 1 ms\n");
  const double V = 10.0, R = 10.0, L = 1e-3, C = 1e-6;
  const double zeta = R / 2 * std::sqrt(C / L), wn = 1 / std::sqrt(L * C);
  const double wd = wn * std::sqrt(1 - zeta * zeta);
  Figures f = figures(s, "C1.v");
  CHECK_REL(f.max - V, V * std::exp(-zeta * kPi / std::sqrt(1 - zeta * zeta)), 1e-9);
  // The first maximum is at half the damped period (same source).
  CHECK_REL(f.t_max, kPi / wd, 1e-6);
  const NaturalMode& m = oscillatory_mode(s);
  CHECK_REL(m.frequency, wd / (2 * kPi), 1e-12);
  CHECK_REL(m.damping, zeta, 1e-12);
  CHECK_REL(m.natural_frequency, wn / (2 * kPi), 1e-12);
}

TEST_CASE("a lossless LC switched onto DC charges its capacitor to twice the source", "[solve]") {
  // Common practice, no source: v_C = V·(1 − cos ω₀t) peaks at 2V at t = π/ω₀ ≈ 0.99 ms.
  // 1 µΩ keeps the loop nearly lossless: the first peak is lower by a share of about α·π/ω₀
  // (α = R/2L = 5e-5 /s), 5e-8, well inside the check.
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 48 V\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 1 uohm\nL1: inductor c -> d, 10 mH\nC1: capacitor d -> gnd, 10 uF\n"
      "window 0 .. 2 ms\n");
  CHECK_REL(figures(s, "C1.v").peak, 96.0, 1e-6);
}

TEST_CASE("a capacitor bank energised at the voltage crest draws the IEEE C37.012 inrush", "[solve]") {
  // Source: IEEE C37.012 (isolated capacitor bank energisation): î ≈ √2·√(I_sc·I₁) and
  // f ≈ f_s·√(I_sc/I₁), with I_sc = V̂/(√2·ω·L_s) and I₁ = ω·C·V̂/√2 (rms). The formulas
  // neglect the circuit's damping and the bank's steady-state (50 Hz) current; for
  // I_sc/I₁ ≥ 100 the exact first peak lies within about 0.2 % of them.
  const double Vhat = 400.0 * std::sqrt(2.0 / 3.0), fs = 50.0, w = 2 * kPi * fs;
  const double Ls = 100e-6, C = 250e-6;
  auto s = solve_text(
      "supply: voltage-source l -> gnd, cosine 326.59863237109041 V 50 Hz\n"
      "Ls: inductor l -> a, 100 uH, initial 0 A\nK1: switch a -> b, closes at 0 s\n"
      "Rs: resistor b -> c, 10 nohm\nbank: capacitor c -> gnd, 250 uF, initial 0 V\n"
      "window 0 .. 500 us\n");
  const double Isc = Vhat / (std::sqrt(2.0) * w * Ls), I1 = w * C * Vhat / std::sqrt(2.0);
  REQUIRE(Isc / I1 >= 100.0);
  const double ieee_peak = std::sqrt(2.0) * std::sqrt(Isc * I1);
  const double ieee_frequency = fs * std::sqrt(Isc / I1);
  Figures f = figures(s, "bank.i");
  CHECK_REL(f.peak, ieee_peak, 0.002);
  CHECK_REL(oscillatory_mode(s).frequency, ieee_frequency, 1e-6);

  // The exact lossless answer, derived by hand: L·di/dt + v = V̂·cos ωt, C·dv/dt = i, from rest.
  // With ω₀ = 1/√(LC) and k = ω₀²/(ω₀² − ω²): v = V̂·k·(cos ωt − cos ω₀t), so
  // i = C·V̂·k·(ω₀·sin ω₀t − ω·sin ωt) = (V̂/Z₀)·k·(sin ω₀t − (ω/ω₀)·sin ωt), Z₀ = √(L/C): the
  // IEEE figure V̂/Z₀ plus the small steady-state term. Its first maximum, where
  // ω₀·cos ω₀t = (ω²/ω₀)·cos ωt, found by Newton's method from ω₀t = π/2.
  const double w0 = 1 / std::sqrt(Ls * C), k = w0 * w0 / (w0 * w0 - w * w), Z0 = std::sqrt(Ls / C);
  auto current = [&](double t) { return Vhat / Z0 * k * (std::sin(w0 * t) - w / w0 * std::sin(w * t)); };
  double t = kPi / (2 * w0);
  for (int it = 0; it < 50; ++it) {
    const double g = w0 * std::cos(w0 * t) - w * w / w0 * std::cos(w * t);
    const double dg = -w0 * w0 * std::sin(w0 * t) + w * w * w / w0 * std::sin(w * t);
    t -= g / dg;
  }
  CHECK_REL(f.peak, current(t), 1e-6);
  CHECK_REL(f.t_peak, t, 1e-5);
}

TEST_CASE("peaks and energies of a two-capacitor RC circuit agree along two paths", "[solve]") {
  // Energy balance (common practice, no source): with no source, what the resistors absorb is
  // what the capacitors lose, ½C₁(v₁(0)² − v₁(T)²) + ½C₂(v₂(0)² − v₂(T)²).
  auto s = solve_text(
      "C1: capacitor a -> gnd, 10 uF, initial 10 V\nR1: resistor a -> b, 100 ohm\n"
      "C2: capacitor b -> gnd, 22 uF, initial 2 V\nR2: resistor b -> gnd, 1 kohm\n"
      "watch C1.v, C2.v, R1.i\nwindow 0 .. 20 ms\n");
  for (const char* name : {"C1.v", "C2.v", "R1.i", "R2.p"}) {
    INFO(name);
    Observable obs = observable(s, name);
    Figures f = compute_figures(*s.solution, obs);
    Peak p = find_peak(*s.solution, obs);
    CHECK_REL(p.value, f.peak, 1e-12);
    CHECK(std::fabs(p.time - f.t_peak) <= 1e-9 * 20e-3);
  }
  // C2 charges from C1 at first, so its peak is inside the window, not at an end.
  CHECK(figures(s, "C2.v").t_peak > 0.0);

  const double T = 20e-3;
  const double v1 = s->value(observable(s, "C1.v"), T), v2 = s->value(observable(s, "C2.v"), T);
  const double lost = 0.5 * 10e-6 * (100.0 - v1 * v1) + 0.5 * 22e-6 * (4.0 - v2 * v2);
  const double absorbed = element_energy(*s.solution, *s.circuit->find_element("R1")) +
                          element_energy(*s.solution, *s.circuit->find_element("R2"));
  CHECK_REL(absorbed, lost, 1e-9);
  // And each capacitor's own energy figure is its loss, with the sign of absorbed energy.
  CHECK_REL(element_energy(*s.solution, *s.circuit->find_element("C1")), -0.5 * 10e-6 * (100.0 - v1 * v1), 1e-9);
}

namespace {

// The last t in [0, t_end] where |e(t)| ≥ level, from a dense scan backwards and bisection: an
// evaluation of the textbook formula independent of the engine's terms and search.
template <class F>
double last_reach(F e, double level, double t_end, double step) {
  double t = t_end;
  while (t > 0.0 && std::fabs(e(t)) < level) t -= step;
  if (t <= 0.0) return 0.0;
  double a = t, b = t + step;
  for (int i = 0; i < 200; ++i) {
    const double m = 0.5 * (a + b);
    (std::fabs(e(m)) >= level ? a : b) = m;
  }
  return 0.5 * (a + b);
}

}  // namespace

TEST_CASE("an underdamped series RLC step settles within its envelope's 1 % time", "[solve]") {
  // Source: second-order step response (textbook, from memory): with α = R/2L, ω_d = ω_n·√(1 − ζ²),
  // v_C(t) − V = −V·e^{−αt}·(cos ω_d t + (α/ω_d)·sin ω_d t), whose size is at most the envelope
  // V·e^{−αt}/√(1 − ζ²), touched once per half period. The 1 % band (of |y_ss| = V) is left for
  // good at most at t_env = ln(100/√(1 − ζ²))/α and at least half a damped period before it.
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 20 ohm\nL1: inductor c -> d, 1 mH\nC1: capacitor d -> gnd, 100 nF\n");
  const double V = 10.0, R = 20.0, L = 1e-3, C = 100e-9;
  const double alpha = R / (2 * L), wn = 1 / std::sqrt(L * C), zeta = alpha / wn;
  const double wd = wn * std::sqrt(1 - zeta * zeta);
  const double t_env = std::log(100.0 / std::sqrt(1 - zeta * zeta)) / alpha;
  Figures f = figures(s, "C1.v");
  REQUIRE(f.settling_time);
  CHECK(*f.settling_time <= t_env);
  CHECK(*f.settling_time >= t_env - kPi / wd);
  auto e = [&](double t) { return V * std::exp(-alpha * t) * (std::cos(wd * t) + alpha / wd * std::sin(wd * t)); };
  CHECK_REL(*f.settling_time, last_reach(e, 0.01 * V, t_env, 1e-3 / wd), 1e-9);
}

TEST_CASE("a critically damped series RLC step settles where (1 + x)e^-x falls to 1 %", "[solve]") {
  // Source: series RLC step at critical damping (textbook, from memory): α = R/2L = ω_n,
  // v_C(t) = V·(1 − (1 + αt)·e^{−αt}), i(t) = (V/L)·t·e^{−αt}. v_C settles where
  // (1 + αt)·e^{−αt} = 0.01 (αt ≈ 6.64). The current's steady state is 0: its band is 1 % of its
  // peak in the window, 2V/(eR) (spec: "of the window's peak |y| where y_ss is zero").
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 200 ohm\nL1: inductor c -> d, 1 mH\nC1: capacitor d -> gnd, 100 nF\n");
  const double V = 10.0, R = 200.0, L = 1e-3, alpha = R / (2 * L);
  auto ev = [&](double t) { return V * (1 + alpha * t) * std::exp(-alpha * t); };
  Figures fv = figures(s, "C1.v");
  REQUIRE(fv.settling_time);
  CHECK_REL(*fv.settling_time, last_reach(ev, 0.01 * V, 20 / alpha, 1e-3 / alpha), 1e-9);
  CHECK_REL(alpha * *fv.settling_time, 6.638, 1e-3);
  auto ei = [&](double t) { return V / L * t * std::exp(-alpha * t); };
  Figures fi = figures(s, "L1.i");
  REQUIRE(fi.settling_time);
  CHECK_REL(*fi.settling_time, last_reach(ei, 0.01 * 2 * V / (std::numbers::e * R), 20 / alpha, 1e-3 / alpha), 1e-9);
}

TEST_CASE("a lossless LC's ringing is part of its steady state, so it settles at once", "[solve]") {
  // Common practice, no source: v_C = V·(1 − cos ω₀t), ω₀ = 1/√(LC). Without loss the ringing
  // never decays: it belongs to the steady state y_ss (which the report prints), and
  // |y − y_ss| = 0 from the event on.
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 48 V\nK1: switch a -> b, closes at 0 s\n"
      "L1: inductor b -> c, 10 mH\nC1: capacitor c -> gnd, 10 uF\nwindow 0 .. 2 ms\n");
  Figures f = figures(s, "C1.v");
  REQUIRE(f.steady);
  CHECK_REL(f.steady->dc, 48.0, 1e-12);
  REQUIRE(f.steady->phasors.size() == 1);
  CHECK_REL(f.steady->phasors.front().frequency, 1 / (2 * kPi * std::sqrt(10e-3 * 10e-6)), 1e-12);
  CHECK_REL(std::abs(f.steady->phasors.front().value), 48.0, 1e-12);
  REQUIRE(f.settling_time);
  CHECK(*f.settling_time == 0.0);
}
