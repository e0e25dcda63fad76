// Tests of the worst-case search over the closing angle, the residual state and the closing time.
#include <algorithm>
#include <cmath>
#include <numbers>
#include <sstream>

#include <fmt/format.h>

#include "engine_helpers.hpp"
#include "netfold/worst.hpp"

using namespace netfold;
using namespace netfold::testing;

namespace {
constexpr double kPi = std::numbers::pi;

// A 230 V, 50 Hz feeder of X/R = ratio (R = 1 ohm) closed at t = 0 onto a dead short.
std::string feeder(double x_over_r) {
  double l = x_over_r * 1.0 / (2 * kPi * 50.0);
  return fmt::format(
      "supply: voltage-source s -> gnd, cosine 230 Vrms 50 Hz\nK1: switch s -> a, closes at 0 s\n"
      "R1: resistor a -> b, 1 ohm\nL1: inductor b -> gnd, {} H\nwatch L1.i\n"
      "window 0 .. {} s\nsweep supply.phase -180 deg .. 180 deg\n",
      l, std::max(0.1, 6.0 * l));
}

struct Solved2 {
  std::unique_ptr<Circuit> circuit;
  WorstReport report;
};

Solved2 worst_of(const std::string& text) {
  Solved2 s;
  s.circuit = std::make_unique<Circuit>(parse_netlist(text, "worst.nf"));
  s.report = find_worst_case(*s.circuit, s.circuit->sweeps());
  return s;
}

// Brute force, independent of the search: a 0.1° phase grid; for each phase, the closed form
// sampled densely in time (400 samples a period and 400 per segment's time constant near its
// start), each discrete maximum polished by a parabola through its neighbours; then the same
// parabolic polish across the phase grid.
double brute_force_worst(const Circuit& c, const Sweep& sweep, const Observable& obs, double dt) {
  auto cache = std::make_shared<NetworkCache>(c);
  Solution nominal = solve(c, {}, cache);
  auto parabola_peak = [](double y0, double y1, double y2) {
    double denom = y0 - 2 * y1 + y2;
    if (denom >= 0) return y1;
    double d = 0.5 * (y0 - y2) / denom;
    return y1 - 0.25 * (y0 - y2) * d;
  };
  std::vector<double> peaks;
  for (double deg = sweep.from * 180 / kPi; deg <= sweep.to * 180 / kPi + 1e-9; deg += 0.1) {
    SolveOptions o;
    o.window = nominal.window();
    o.scenario = scenario_at(sweep, deg * kPi / 180);
    Solution s = solve(c, o, cache);
    double best = 0.0;
    for (const auto& p : s.pieces(obs)) {
      std::vector<double> ts;
      double a = std::max(p.t0(), s.window().from), b = std::min(p.t1(), s.window().to);
      for (double t = a; t <= b; t += dt) ts.push_back(t);
      ts.push_back(b);
      std::vector<double> ys;
      for (double t : ts) ys.push_back(std::fabs(p.value(t)));
      for (std::size_t k = 0; k < ys.size(); ++k) {
        double y = ys[k];
        if (k > 0 && k + 1 < ys.size() && ys[k] >= ys[k - 1] && ys[k] >= ys[k + 1])
          y = parabola_peak(ys[k - 1], ys[k], ys[k + 1]);
        best = std::max(best, y);
      }
    }
    peaks.push_back(best);
  }
  double worst = 0.0;
  for (std::size_t k = 0; k < peaks.size(); ++k) {
    double y = peaks[k];
    if (k > 0 && k + 1 < peaks.size() && peaks[k] >= peaks[k - 1] && peaks[k] >= peaks[k + 1])
      y = parabola_peak(peaks[k - 1], peaks[k], peaks[k + 1]);
    worst = std::max(worst, y);
  }
  return worst;
}

}  // namespace

TEST_CASE("the worst first peak of a feeder closed onto a short matches IEC 60909-0's peak factor", "[worst]") {
  // Source: IEC 60909-0 (short-circuit currents in three-phase a.c. systems), peak factor
  // κ = 1.02 + 0.98·e^{−3R/X}; the worst-case first peak is κ·√2·I_k″ within the formula's
  // accuracy, about 2 %.
  for (double ratio : {2.0, 5.0, 10.0, 20.0}) {
    auto s = worst_of(feeder(ratio));
    REQUIRE(s.report.sweeps.size() == 1);
    const SweepExtreme& ex = s.report.sweeps[0].observables[0];
    double i_peak_steady = 230.0 * std::sqrt(2.0) / std::hypot(1.0, ratio);
    double kappa = 1.02 + 0.98 * std::exp(-3.0 / ratio);
    INFO("X/R = " << ratio << ": worst " << ex.worst << " A, κ·√2·I = " << kappa * i_peak_steady << " A");
    CHECK_REL(ex.worst, kappa * i_peak_steady, 0.02);
    REQUIRE(ex.steady_peak);
    CHECK_REL(*ex.steady_peak, i_peak_steady, 1e-9);
    // Best case: closing at the current's natural zero, no offset at all.
    CHECK_REL(ex.best, i_peak_steady, 1e-6);
  }
}

