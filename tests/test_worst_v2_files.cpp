// End-to-end tests of the second edition's worst-case syntax, read from .nf text: `tolerance`,
// joint `sweep` lines, `share peak` claims, and `worst --samples/--seed` through the binary.
#include <sys/wait.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <numbers>

#include <fmt/format.h>

#include "engine_helpers.hpp"
#include "netfold/claims.hpp"
#include "netfold/scenario.hpp"
#include "netfold/worst.hpp"
#include "temp_dir.hpp"

using namespace netfold;
using namespace netfold::testing;
using netfold_test::read_file;
using netfold_test::TempDir;
using netfold_test::write_file;

namespace {
constexpr double kPi = std::numbers::pi;

struct Searched {
  std::unique_ptr<Circuit> circuit;
  WorstReport report;
};

Searched search_text(const std::string& text, const WorstOptions& options = {}) {
  Searched s;
  s.circuit = std::make_unique<Circuit>(parse_netlist(text, "x.nf"));
  s.report = find_worst_case(*s.circuit, s.circuit->sweeps(), options);
  return s;
}

const SweepExtreme& result(const Searched& s, const std::string& name) {
  for (const auto& ex : s.report.sweeps.at(0).observables)
    if (ex.name == name) return ex;
  FAIL("no result for " << name);
  throw;
}

// Peak |y| at one point of a joint line, solved directly (independent of the search).
double peak_at(const Circuit& c, const std::string& obs, const std::vector<Sweep>& targets, const std::vector<double>& x) {
  SolveOptions o;
  o.window = c.window();
  for (std::size_t k = 0; k < targets.size(); ++k) set_sweep_target(o.scenario, targets[k], x[k]);
  return find_peak(solve(c, o), parse_observable_argument(c, obs, "test")).value;
}

// A 230 V mains onto R + L (X/R = 10) through a contact; `extra` adds to the source line.
std::string rl_feeder(const std::string& source_extra) {
  return fmt::format(
      "V1: voltage-source s -> gnd, cosine 325 V 50 Hz{}\nK1: switch s -> a, closes at 0 s\n"
      "R1: resistor a -> b, 1 ohm\nL1: inductor b -> gnd, 31.83 mH\nwatch L1.i\nwindow 0 .. 100 ms\n"
      "sweep V1.phase -180 deg .. 180 deg\n",
      source_extra);
}

struct Run {
  int status = -1;
  std::string out;
};

Run run_netfold(const std::string& args, const TempDir& dir) {
  const std::string out = (dir.path() / "stdout.txt").string();
  int raw = std::system(fmt::format("'{}' {} > '{}' 2>&1", NETFOLD_BINARY, args, out).c_str());
  return {WIFEXITED(raw) ? WEXITSTATUS(raw) : -1, read_file(out)};
}
}  // namespace

TEST_CASE("a 10 % tolerance on the source of an RL feeder makes its worst peak exactly 1.1 times larger", "[worst]") {
  // Derived by hand: the circuit is linear in its only source, so every peak scales with the
  // source's factor and the worst over 0.9 .. 1.1 is 1.1 × the worst at the declared value.
  auto plain = search_text(rl_feeder(""));
  auto toleranced = search_text(rl_feeder(", tolerance 10%"));
  REQUIRE(toleranced.report.sweeps.size() == 1);
  CHECK(toleranced.report.sweeps[0].box);
  CHECK_FALSE(plain.report.sweeps[0].box);
  const SweepExtreme& ex = result(toleranced, "L1.i");
  CHECK_REL(ex.worst, 1.1 * result(plain, "L1.i").worst, 1e-9);
  REQUIRE(ex.corner.size() == 1);
  CHECK(ex.corner[0].name == "V1");
  CHECK(ex.corner[0].is_factor);
  CHECK_REL(ex.corner[0].value, 1.1, 1e-9);
}

TEST_CASE("an asymmetric source tolerance takes its upper factor for the worst and its lower for the best", "[worst]") {
  // Derived by hand, as above: −5 % .. +10 % gives 1.1 × the worst and 0.95 × the best.
  auto plain = search_text(rl_feeder(""));
  auto toleranced = search_text(rl_feeder(", tolerance -5% .. +10%"));
  const SweepExtreme& ex = result(toleranced, "L1.i");
  CHECK_REL(ex.worst, 1.1 * result(plain, "L1.i").worst, 1e-9);
  CHECK_REL(ex.best, 0.95 * result(plain, "L1.i").best, 1e-6);
}

