// Tests of the worst-case search over a box: joint sweep lines and tolerances (spec v2).
#include <algorithm>
#include <cmath>
#include <functional>
#include <numbers>

#include <fmt/format.h>

#include "engine_helpers.hpp"
#include "netfold/claims.hpp"
#include "netfold/worst.hpp"

using namespace netfold;
using namespace netfold::testing;

namespace {
constexpr double kPi = std::numbers::pi;

// Until the parser reads `tolerance` and joint sweep lines, a first-edition circuit is copied
// with tolerances set and its sweep lines joined (every target on one line when `joint`).
struct Edit {
  std::vector<std::pair<std::string, Tolerance>> tolerances;
  bool joint = false;
  std::vector<Claim> claims;
};

Circuit edited(const Circuit& c, const Edit& edit) {
  CircuitBuilder b(c.source_ptr());
  for (const auto& n : c.nodes()) b.node(n);
  b.set_ground(c.nodes().at(c.ground()), c.ground_loc());
  for (Element e : c.elements()) {
    for (const auto& [name, tol] : edit.tolerances)
      if (e.name == name) e.tolerance = tol;
    b.add_element(e);
  }
  for (const auto& o : c.watches()) b.add_watch(o);
  for (std::size_t k = 0; k < c.sweeps().size(); ++k) b.add_sweep(c.sweeps()[k], k > 0 && edit.joint);
  for (const auto& cl : edit.claims) b.add_claim(cl);
  if (c.window()) b.set_window(*c.window());
  return std::move(b).build();
}

Tolerance tol(double lower, double upper) { return {lower, upper, {}}; }

Edit with_tolerance(const std::string& name, Tolerance t) {
  Edit e;
  e.tolerances.emplace_back(name, t);
  return e;
}

Edit joined() {
  Edit e;
  e.joint = true;
  return e;
}

struct Searched {
  std::unique_ptr<Circuit> circuit;
  WorstReport report;
};

Searched search(const std::string& text, const Edit& edit, const WorstOptions& options = {}) {
  Searched s;
  Circuit parsed = parse_netlist(text, "box.nf");
  s.circuit = std::make_unique<Circuit>(edited(parsed, edit));
  s.report = find_worst_case(*s.circuit, s.circuit->sweeps(), options);
  return s;
}

const SweepExtreme& result(const Searched& s, const std::string& name, std::size_t sweep = 0) {
  for (const auto& ex : s.report.sweeps.at(sweep).observables)
    if (ex.name == name) return ex;
  FAIL("no result for " << name);
  throw;
}

// Peak |y| at one point of a joint line, solved directly (independent of the search).
double peak_at(const Circuit& c, const Observable& obs, const std::vector<Sweep>& targets, const std::vector<double>& x,
               const Window& window) {
  SolveOptions o;
  o.window = window;
  for (std::size_t k = 0; k < targets.size(); ++k) set_sweep_target(o.scenario, targets[k], x[k]);
  return find_peak(solve(c, o), obs).value;
}
}  // namespace

TEST_CASE("circuit_with_values sets an element's value and scales a source's whole waveform", "[worst]") {
  Circuit c = parse_netlist(
      "s1: voltage-source a -> gnd, dc 2 V + cosine 10 V 50 Hz + step 1 V at 1 ms\n"
      "R1: resistor a -> b, 10 ohm\nC1: capacitor b -> gnd, 1 uF\n",
      "values.nf");
  Scenario sc;
  sc.element_values.push_back({*c.find_element("C1"), 1.2e-6});
  sc.source_factors.push_back({*c.find_element("s1"), 1.1});
  Circuit changed = circuit_with_values(c, sc);
  CHECK(changed.element(*c.find_element("C1")).value == 1.2e-6);
  CHECK(changed.element(*c.find_element("R1")).value == 10.0);
  const Waveform& w = changed.element(*c.find_element("s1")).waveform;
  for (double t : {0.0, 0.4e-3, 2e-3})
    CHECK_REL(w.value_at(t), 1.1 * c.element(*c.find_element("s1")).waveform.value_at(t), 1e-15);
  // Solving the declared circuit under a scenario whose values it does not hold is refused.
  CHECK_THROWS_AS(apply_scenario(c, sc), std::logic_error);
  CHECK_NOTHROW(apply_scenario(changed, sc));
  // The copy solves: τ = R·C with the new capacitance.
  SolveOptions o;
  o.scenario = sc;
  Solution s = solve(changed, o);
  CHECK_REL(s.segments().front().tau, 10.0 * 1.2e-6, 1e-12);
}