TEST_CASE("as X/R grows the worst-case current approaches twice the steady peak", "[worst]") {
  // Common practice, no source: a fully offset current reaches nearly 2× its steady peak.
  auto s = worst_of(feeder(1000.0));
  const SweepExtreme& ex = s.report.sweeps[0].observables[0];
  double ratio = ex.worst / *ex.steady_peak;
  INFO("worst/steady = " << ratio);
  CHECK(ratio > 1.99);
  CHECK(ratio < 2.0);
}

TEST_CASE("the worst over phase of the 10 ohm, 1000 uF mains circuit covers the given-phase figures", "[worst]") {
  // Common practice, no source: 63 V at phase −90° from 0 V, 84 V at −90° from 43 V.
  for (auto [initial, at_minus_90] : {std::pair{0.0, 63.0}, std::pair{43.0, 84.0}}) {
    auto s = worst_of(fmt::format(
        "supply: voltage-source l -> gnd, cosine 169.7 V 60 Hz\nK1: switch l -> a, closes at 0 s\n"
        "R1: resistor a -> b, 10 ohm\nC1: capacitor b -> gnd, 1000 uF, initial {} V\nwatch C1.v\n"
        "window 0 .. 100 ms\nsweep supply.phase -180 deg .. 180 deg\n",
        initial));
    const SweepExtreme& ex = s.report.sweeps[0].observables[0];
    INFO("initial " << initial << " V: worst " << ex.worst << " V at " << ex.worst_at * 180 / kPi << "°");
    CHECK(ex.worst >= at_minus_90 * 0.99);
    CHECK(ex.worst <= 2.0 * 43.5 + initial);  // never more than the steady peak plus the full offset
  }
}

TEST_CASE("the worst case is never exceeded by a brute-force search and is within 1e-6 of it", "[worst]") {
  std::vector<std::string> circuits{
      feeder(5.0),
      "supply: voltage-source l -> gnd, cosine 169.7 V 60 Hz\nK1: switch l -> a, closes at 0 s\n"
      "R1: resistor a -> b, 10 ohm\nC1: capacitor b -> gnd, 1000 uF, initial 43 V\nwatch C1.v, C1.i\n"
      "window 0 .. 60 ms\nsweep supply.phase -180 deg .. 180 deg\n",
      "supply: voltage-source l -> n, cosine 24 Vrms 50 Hz\nK1: switch l -> a, closes at 0 s, opens at 35 ms\n"
      "coil_r: resistor a -> b, 18 ohm\ncoil_l: inductor b -> n, 120 mH\nfree_r: resistor a -> n, 470 ohm\n"
      "ground n\nwatch coil_l.i, @a\nwindow 0 .. 60 ms\nsweep supply.phase -180 deg .. 180 deg\n",
  };
  for (const auto& text : circuits) {
    auto s = worst_of(text);
    const Circuit& c = *s.circuit;
    for (std::size_t k = 0; k < c.watches().size(); ++k) {
      const SweepExtreme& ex = s.report.sweeps[0].observables[k];
      double brute = brute_force_worst(c, c.sweeps()[0], c.watches()[k], 20e-6);
      INFO(c.watches()[k].text << ": search " << ex.worst << ", brute force " << brute);
      CHECK(ex.worst >= brute * (1.0 - 1e-9));
      CHECK(ex.worst - brute <= 1e-6 * ex.worst);
    }
  }
}

TEST_CASE("a sweep of the residual state finds the worst at the charge that adds to the offset", "[worst]") {
  // The response is affine in the initial state, so its peak is convex in it: the worst lies at
  // an end of the range (a property of affine functions, no source needed).
  auto s = worst_of(
      "supply: voltage-source l -> gnd, cosine 169.7 V 60 Hz phase -90 deg\nK1: switch l -> a, closes at 0 s\n"
      "R1: resistor a -> b, 10 ohm\nC1: capacitor b -> gnd, 1000 uF\nwatch C1.v\nwindow 0 .. 100 ms\n"
      "sweep C1.initial -50 V .. 50 V\n");
  const SweepExtreme& ex = s.report.sweeps[0].observables[0];
  CHECK((ex.worst_at == -50.0 || ex.worst_at == 50.0));
  SolveOptions o;
  o.scenario.residual_states.push_back({*s.circuit->find_element("C1"), ex.worst_at});
  Solution at = solve(*s.circuit, o);
  CHECK_REL(find_peak(at, s.circuit->watches()[0]).value, ex.worst, 1e-12);
}

