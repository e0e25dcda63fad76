// Issue 14 (several storage elements), the whole engine on generated circuits, in one run:
//
//   (a) closed_form/N_states   solve(circuit) of a lossy LC filter chain of N/2 sections
//                              (network_generator.hpp, generate_rlc_ladder; K1 closes a 48 V bus
//                              onto it) + both watched observables (L1.i, the last C.v)
//                              evaluated on 10^4 + 1 samples (`resolution` = window / 10^4), as
//                              the CSV does (Piece::value per sample)
//       sampled/N_states       the same, each segment's terms sampled with response::sample
//       cvode/N_states         verify_closed_form(solution): CVODE BDF on the full nodal equations
//                              of the same circuit, rtol 1e-10 (from the default threshold 1e-6),
//                              on the same samples; counter max_rel_err is verify's difference
//   (b) sweep/closed_form_3600_points   find_worst_case over `sweep mains.phase -180 deg .. 180
//                              deg step 0.1 deg` (3601 grid points, then refinement) of a two-stage
//                              mains filter (4 states) plugged in, against
//       sweep/cvode_one_run_rtol_…     one integration of the same circuit (integrate_inputs) at a
//                              phase of the sweep (five phases in turn), × 3600
//   (c) states_1000/solve      solve of a chain of 500 sections (1000 states): the reduction
//                              (one factorization, 1000 + 1 right-hand sides), A and B, the modes
//                              and the modal decomposition, the closed form of the watched
//                              observables; states_1000/solve_and_sample adds 10^4 samples of them
//   (d) grid_100_capacitors/NODES   parse + solve + report (`netfold solve --no-verify` without the
//                              printing) of a resistive grid with 100 capacitors, in a child
//                              process (fork), whose peak RSS comes from wait4's rusage; sizes from
//                              NETFOLD_BENCH_GRID_SIZES (default "10000 100000")
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <numbers>

#include "bench_common.hpp"
#include "netfold/report.hpp"
#include "netfold/verify.hpp"
#include "netfold/worst.hpp"
#include "network_generator.hpp"
#include "response/terms.hpp"

