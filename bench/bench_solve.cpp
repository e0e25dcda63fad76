// Issue 7 (a): the closed form versus CVODE on the same circuit and the same sample grid of
// 10^4 intervals (10^4 + 1 samples: `resolution` = window / 10^4), at the accuracy the cross-check
// reports; and issue 3's figure, `solve` of a 10^4-element circuit.
//
//   closed_form/CIRCUIT  solve(circuit), then every observable's closed form evaluated on the grid
//   cvode/CIRCUIT        verify_closed_form(solution): CVODE BDF on the full nodal equations
//                        (rtol 1e-10, from the default threshold 1e-6), sampled on the same grid and
//                        compared; its counter max_rel_err is the largest relative difference
//   solve_10k/…          parse + solve + report of a 71 × 71 grid (9942 elements), `netfold solve
//                        --no-verify` without the printing; and solve alone
// Circuits (network_generator.hpp): the ladder of 48 sections (99 elements, 50 Hz source, switch,
// inductor), the random network of 1000 nodes with controlled sources (KLU), grids of 10^3 and
// 10^4 nodes (CHOLMOD; a step source).
#include "bench_common.hpp"
#include "netfold/report.hpp"
#include "netfold/verify.hpp"
#include "network_generator.hpp"

namespace {

using namespace netfold;
using namespace netfold::bench;

constexpr double kIntervals = 1e4;

struct Case {
  std::string name;
  std::string text;  // with the resolution line
  Prepared prepared;
  double max_rel_error = 0.0;
  std::size_t samples = 0;
};

// The circuit's text with `resolution` set to window / 10^4 (the window comes from a first solve).
std::string with_resolution(const std::string& text) {
  Prepared first = prepare(text);
  const Window& w = first.solution->window();
  return text + fmt::format("resolution {:.17g} s\n", (w.to - w.from) / kIntervals);
}

std::vector<std::unique_ptr<Case>>& cases() {
  static std::vector<std::unique_ptr<Case>> all;
  if (!all.empty()) return all;
  auto add = [&](std::string name, const std::string& text) {
    auto c = std::make_unique<Case>();
    c->name = std::move(name);
    c->text = with_resolution(text);
    c->prepared = prepare(c->text);
    all.push_back(std::move(c));
  };
  add("ladder_99_elements", generate_ladder({}).text);
  add("random_1000_nodes", generate_random({}).text);
  GridOptions g;
  g.rows = g.cols = grid_side_for(1000);
  add("grid_1000_nodes", generate_grid(g).text);
  g.rows = g.cols = grid_side_for(10'000);
  add("grid_10000_nodes", generate_grid(g).text);
  return all;
}

// What the closed form does to produce the waveforms on the grid: solve, then evaluate.
double closed_form_on_grid(const Circuit& circuit) {
  Solution s = solve(circuit);
  const std::vector<double> times = sample_times(s.window(), s.resolution());
  double sum = 0.0;
  for (const auto& obs : s.observables()) {
    const std::vector<Piece> pieces = s.pieces(obs);
    std::size_t seg = 0;
    for (double t : times) {
      while (seg + 1 < pieces.size() && t >= pieces[seg + 1].t0()) ++seg;
      sum += pieces[seg].value(t);
    }
  }
  return sum;
}

void register_all() {
  for (std::size_t i = 0; i < cases().size(); ++i) {
    const std::string& n = cases()[i]->name;
    const int reps = n == "grid_10000_nodes" ? 3 : 5;
    benchmark::RegisterBenchmark(("closed_form/" + n).c_str(),
                                 [i](benchmark::State& state) {
                                   Case& c = *cases()[i];
                                   for (auto _ : state) benchmark::DoNotOptimize(closed_form_on_grid(*c.prepared.circuit));
                                 })
        ->Unit(benchmark::kMillisecond)
        ->MinTime(0.2)
        ->Repetitions(reps)
        ->UseRealTime();
    benchmark::RegisterBenchmark(("cvode/" + n).c_str(),
                                 [i](benchmark::State& state) {
                                   Case& c = *cases()[i];
                                   VerifyReport r;
                                   for (auto _ : state) {
                                     r = verify_closed_form(*c.prepared.solution);
                                     benchmark::DoNotOptimize(&r);  // not the double itself: see bench/README.md
                                   }
                                   c.max_rel_error = r.max_rel_error;
                                   c.samples = r.samples;
                                   state.counters["max_rel_err"] = r.max_rel_error;
                                   state.counters["samples"] = static_cast<double>(r.samples);
                                   state.counters["steps"] = static_cast<double>(r.stats.steps);
                                   state.counters["passed"] = r.passed ? 1.0 : 0.0;
                                 })
        ->Unit(benchmark::kMillisecond)
        ->MinTime(0.01)
        ->Repetitions(reps)
        ->UseRealTime();
  }

  static const std::string grid_10k = [] {
    GridOptions g;
    g.rows = g.cols = 71;
    return generate_grid(g).text;
  }();
  benchmark::RegisterBenchmark("solve_10k/parse_solve_report",
                               [](benchmark::State& state) {
                                 for (auto _ : state) {
                                   Circuit c = parse_netlist(grid_10k, "grid.nf");
                                   Solution s = solve(c);
                                   SolveReport r = build_solve_report(s);
                                   benchmark::DoNotOptimize(&r);
                                 }
                                 state.counters["elements"] = 9942;
                               })
      ->Unit(benchmark::kMillisecond)
      ->MinTime(0.5)
      ->Repetitions(5)
      ->UseRealTime();
  benchmark::RegisterBenchmark("solve_10k/solve",
                               [](benchmark::State& state) {
                                 static const Circuit c = parse_netlist(grid_10k, "grid.nf");
                                 for (auto _ : state) {
                                   Solution s = solve(c);
                                   benchmark::DoNotOptimize(s.segments().back().tau);
                                 }
                               })
      ->Unit(benchmark::kMillisecond)
      ->MinTime(0.5)
      ->Repetitions(5)
      ->UseRealTime();
}

void summarize(const Timings& t, Summary& s) {
  for (const auto& c : cases()) {
    const std::string cf = "closed_form/" + c->name, cv = "cvode/" + c->name;
    if (!t.has(cf) || !t.has(cv)) continue;
    s.speedup(fmt::format("(a) {}: CVODE verify / closed form", c->name), t.seconds(cv), t.seconds(cf), 100,
              fmt::format("{} samples; verify's max rel difference {:.2g} (CVODE rtol 1e-10)", c->samples,
                          c->max_rel_error));
  }
  if (t.has("solve_10k/parse_solve_report"))
    s.figure("(issue 3) 10^4-element grid: parse + solve + report", t.seconds("solve_10k/parse_solve_report") * 1e3,
             "ms", 1000, "9942 elements, `netfold solve --no-verify` without printing");
  if (t.has("solve_10k/solve"))
    s.figure("(issue 3) 10^4-element grid: solve alone", t.seconds("solve_10k/solve") * 1e3, "ms", 1000, "");
}

}  // namespace

int main(int argc, char** argv) {
  register_all();
  return netfold::bench::run_benchmarks(argc, argv, summarize);
}