TEST_CASE("a joint sweep line of closing angle and residual current gives one result with both arguments", "[worst]") {
  const std::string text =
      "V1: voltage-source s -> gnd, cosine 325 V 50 Hz\nK1: switch s -> a, closes at 0 s\n"
      "R1: resistor a -> b, 1 ohm\nL1: inductor b -> gnd, 31.83 mH\nwatch L1.i\nwindow 0 .. 100 ms\n"
      "sweep V1.phase -90 deg .. 45 deg, L1.initial -2 A .. 3 A\n";
  auto s = search_text(text);
  REQUIRE(s.report.sweeps.size() == 1);
  const SweepResult& sweep = s.report.sweeps[0];
  CHECK(sweep.box);
  REQUIRE(sweep.targets.size() == 2);
  CHECK(sweep.targets[0].target == SweepTarget::source_phase);
  CHECK(sweep.targets[1].target == SweepTarget::storage_initial);
  const SweepExtreme& ex = result(s, "L1.i");
  REQUIRE(ex.worst_point.size() == 2);
  CHECK(ex.worst_point[0] >= -kPi / 2 - 1e-12);
  CHECK(ex.worst_point[0] <= kPi / 4 + 1e-12);
  CHECK(ex.worst_point[1] >= -2.0 - 1e-12);
  CHECK(ex.worst_point[1] <= 3.0 + 1e-12);
  CHECK(ex.worst_point[0] == ex.worst_at);
  // The reported point gives the reported value, and no corner of the box beats it.
  CHECK_REL(peak_at(*s.circuit, "L1.i", sweep.targets, ex.worst_point), ex.worst, 1e-12);
  for (double phi : {-kPi / 2, 0.0, kPi / 4})
    for (double i0 : {-2.0, 0.0, 3.0}) CHECK(peak_at(*s.circuit, "L1.i", sweep.targets, {phi, i0}) <= ex.worst * (1 + 1e-12));
}

TEST_CASE("a share claim read from the file passes above the computed share and fails below it", "[worst][check]") {
  // Derived by hand: a resistive load at E·f·cos φ over a 1 µs window peaks at E·f·|cos φ|; with
  // φ uniform over a period and f uniform over 0.9 .. 1.1 the share above L is the mean over f of
  // (2/π)·acos(L/(E·f)). For L/E = 0.5 this is 66.5 % (Simpson's rule below).
  const double c = 0.5;
  double simpson = 0.0;
  const int n = 200;
  for (int k = 0; k <= n; ++k) {
    const double f = 0.9 + 0.2 * k / n;
    const double w = (k == 0 || k == n) ? 1.0 : (k % 2 ? 4.0 : 2.0);
    simpson += w * (2.0 / kPi) * std::acos(c / f);
  }
  const double expected = simpson / (3.0 * n);  // (h/3)·Σ over a range of 0.2, divided by 0.2
  REQUIRE(expected > 0.66);
  REQUIRE(expected < 0.67);
  const std::string base =
      "src: voltage-source a -> gnd, cosine 100 V 50 Hz, tolerance 10%\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> gnd, 10 ohm\nwatch R1.v\nwindow 0 .. 1 us\nsweep src.phase -180 deg .. 180 deg\n"
      "expect share peak R1.v > 50 V <= 72%\nexpect share peak R1.v > 50 V <= 61%\n"
      "expect share peak R1.v > 50 V >= 61%\n";
  Circuit circuit = parse_netlist(base, "x.nf");
  Solution solution = solve(circuit);
  auto results = evaluate_claims(circuit, solution);
  REQUIRE(results.size() == 3);
  REQUIRE(results[0].computed);
  INFO(results[0].message);
  CHECK(std::fabs(*results[0].computed - 100.0 * expected) <= 2.0);  // percentage points: the box grid's resolution
  CHECK(results[0].passed);
  CHECK_FALSE(results[1].passed);
  CHECK(results[2].passed);
  CHECK(*results[1].computed == *results[0].computed);
}

TEST_CASE("worst with the same sample count and seed writes the same JSON twice, another seed other figures", "[worst]") {
  TempDir dir("worst_v2_files");
  write_file(dir.path() / "bank.nf",
             "mains: voltage-source l -> n, cosine 325 V 50 Hz, tolerance 10%\nground n\n"
             "K1: switch l -> a, closes at 0 s, rated 50 A\nR1: resistor a -> b, 10 ohm, tolerance 5%\n"
             "C1: capacitor b -> n, 10 uF\nwatch K1.i\nwindow 0 .. 20 ms\n"
             "sweep mains.phase -180 deg .. 180 deg, C1.initial -100 V .. 100 V\n");
  const std::string nf = (dir.path() / "bank.nf").string();
  auto json_of = [&](const std::string& name, int seed) {
    const std::string out = (dir.path() / name).string();
    Run r = run_netfold(fmt::format("worst '{}' --samples 400 --seed {} --json '{}'", nf, seed, out), dir);
    INFO(r.out);
    CHECK(r.status == 0);
    return read_file(out);
  };
  const std::string first = json_of("a.json", 11);
  const std::string second = json_of("b.json", 11);
  const std::string other = json_of("c.json", 12);
  REQUIRE_FALSE(first.empty());
  CHECK(first == second);
  CHECK(first != other);
  CHECK(first.find("\"samples\": 400") != std::string::npos);
  CHECK(first.find("\"seed\": 11") != std::string::npos);
  CHECK(first.find("\"p99_ci\"") != std::string::npos);
  CHECK(first.find("\"exceeded_share\"") != std::string::npos);
}