TEST_CASE("a sweep of the closing time finds the worst closing near a voltage zero of the supply", "[worst]") {
  // An RL circuit of X/R = 10 gets its largest offset when closed at a voltage zero (common
  // practice, no source); with a cosine supply those are at 5 ms and 15 ms in a 50 Hz period.
  auto s = worst_of(
      "supply: voltage-source s -> gnd, cosine 230 Vrms 50 Hz\nK1: switch s -> a, closes at 1 ms\n"
      "R1: resistor a -> b, 1 ohm\nL1: inductor b -> gnd, 31.83 mH\nwatch L1.i\nwindow 0 .. 150 ms\n"
      "sweep K1.closes 1 ms .. 19 ms\n");
  const SweepExtreme& ex = s.report.sweeps[0].observables[0];
  double to_zero = std::min(std::fabs(ex.worst_at - 5e-3), std::fabs(ex.worst_at - 15e-3));
  INFO("worst closing at " << ex.worst_at);
  CHECK(to_zero < 1.0e-3);  // close to a voltage zero (the exact optimum shifts by the X/R angle)
}

TEST_CASE("a closing-time sweep that would pass the switch's next event is refused", "[worst]") {
  Circuit c = parse_netlist(
      "V1: voltage-source a -> gnd, dc 5 V\nK1: switch a -> b, closes at 1 ms, opens at 5 ms\n"
      "R1: resistor b -> c, 1 kohm\nC1: capacitor c -> gnd, 1 uF\nsweep K1.closes 0 ms .. 8 ms\n",
      "sweep.nf");
  try {
    find_worst_case(c, c.sweeps());
    FAIL("expected an error");
  } catch (const InputError& e) {
    CHECK(e.diagnostics()[0].loc.line == 5);
    CHECK_THAT(e.diagnostics()[0].message, Catch::Contains("must stay after") && Catch::Contains("before 5 ms"));
  }
}

TEST_CASE("ratings are checked against the worst case over the sweeps", "[worst]") {
  // At phase 0 the capacitor stays under 50 V; closing at −90° it reaches about 63 V.
  auto s = worst_of(
      "supply: voltage-source l -> gnd, cosine 169.7 V 60 Hz\nK1: switch l -> a, closes at 0 s\n"
      "R1: resistor a -> b, 10 ohm\nC1: capacitor b -> gnd, 1000 uF, initial 0 V, rated 50 V\nwatch C1.v\n"
      "window 0 .. 100 ms\nsweep supply.phase -180 deg .. 180 deg\n");
  REQUIRE(s.report.ratings.size() == 1);
  const RatingCheck& r = s.report.ratings[0];
  CHECK(r.worst_case);
  CHECK(r.exceeded);
  CHECK(r.actual > 60.0);
  CHECK_REL(r.actual, s.report.sweeps[0].observables[0].worst, 1e-9);
}

namespace {

// Peak |y| of the first watched observable of a circuit given as text, solved at its declared
// values: the reference that the sweep machinery must reproduce without using it.
double declared_peak(const std::string& text) {
  Circuit c = parse_netlist(text, "declared.nf");
  Solution s = solve(c);
  return find_peak(s, c.watches()[0]).value;
}

// The largest of f over a grid of `step` on [from, to], each interior grid maximum polished by
// a parabola through its neighbours.
template <typename F>
double scan_maximum(F&& f, double from, double to, double step) {
  std::vector<double> x, y;
  for (double v = from; v <= to + 1e-9 * step; v += step) {
    x.push_back(v);
    y.push_back(f(v));
  }
  double best = *std::max_element(y.begin(), y.end());
  for (std::size_t k = 1; k + 1 < y.size(); ++k) {
    if (!(y[k] >= y[k - 1] && y[k] >= y[k + 1])) continue;
    double denom = y[k - 1] - 2 * y[k] + y[k + 1];
    if (denom < 0) best = std::max(best, y[k] - 0.125 * (y[k - 1] - y[k + 1]) * (y[k - 1] - y[k + 1]) / denom);
  }
  return best;
}

std::string sine_rl(const std::string& range, double x_over_r) {
  double l = x_over_r / (2 * kPi * 50.0);
  return fmt::format(
      "supply: voltage-source s -> gnd, sine 325 V 50 Hz\nK1: switch s -> a, closes at 0 s\n"
      "R1: resistor a -> b, 1 ohm\nL1: inductor b -> gnd, {} H\nwatch L1.i\nwindow 0 .. {} s\nsweep supply.phase {}\n",
      l, std::max(0.1, 6.0 * l), range);
}

}  // namespace