TEST_CASE("a tolerance whose worst lies inside its range is found there: the maximum power transfer", "[worst]") {
  // Source: the maximum power transfer theorem (any circuit-theory handbook): a load R fed
  // through R_s takes V²·R/(R_s + R)², largest at R = R_s. Here R_s = 8 ohm and the load
  // 10 ohm ± 50 % (5 .. 15 ohm), so the worst is inside the box and not on its grid.
  auto s = search("src: voltage-source a -> gnd, cosine 100 V 50 Hz\nRs: resistor a -> b, 8 ohm\n"
                  "RL: resistor b -> gnd, 10 ohm\nwatch RL.p\nwindow 0 .. 20 ms\n",
                  with_tolerance("RL", tol(-0.5, 0.5)));
  REQUIRE(s.report.sweeps.size() == 1);
  CHECK(s.report.sweeps[0].targets.empty());
  const SweepExtreme& ex = result(s, "RL.p");
  CHECK_REL(ex.worst, 100.0 * 100.0 / (4.0 * 8.0), 1e-9);
  REQUIRE(ex.corner.size() == 1);
  CHECK(ex.corner[0].name == "RL");
  CHECK_REL(ex.corner[0].value, 8.0, 1e-4);
  // The best is at an end: 5 ohm gives 100²·5/13² = 295.9 W, 15 ohm 283.6 W.
  CHECK_REL(ex.best, 100.0 * 100.0 * 15.0 / (23.0 * 23.0), 1e-9);
}

TEST_CASE("a joint closing angle and residual voltage search finds a worst that is not on a vertex", "[worst]") {
  // Derived by hand: a capacitor at V0 switched through R onto E·cos(ωt + φ) takes
  // i(0+) = (E·cos φ − V0)/R; with τ = 0.1 ms ≪ the period this first value is the peak, so the
  // worst over φ ∈ [−100°, 73°] × V0 ∈ [−100 V, 50 V] is (E + 100 V)/R at φ = 0 (inside the
  // range, and not on the 36-interval grid of φ).
  auto s = search("src: voltage-source a -> gnd, cosine 325 V 50 Hz\nK1: switch a -> b, closes at 0 s\n"
                  "R1: resistor b -> c, 10 ohm\nC1: capacitor c -> gnd, 10 uF\nwatch C1.i\nwindow 0 .. 20 ms\n"
                  "sweep src.phase -100 deg .. 73 deg\nsweep C1.initial -100 V .. 50 V\n",
                  joined());
  REQUIRE(s.report.sweeps.size() == 1);
  REQUIRE(s.report.sweeps[0].targets.size() == 2);
  const SweepExtreme& ex = result(s, "C1.i");
  CHECK_REL(ex.worst, (325.0 + 100.0) / 10.0, 1e-9);
  REQUIRE(ex.worst_point.size() == 2);
  CHECK(std::fabs(ex.worst_point[0]) < 1e-4);
  CHECK_REL(ex.worst_point[1], -100.0, 1e-9);
}