namespace {

using namespace netfold;
using namespace netfold::bench;

constexpr double kIntervals = 1e4;
constexpr double kSweepPoints = 3600;

struct Case {
  int states = 0;
  Prepared prepared;
  double max_rel_error = 0.0;
  std::size_t samples = 0;
};

std::string chain_text(int states, bool with_resolution) {
  RlcLadderOptions o;
  o.sections = static_cast<std::size_t>(states / 2);
  std::string text = generate_rlc_ladder(o).text;
  if (!with_resolution) return text;
  Prepared first = prepare(text);
  const Window& w = first.solution->window();
  return text + fmt::format("resolution {:.17g} s\n", (w.to - w.from) / kIntervals);
}

Case& case_of(int states) {
  static std::map<int, std::unique_ptr<Case>> all;
  auto& c = all[states];
  if (!c) {
    c = std::make_unique<Case>();
    c->states = states;
    c->prepared = prepare(chain_text(states, true));
  }
  return *c;
}

// Every observable on the sample grid, Piece::value per sample (the CSV's way).
double values_on_grid(const Solution& s) {
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

// The same with each segment's samples taken by response::sample (a uniform sub-grid).
double sampled_on_grid(const Solution& s) {
  const std::vector<double> times = sample_times(s.window(), s.resolution());
  double sum = 0.0;
  for (const auto& obs : s.observables()) {
    const std::vector<Piece> pieces = s.pieces(obs);
    std::size_t i = 0;
    for (std::size_t seg = 0; seg < pieces.size() && i < times.size(); ++seg) {
      std::size_t j = i;
      const double end = seg + 1 < pieces.size() ? pieces[seg + 1].t0() : std::numeric_limits<double>::infinity();
      while (j < times.size() && times[j] < end) ++j;
      if (j == i) continue;
      const Piece& p = pieces[seg];
      if (p.has_terms() && !p.is_product() && j - i > 1) {
        const std::vector<double> v = response::sample(*p.terms_f, times[i], times[j - 1], j - i - 1);
        for (double x : v) sum += x;
      } else {
        for (std::size_t k = i; k < j; ++k) sum += p.value(times[k]);
      }
      i = j;
    }
  }
  return sum;
}

const std::string& mains_filter() {
  // A two-stage mains filter (4 states) plugged in; the closing angle is swept.
  static const std::string text = R"(title "two-stage mains filter plugged in"
mains:    voltage-source l -> gnd, cosine 230 Vrms 50 Hz
plug:     switch l -> a, closes at 0 s
R_lead:   resistor a -> b, 300 mohm
L_lead:   inductor b -> c, 2 uH
C_x1:     capacitor c -> gnd, 470 nF
R_bleed:  resistor c -> gnd, 1 Mohm
L_ch:     inductor c -> d, 1 mH
R_ch:     resistor d -> e, 200 mohm
C_x2:     capacitor e -> gnd, 220 nF
R_app:    resistor e -> gnd, 530 ohm
watch plug.i, C_x2.v
window 0 .. 5 ms
sweep mains.phase -180 deg .. 180 deg step 0.1 deg
)";
  return text;
}

const Circuit& mains_circuit() {
  static const Prepared p = prepare(mains_filter(), false);
  return *p.circuit;
}

std::size_t g_grid_points = 0;
double g_worst = 0.0, g_worst_at = 0.0;

// (d): one end-to-end run in a child process; wall seconds and peak RSS (bytes) of the child.
struct ChildRun {
  double seconds = std::nan("");
  double peak_rss = std::nan("");
  double parse_s = 0.0, solve_s = 0.0, report_s = 0.0;
  bool ok = false;
};

ChildRun grid_run(std::size_t nodes) {
  ChildRun out;
  int fd[2];
  if (pipe(fd) != 0) return out;
  const pid_t pid = fork();
  if (pid == 0) {
    close(fd[0]);
    GridOptions g;
    g.rows = g.cols = grid_side_for(nodes);
    g.capacitors = 100;
    const std::string text = generate_grid(g).text;
    double t[3] = {0.0, 0.0, 0.0};
    bool ok = true;
    try {
      std::unique_ptr<Circuit> c;
      t[0] = time_once([&] { c = std::make_unique<Circuit>(parse_netlist(text, "grid.nf")); });
      std::unique_ptr<Solution> s;
      t[1] = time_once([&] { s = std::make_unique<Solution>(solve(*c)); });
      t[2] = time_once([&] {
        SolveReport r = build_solve_report(*s);
        benchmark::DoNotOptimize(&r);
      });
    } catch (const std::exception& e) {
      std::fprintf(stderr, "grid of %zu nodes: %s\n", nodes, e.what());
      ok = false;
    }
    const double msg[4] = {t[0], t[1], t[2], ok ? 1.0 : 0.0};
    if (write(fd[1], msg, sizeof msg) != static_cast<ssize_t>(sizeof msg)) _exit(1);
    _exit(0);
  }
  close(fd[1]);
  double msg[4] = {0, 0, 0, 0};
  const ssize_t got = read(fd[0], msg, sizeof msg);
  close(fd[0]);
  int status = 0;
  rusage usage{};
  wait4(pid, &status, 0, &usage);
  if (got != static_cast<ssize_t>(sizeof msg) || !WIFEXITED(status) || WEXITSTATUS(status) != 0) return out;
  out.parse_s = msg[0];
  out.solve_s = msg[1];
  out.report_s = msg[2];
  out.seconds = msg[0] + msg[1] + msg[2];
  out.peak_rss = static_cast<double>(usage.ru_maxrss) * 1024.0;  // kilobytes on Linux
  out.ok = msg[3] == 1.0;
  return out;
}

std::vector<std::size_t> grid_sizes() {
  const char* env = std::getenv("NETFOLD_BENCH_GRID_SIZES");
  std::istringstream in(env && *env ? env : "10000 100000");
  std::vector<std::size_t> sizes;
  for (std::size_t n; in >> n;) sizes.push_back(n);
  return sizes;
}

std::map<std::size_t, ChildRun> g_grid_runs;

void register_all() {
  for (int n : {2, 10, 200}) {
    const int reps = n == 200 ? 3 : 5;
    benchmark::RegisterBenchmark(fmt::format("closed_form/{}_states", n).c_str(),
                                 [n](benchmark::State& state) {
                                   const Circuit& c = *case_of(n).prepared.circuit;
                                   for (auto _ : state) {
                                     const Solution s = solve(c);
                                     const double v = values_on_grid(s);
                                     benchmark::DoNotOptimize(&v);
                                   }
                                 })
        ->Unit(benchmark::kMillisecond)
        ->MinTime(0.2)
        ->Repetitions(reps)
        ->UseRealTime();
    benchmark::RegisterBenchmark(fmt::format("sampled/{}_states", n).c_str(),
                                 [n](benchmark::State& state) {
                                   const Circuit& c = *case_of(n).prepared.circuit;
                                   for (auto _ : state) {
                                     const Solution s = solve(c);
                                     const double v = sampled_on_grid(s);
                                     benchmark::DoNotOptimize(&v);
                                   }
                                 })
        ->Unit(benchmark::kMillisecond)
        ->MinTime(0.2)
        ->Repetitions(reps)
        ->UseRealTime();
    benchmark::RegisterBenchmark(fmt::format("cvode/{}_states", n).c_str(),
                                 [n](benchmark::State& state) {
                                   Case& c = case_of(n);
                                   VerifyReport r;
                                   for (auto _ : state) {
                                     r = verify_closed_form(*c.prepared.solution);
                                     benchmark::DoNotOptimize(&r);  // not the double itself: see bench/README.md
                                   }
                                   c.max_rel_error = r.max_rel_error;
                                   c.samples = r.samples;
                                   state.counters["max_rel_err"] = r.max_rel_error;
                                   state.counters["steps"] = static_cast<double>(r.stats.steps);
                                   state.counters["passed"] = r.passed ? 1.0 : 0.0;
                                 })
        ->Unit(benchmark::kMillisecond)
        ->MinTime(0.01)
        ->Repetitions(reps)
        ->UseRealTime();
  }

  benchmark::RegisterBenchmark("sweep/closed_form_3600_points",
                               [](benchmark::State& state) {
                                 const Circuit& c = mains_circuit();
                                 for (auto _ : state) {
                                   WorstReport r = find_worst_case(c, c.sweeps());
                                   g_grid_points = r.sweeps.front().grid.size();
                                   g_worst = r.sweeps.front().observables.front().worst;
                                   g_worst_at = r.sweeps.front().observables.front().worst_at;
                                   benchmark::DoNotOptimize(&r);
                                 }
                                 state.counters["grid_points"] = static_cast<double>(g_grid_points);
                               })
      ->Unit(benchmark::kMillisecond)
      ->MinTime(0.5)
      ->Repetitions(5)
      ->UseRealTime();
  auto numerical = [](double rtol) {
    return [rtol](benchmark::State& state) {
      const Circuit& c = mains_circuit();
      const ElementId v1 = *c.find_element("mains");
      const std::vector<double> phases = {-180.0, -97.3, -12.5, 45.0, 133.7};
      std::vector<std::unique_ptr<Solution>> schedules;
      for (double deg : phases) {
        SolveOptions o;
        o.scenario.source_phases.push_back({v1, deg * std::numbers::pi / 180.0});
        schedules.push_back(std::make_unique<Solution>(solve(c, o)));
      }
      std::size_t k = 0;
      long steps = 0;
      for (auto _ : state) {
        NumericalRun run = integrate_inputs(*schedules[k++ % schedules.size()], IntegrateOptions{rtol, 0.0, 5'000'000});
        steps = run.stats.steps;
        benchmark::DoNotOptimize(run.states.front().back());
      }
      state.counters["steps"] = static_cast<double>(steps);
    };
  };
  benchmark::RegisterBenchmark("sweep/cvode_one_run_rtol_1e-10", numerical(integrator_rtol_for(1e-6)))
      ->Unit(benchmark::kMillisecond)
      ->MinTime(0.5)
      ->Repetitions(5)
      ->UseRealTime();
  benchmark::RegisterBenchmark("sweep/cvode_one_run_rtol_1e-6", numerical(1e-6))
      ->Unit(benchmark::kMillisecond)
      ->MinTime(0.5)
      ->Repetitions(5)
      ->UseRealTime();

  static const Prepared chain_1000 = prepare(chain_text(1000, false), false);
  benchmark::RegisterBenchmark("states_1000/solve",
                               [](benchmark::State& state) {
                                 for (auto _ : state) {
                                   const Solution s = solve(*chain_1000.circuit);
                                   std::vector<Piece> p = s.pieces(s.observables().front());
                                   std::vector<Piece> q = s.pieces(s.observables().back());
                                   benchmark::DoNotOptimize(&p);
                                   benchmark::DoNotOptimize(&q);
                                 }
                               })
      ->Unit(benchmark::kMillisecond)
      ->Iterations(1)
      ->Repetitions(3)
      ->UseRealTime();
  benchmark::RegisterBenchmark("states_1000/solve_and_sample",
                               [](benchmark::State& state) {
                                 for (auto _ : state) {
                                   const Solution s = solve(*chain_1000.circuit);
                                   const double v = sampled_on_grid(s);
                                   benchmark::DoNotOptimize(&v);
                                 }
                               })
      ->Unit(benchmark::kMillisecond)
      ->Iterations(1)
      ->Repetitions(3)
      ->UseRealTime();

  for (std::size_t nodes : grid_sizes())
    benchmark::RegisterBenchmark(fmt::format("grid_100_capacitors/{}", nodes).c_str(),
                                 [nodes](benchmark::State& state) {
                                   ChildRun r;
                                   for (auto _ : state) {
                                     r = grid_run(nodes);
                                     state.SetIterationTime(r.ok ? r.seconds : 0.0);
                                   }
                                   if (!r.ok) state.SkipWithError("the child run failed");
                                   g_grid_runs[nodes] = r;
                                   state.counters["peak_rss_MiB"] = r.peak_rss / (1024.0 * 1024.0);
                                   state.counters["parse_s"] = r.parse_s;
                                   state.counters["solve_s"] = r.solve_s;
                                   state.counters["report_s"] = r.report_s;
                                 })
        ->Unit(benchmark::kMillisecond)
        ->Iterations(1)
        ->Repetitions(1)
        ->UseManualTime();
}

void summarize(const Timings& t, Summary& s) {
  for (int n : {2, 10, 200}) {
    const Case& c = case_of(n);
    const std::string cf = fmt::format("closed_form/{}_states", n), sp = fmt::format("sampled/{}_states", n),
                      cv = fmt::format("cvode/{}_states", n);
    if (!t.has(cv)) continue;
    const std::string how = fmt::format("{} samples; verify's max rel difference {:.2g} (CVODE rtol 1e-10)", c.samples,
                                        c.max_rel_error);
    if (t.has(cf)) s.speedup(fmt::format("(a) {} states: CVODE verify / closed form (value per sample)", n),
                             t.seconds(cv), t.seconds(cf), 100, how);
    if (t.has(sp)) s.speedup(fmt::format("(a) {} states: CVODE verify / closed form (sampled)", n), t.seconds(cv),
                             t.seconds(sp), 100, how);
  }
  const double cf = t.seconds("sweep/closed_form_3600_points");
  if (!std::isnan(cf)) {
    s.figure("(b) worst case over the 3600-point closing-angle sweep, 4 states", cf * 1e3, "ms", 0,
             fmt::format("{} grid points; worst peak |plug.i| {:.6g} A at {:.4g} deg", g_grid_points, g_worst,
                         g_worst_at * 180.0 / std::numbers::pi));
    for (const char* rt : {"1e-10", "1e-6"}) {
      const std::string run = fmt::format("sweep/cvode_one_run_rtol_{}", rt);
      if (!t.has(run)) continue;
      s.speedup(fmt::format("(b) 3600 CVODE runs (rtol {}, extrapolated) / closed-form sweep", rt),
                kSweepPoints * t.seconds(run), cf, 1000,
                fmt::format("3600 x {} per run, {:.0f} steps per run", Summary::seconds_text(t.seconds(run)),
                            t.counter(run, "steps")));
    }
  }
  if (t.has("states_1000/solve"))
    s.figure("(c) 1000 states: reduction + modes + closed form", t.seconds("states_1000/solve"), "s", 2.0,
             "solve of a 500-section LC chain and the pieces of its 2 watched observables");
  if (t.has("states_1000/solve_and_sample"))
    s.figure("(c) 1000 states: the same + 10^4 samples of both", t.seconds("states_1000/solve_and_sample"), "s", 2.0,
             "");
  for (const auto& [nodes, r] : g_grid_runs) {
    if (!r.ok) continue;
    s.figure(fmt::format("(d) grid of {} nodes, 100 capacitors: parse + solve + report", nodes), r.seconds, "s", 30.0,
             fmt::format("parse {:.3g} s, solve {:.3g} s, report {:.3g} s", r.parse_s, r.solve_s, r.report_s));
    s.figure(fmt::format("(d) grid of {} nodes, 100 capacitors: peak RSS", nodes), r.peak_rss / (1u << 30), "GiB",
             4.0, "wait4 rusage of the child process (the generated text included)");
  }
}

}  // namespace

int main(int argc, char** argv) {
  register_all();
  return netfold::bench::run_benchmarks(argc, argv, summarize);
}