TEST_CASE("issue 12 item 3: a sine source's phase sweep is read in the sine's own terms", "[worst]") {
  // Spec (v2) "Sweep arguments are in the user's terms": the range 0°..10° of a sine source is
  // the sine's phase, that is cosine phases -90°..-80°. The reference solves circuits written
  // with those cosine phases, one by one, without any sweep.
  const double l = 10.0 / (2 * kPi * 50.0);
  auto s = worst_of(sine_rl("0 deg .. 10 deg", 10.0));
  const SweepExtreme& ex = s.report.sweeps[0].observables[0];
  auto written = [&](double deg) {
    return declared_peak(fmt::format(
        "supply: voltage-source s -> gnd, cosine 325 V 50 Hz phase {} deg\nK1: switch s -> a, closes at 0 s\n"
        "R1: resistor a -> b, 1 ohm\nL1: inductor b -> gnd, {} H\nwatch L1.i\nwindow 0 .. 0.1 s\n",
        deg - 90.0, l));
  };
  double reference = scan_maximum(written, 0.0, 10.0, 0.05);
  INFO("sweep " << ex.worst << " A at " << ex.worst_at * 180 / kPi << "°, written cosines " << reference << " A");
  CHECK(ex.worst >= reference * (1.0 - 1e-9));
  CHECK(ex.worst - reference <= 1e-6 * reference);
  CHECK(ex.worst_at >= 0.0);
  CHECK(ex.worst_at <= 10 * kPi / 180);
  CHECK_REL(written(ex.worst_at * 180 / kPi), ex.worst, 1e-9);
}

TEST_CASE("issue 12 item 3: the worst closing angle of a sine source on an R-L is reported near the sine's zero",
          "[worst]") {
  // Textbook (from memory): for v = V·sin(ωt + α) switched onto R + L at t = 0, the DC offset is
  // largest at α − θ = ±90°, θ = atan(ωL/R); the peak (offset plus the AC part) is largest
  // between that angle and the voltage zero α = 0 (closer to the zero). A report in the cosine
  // reference would put it 90° away.
  for (double ratio : {5.0, 20.0}) {
    auto s = worst_of(sine_rl("-180 deg .. 180 deg", ratio));
    const SweepExtreme& ex = s.report.sweeps[0].observables[0];
    const double theta = std::atan(ratio) * 180 / kPi;
    double at = std::remainder(ex.worst_at * 180 / kPi, 180.0);  // the two half-waves are alike
    INFO("X/R = " << ratio << ": worst at " << ex.worst_at * 180 / kPi << "°, θ − 90° = " << theta - 90.0 << "°");
    CHECK(at >= theta - 90.0 - 0.5);
    CHECK(at <= 0.5);
    // Its size: IEC 60909-0's peak factor, as for the cosine feeder above (about 2 %).
    double i_steady = 325.0 / std::hypot(1.0, ratio);
    CHECK_REL(ex.worst, (1.02 + 0.98 * std::exp(-3.0 / ratio)) * i_steady, 0.02);
  }
}

TEST_CASE("issue 12 item 4: a phase sweep of a source with harmonics shifts it in time, keeping its shape",
          "[worst]") {
  // Spec (v2): harmonic k moves by k·Δ; the DC part does not move. The reference writes each
  // shifted waveform out: phase x on the 50 Hz term, 3x + 40° on the 150 Hz term, 5x on 250 Hz.
  const std::string rest =
      "K1: switch s -> a, closes at 0 s\nR1: resistor a -> b, 2 ohm\nL1: inductor b -> gnd, 20 mH\nwatch L1.i\n"
      "window 0 .. 60 ms\n";
  auto s = worst_of("supply: voltage-source s -> gnd, dc 20 V + cosine 300 V 50 Hz + cosine 60 V 150 Hz phase 40 deg"
                    " + cosine 30 V 250 Hz\n" +
                    rest + "sweep supply.phase -180 deg .. 180 deg step 2 deg\n");
  const SweepExtreme& ex = s.report.sweeps[0].observables[0];
  auto written = [&](double deg) {
    return declared_peak(fmt::format("supply: voltage-source s -> gnd, dc 20 V + cosine 300 V 50 Hz phase {} deg + "
                                     "cosine 60 V 150 Hz phase {} deg + cosine 30 V 250 Hz phase {} deg\n",
                                     deg, 40.0 + 3 * deg, 5 * deg) +
                         rest);
  };
  double reference = scan_maximum(written, -180.0, 180.0, 0.25);
  INFO("sweep " << ex.worst << " A at " << ex.worst_at * 180 / kPi << "°, written waveforms " << reference << " A");
  CHECK(ex.worst >= reference * (1.0 - 1e-9));
  CHECK(ex.worst - reference <= 1e-6 * reference);
  CHECK_REL(written(ex.worst_at * 180 / kPi), ex.worst, 1e-9);
}