TEST_CASE("the joint search over closing angle and residual current is not beaten by a dense brute force", "[worst]") {
  // An inductive feeder with a residual current: the peak over (φ, I0) has two ridges (the
  // offset of either sign). The brute force, independent of the search, solves a 1° × 0.25 A
  // grid; the search (a 10° × 0.5 A grid, then Nelder–Mead) must reach at least its maximum.
  const std::string text =
      "src: voltage-source a -> gnd, cosine 325 V 50 Hz\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 1 ohm\nL1: inductor c -> gnd, 30 mH\nwatch L1.i\nwindow 0 .. 100 ms\n"
      "sweep src.phase -180 deg .. 180 deg\nsweep L1.initial -5 A .. 5 A step 0.5 A\n";
  auto s = search(text, joined());
  const SweepExtreme& ex = result(s, "L1.i");
  const Circuit& c = *s.circuit;
  const auto& targets = s.report.sweeps[0].targets;
  const Observable obs = parse_observable_argument(c, "L1.i", "test");
  double brute = 0.0;
  for (int deg = -180; deg <= 180; deg += 1)
    for (double i0 = -5.0; i0 <= 5.0 + 1e-9; i0 += 0.25)
      brute = std::max(brute, peak_at(c, obs, targets, {deg * kPi / 180.0, i0}, *c.window()));
  INFO("search " << ex.worst << " A, brute force " << brute << " A");
  CHECK(ex.worst >= brute * (1.0 - 1e-9));
  CHECK(ex.worst <= brute * 1.001);
  // The reported point gives the reported value.
  CHECK_REL(peak_at(c, obs, targets, ex.worst_point, *c.window()), ex.worst, 1e-12);
}

TEST_CASE("a tolerance on R inside a closing-angle sweep gives IEC 60909-0's peak at the low resistance", "[worst]") {
  // Source: IEC 60909-0, κ = 1.02 + 0.98·e^{−3R/X}: the worst first peak κ·√2·I grows as R
  // falls, so over R = 1 ohm ± 10 % it is at 0.9 ohm (a vertex in R, the angle inside).
  const double x = 10.0;  // X = 10 ohm at 50 Hz
  auto s = search(fmt::format("supply: voltage-source s -> gnd, cosine 230 Vrms 50 Hz\nK1: switch s -> a, closes at 0 s\n"
                              "R1: resistor a -> b, 1 ohm\nL1: inductor b -> gnd, {} H\nwatch L1.i\n"
                              "window 0 .. 200 ms\nsweep supply.phase -180 deg .. 180 deg\n",
                              x / (2 * kPi * 50.0)),
                  with_tolerance("R1", tol(-0.1, 0.1)));
  const SweepExtreme& ex = result(s, "L1.i");
  REQUIRE(ex.corner.size() == 1);
  CHECK_REL(ex.corner[0].value, 0.9, 1e-6);
  const double r = 0.9, kappa = 1.02 + 0.98 * std::exp(-3.0 * r / x);
  CHECK_REL(ex.worst, kappa * 230.0 * std::sqrt(2.0) / std::hypot(r, x), 0.02);
}

TEST_CASE("a source tolerance scales the worst peak of a linear circuit by its largest factor", "[worst]") {
  // Derived by hand: every response is linear in the source, so the worst over a ±10 % factor
  // is 1.1 × the worst at the declared value.
  const std::string text =
      "src: voltage-source a -> gnd, cosine 325 V 50 Hz\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 10 ohm\nC1: capacitor c -> gnd, 100 uF\nwatch C1.v\nwindow 0 .. 60 ms\n"
      "sweep src.phase -180 deg .. 180 deg\n";
  auto plain = search(text, {});
  auto toleranced = search(text, with_tolerance("src", tol(-0.1, 0.1)));
  CHECK_REL(result(toleranced, "C1.v").worst, 1.1 * result(plain, "C1.v").worst, 1e-7);
  REQUIRE(result(toleranced, "C1.v").corner.size() == 1);
  CHECK(result(toleranced, "C1.v").corner[0].is_factor);
  CHECK_REL(result(toleranced, "C1.v").corner[0].value, 1.1, 1e-9);
}