TEST_CASE("issue 12 messages: residual-state sweep arguments are printed with their unit", "[worst]") {
  auto s = worst_of(
      "V1: voltage-source a -> gnd, dc 24 V\nK1: switch a -> b, closes at 0 s\nR1: resistor b -> c, 12 ohm\n"
      "L1: inductor c -> gnd, 60 mH\nwatch L1.i\nwindow 0 .. 50 ms\nsweep L1.initial -500 mA .. 2 A step 0.25 A\n");
  std::ostringstream text;
  write_worst_text(text, s.report, solve(*s.circuit));
  INFO(text.str());
  CHECK_THAT(text.str(), Catch::Contains("from -500 mA to 2 A"));
  CHECK(sweep_argument_text(*s.circuit, s.circuit->sweeps()[0], 2.0) == "2 A");
  auto cap = worst_of(
      "V1: voltage-source a -> gnd, dc 24 V\nK1: switch a -> b, closes at 0 s\nR1: resistor b -> c, 12 ohm\n"
      "C1: capacitor c -> gnd, 1 mF\nwatch C1.v\nwindow 0 .. 50 ms\nsweep C1.initial -5 V .. 5 V\n");
  CHECK(sweep_argument_text(*cap.circuit, cap.circuit->sweeps()[0], -5.0) == "-5 V");
}

TEST_CASE("issue 12 messages: an argument at which the circuit cannot be solved is blamed on the sweep's line",
          "[worst]") {
  // The inductor's loop is open until K1 closes: it can start at 0 A, not at the swept -1 A.
  Circuit c = parse_netlist(
      "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 1 ms\nR1: resistor b -> c, 10 ohm\n"
      "L1: inductor c -> gnd, 10 mH\nsweep L1.initial -1 A .. 1 A\n",
      "fault.nf");
  REQUIRE_NOTHROW(solve(c));
  try {
    find_worst_case(c, c.sweeps());
    FAIL("expected an error");
  } catch (const InputError& e) {
    const Diagnostic& d = e.diagnostics()[0];
    CHECK(d.loc.line == 5);
    CHECK_THAT(d.message, Catch::StartsWith("the sweep of L1.initial reaches -1 A, where the circuit cannot be solved: "
                                            "inductor L1 carries -1 A") &&
                              Catch::Contains("(line 4); narrow the range"));
  }
}

TEST_CASE("issue 12 limits: a closing-time sweep past a declared window is refused at its line", "[worst]") {
  // A closing at or after the window's end would leave the switch open in the whole window: it
  // was scored as "never closes" (a smaller peak), hiding the range's true worst.
  const std::string circuit =
      "supply: voltage-source s -> gnd, cosine 325 V 50 Hz\nK1: switch s -> a, closes at 1 ms\n"
      "R1: resistor a -> b, 1 ohm\nL1: inductor b -> gnd, 30 mH\nwatch L1.i\nwindow 0 .. 60 ms\n";
  Circuit past = parse_netlist(circuit + "sweep K1.closes 1 ms .. 80 ms\n", "past.nf");
  try {
    find_worst_case(past, past.sweeps());
    FAIL("expected an error");
  } catch (const InputError& e) {
    CHECK(e.diagnostics()[0].loc.line == 7);
    CHECK_THAT(e.diagnostics()[0].message,
               Catch::Contains("at or past the end of the declared window (0 s .. 60 ms)") &&
                   Catch::Contains("end the range before 60 ms or lengthen the window"));
  }
  Circuit inside = parse_netlist(circuit + "sweep K1.closes 1 ms .. 59 ms\n", "inside.nf");
  CHECK_NOTHROW(find_worst_case(inside, inside.sweeps()));
}