TEST_CASE("the peak of a resistive load over a uniform closing angle has the |cos| distribution", "[worst]") {
  // Derived by hand (from memory of the arccos measure): the peak just after closing onto a
  // resistor is |cos φ|·E, whose q-quantile for φ uniform is E·cos((1 − q)·π/2). The window is
  // 1 µs (ω·1 µs = 3.1e-4 rad), so the figures agree to about 1e-3.
  const std::string text =
      "src: voltage-source a -> gnd, cosine 100 V 50 Hz\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> gnd, 10 ohm\nwatch R1.v\nwindow 0 .. 1 us\nsweep src.phase -180 deg .. 180 deg\n";
  auto s = search(text, {});
  const PeakDistribution& d = result(s, "R1.v").distribution;
  CHECK_REL(d.p50, 100.0 * std::cos(kPi / 4.0), 2e-3);
  CHECK_REL(d.p90, 100.0 * std::cos(0.05 * kPi), 2e-3);
  CHECK_REL(d.p99, 100.0 * std::cos(0.005 * kPi), 2e-3);
  CHECK_FALSE(d.p99_lo);

  // Monte Carlo: 4000 samples; the analytic p99 lies in the 95 % interval, and the same seed
  // gives the same figures.
  WorstOptions mc;
  mc.samples = 4000;
  mc.seed = 11;
  auto a = search(text, {}, mc), b = search(text, {}, mc);
  const PeakDistribution& da = result(a, "R1.v").distribution;
  REQUIRE(da.p99_lo);
  REQUIRE(da.p99_hi);
  CHECK(*da.p99_lo <= 100.0 * std::cos(0.005 * kPi) * 1.001);
  CHECK(*da.p99_hi >= 100.0 * std::cos(0.005 * kPi) * 0.999);
  CHECK_REL(da.p50, 100.0 * std::cos(kPi / 4.0), 0.03);
  CHECK(da.p50 == result(b, "R1.v").distribution.p50);
  CHECK(a.report.sweeps[0].samples == 4000);
}

TEST_CASE("a rating's exceeded share is the share of the closing angles in which the peak passes it", "[worst]") {
  // Derived by hand, as above: the contact's peak current is 10 A·|cos φ|; a 5 A rating is
  // exceeded where |cos φ| > 1/2, on 2/3 of the range (from the refined crossings).
  const std::string text =
      "src: voltage-source a -> gnd, cosine 100 V 50 Hz\nK1: switch a -> b, closes at 0 s, rated 5 A\n"
      "R1: resistor b -> gnd, 10 ohm\nwatch R1.v\nwindow 0 .. 1 us\nsweep src.phase -180 deg .. 180 deg\n";
  auto s = search(text, {});
  REQUIRE(s.report.sweeps[0].exceeded_share.size() == 1);
  CHECK_REL(s.report.sweeps[0].exceeded_share[0], 2.0 / 3.0, 2e-3);
}

TEST_CASE("a share claim states the largest share over the sweeps in percent", "[worst][check]") {
  // Derived by hand, as above: R1.v exceeds 50 V on 2/3 of the closing angles.
  Claim claim;
  claim.quantity = ClaimQuantity::share_peak;
  claim.op = CompareOp::le;
  claim.value = 70.0;
  claim.level = 50.0;
  claim.dimension = Dimension::percent;
  claim.text = "share peak R1.v > 50 V <= 70%";
  Circuit parsed = parse_netlist(
      "src: voltage-source a -> gnd, cosine 100 V 50 Hz\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> gnd, 10 ohm\nwatch R1.v\nwindow 0 .. 1 us\nsweep src.phase -180 deg .. 180 deg\n",
      "share.nf");
  claim.observable = parse_observable_argument(parsed, "R1.v", "test");
  Edit edit;
  edit.claims.push_back(claim);
  Circuit c = edited(parsed, edit);
  Solution s = solve(c);
  auto results = evaluate_claims(c, s);
  REQUIRE(results.size() == 1);
  REQUIRE(results[0].computed);
  CHECK_REL(*results[0].computed, 100.0 * 2.0 / 3.0, 2e-3);
  CHECK(results[0].passed);
}
