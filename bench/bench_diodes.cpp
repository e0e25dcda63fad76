// The diode work's performance targets, on a bridge rectifier switched onto the mains (230 Vrms,
// 50 Hz; contact K1 closes at 0 s; fuse 150 mohm and inrush resistor 4.7 ohm; four diodes of
// forward 0.9 V, on 20 mohm, off 10 Mohm; 220 uF bulk capacitor with a 1 kohm load) over a
// 1 s window (50 periods; the closed form's schedule holds 300 diode events, bench/README.md):
//
//   (a) diodes/solve_1s             solve(circuit): the event march and the closed form of every
//                                   segment, target < 50 ms; diodes/solve_1s_and_pieces adds the
//                                   pieces of both watched observables (fuse.i, bulk.v)
//       diodes/cvode_verify_1s      verify_closed_form of that solution: CVODE BDF on the full
//                                   nodal equations with its own event location, compared on the
//                                   default sample grid (window / 4000), as `netfold solve` does
//   (b) diodes/sweep_360_worst      find_worst_case over `sweep mains.phase -180 deg .. 180 deg
//                                   step 1 deg` (361 grid points, then golden-section refinement)
//                                   with fuse.i the one watched observable, target < 2 s
//       diodes/sweep_360_solves     360 plain solves, the source phase set through the scenario
//                                   (-180 .. 179 deg), one NetworkCache shared as the sweep does
//       diodes/cvode_one_run        integrate_inputs of the same circuit at five phases in turn
//                                   (the cross-check's integration without the comparison), × 361
//   (c) each ≥ 100× faster than CVODE: the RATIO lines of the summary, all timings of this run.
#include <numbers>

#include "bench_common.hpp"
#include "netfold/integrate.hpp"
#include "netfold/reduce.hpp"
#include "netfold/verify.hpp"
#include "netfold/worst.hpp"

namespace {

using namespace netfold;
using namespace netfold::bench;

constexpr double kSweepPoints = 361;  // -180 .. 180 deg step 1 deg, both ends

// The circuit of netlists/bridge_rectifier_inrush.nf without its ratings, tolerance and sweep,
// over 1 s (50 periods).
const char* const kBridge =
    "title \"bridge rectifier inrush, 1 s\"\n"
    "ground n\n"
    "mains:  voltage-source l -> n, cosine 230 Vrms 50 Hz\n"
    "K1:     switch l -> a, closes at 0 s\n"
    "fuse:   resistor a -> b, 150 mohm\n"
    "r_in:   resistor b -> c, 4.7 ohm\n"
    "d1:     diode c -> p, forward 0.9 V, on 20 mohm, off 10 Mohm\n"
    "d2:     diode m -> c, forward 0.9 V, on 20 mohm, off 10 Mohm\n"
    "d3:     diode n -> p, forward 0.9 V, on 20 mohm, off 10 Mohm\n"
    "d4:     diode m -> n, forward 0.9 V, on 20 mohm, off 10 Mohm\n"
    "bulk:   capacitor p -> m, 220 uF\n"
    "load:   resistor p -> m, 1 kohm\n"
    "watch fuse.i, bulk.v\n"
    "window 0 .. 1 s\n";

// (b): the same with fuse.i alone watched and the closing-angle sweep.
const std::string& sweep_text() {
  static const std::string text = [] {
    std::string t = kBridge;
    t.replace(t.find("watch fuse.i, bulk.v"), std::string("watch fuse.i, bulk.v").size(), "watch fuse.i");
    return t + "sweep mains.phase -180 deg .. 180 deg step 1 deg\n";
  }();
  return text;
}

const Circuit& circuit(const std::string& text) {
  static std::map<std::string, std::unique_ptr<Circuit>> kept;
  auto& c = kept[text];
  if (!c) c = std::make_unique<Circuit>(parse_netlist(text, "bench.nf"));
  return *c;
}

const Circuit& bridge() { return circuit(kBridge); }

std::size_t diode_events(const std::vector<ScheduledEvent>& events, EventKind kind) {
  return static_cast<std::size_t>(
      std::count_if(events.begin(), events.end(), [kind](const ScheduledEvent& e) { return e.kind == kind; }));
}

std::size_t diode_events(const std::vector<ScheduledEvent>& events) {
  return diode_events(events, EventKind::diode_conducts) + diode_events(events, EventKind::diode_blocks) +
         diode_events(events, EventKind::diode_breaks_down);
}

std::size_t diode_events(const Solution& s) { return diode_events(s.schedule().events); }

// What the summary prints beside the figures (from the benchmarks' last runs).
std::size_t g_events = 0, g_segments = 0, g_grid_points = 0, g_samples = 0;
double g_peak_fuse = 0.0, g_worst = 0.0, g_worst_at = 0.0, g_max_rel = 0.0, g_event_err = 0.0;
bool g_passed = false;
std::size_t g_closed_events = 0, g_numeric_events = 0, g_conducts = 0, g_blocks = 0, g_numeric_conducts = 0;

SolveOptions at_phase(const Circuit& c, double deg) {
  SolveOptions o;
  o.scenario.source_phases.push_back({*c.find_element("mains"), deg * std::numbers::pi / 180.0});
  return o;
}

void register_all() {
  benchmark::RegisterBenchmark("diodes/solve_1s",
                               [](benchmark::State& state) {
                                 const Circuit& c = bridge();
                                 std::size_t events = 0, segments = 0;
                                 for (auto _ : state) {
                                   const Solution s = solve(c);
                                   events = diode_events(s);
                                   segments = s.segments().size();
                                   benchmark::DoNotOptimize(&s);
                                 }
                                 g_events = events;
                                 const Solution last = solve(c);
                                 g_conducts = diode_events(last.schedule().events, EventKind::diode_conducts);
                                 g_blocks = diode_events(last.schedule().events, EventKind::diode_blocks);
                                 g_segments = segments;
                                 state.counters["diode_events"] = static_cast<double>(events);
                                 state.counters["segments"] = static_cast<double>(segments);
                               })
      ->Unit(benchmark::kMillisecond)
      ->MinTime(0.5)
      ->Repetitions(5)
      ->UseRealTime();
  benchmark::RegisterBenchmark("diodes/solve_1s_and_pieces",
                               [](benchmark::State& state) {
                                 const Circuit& c = bridge();
                                 for (auto _ : state) {
                                   const Solution s = solve(c);
                                   std::vector<Piece> p = s.pieces(s.observables().front());
                                   std::vector<Piece> q = s.pieces(s.observables().back());
                                   benchmark::DoNotOptimize(&p);
                                   benchmark::DoNotOptimize(&q);
                                 }
                                 const Solution s = solve(c);
                                 g_peak_fuse = compute_figures(s, s.observables().front()).peak;
                               })
      ->Unit(benchmark::kMillisecond)
      ->MinTime(0.5)
      ->Repetitions(3)
      ->UseRealTime();
  benchmark::RegisterBenchmark("diodes/cvode_verify_1s",
                               [](benchmark::State& state) {
                                 static const Solution s = solve(bridge());
                                 VerifyReport r;
                                 for (auto _ : state) {
                                   r = verify_closed_form(s);
                                   benchmark::DoNotOptimize(&r);  // not the double itself: see bench/README.md
                                 }
                                 g_passed = r.passed;
                                 g_max_rel = r.max_rel_error;
                                 g_samples = r.samples;
                                 g_event_err = r.max_event_time_error;
                                 g_closed_events = r.closed_events;
                                 g_numeric_events = diode_events(r.numerical.events);
                                 g_numeric_conducts = diode_events(r.numerical.events, EventKind::diode_conducts);
                                 state.counters["max_rel_err"] = r.max_rel_error;
                                 state.counters["steps"] = static_cast<double>(r.stats.steps);
                                 state.counters["passed"] = r.passed ? 1.0 : 0.0;
                               })
      ->Unit(benchmark::kMillisecond)
      ->Iterations(1)
      ->Repetitions(3)
      ->UseRealTime();
  benchmark::RegisterBenchmark("diodes/sweep_360_worst",
                               [](benchmark::State& state) {
                                 const Circuit& c = circuit(sweep_text());
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
      ->Iterations(1)
      ->Repetitions(3)
      ->UseRealTime();
  benchmark::RegisterBenchmark("diodes/sweep_360_solves",
                               [](benchmark::State& state) {
                                 const Circuit& c = bridge();
                                 std::vector<SolveOptions> phases;
                                 for (int deg = -180; deg < 180; ++deg) phases.push_back(at_phase(c, deg));
                                 for (auto _ : state) {
                                   auto cache = std::make_shared<NetworkCache>(c);
                                   std::size_t events = 0;
                                   for (const SolveOptions& o : phases) events += diode_events(solve(c, o, cache));
                                   benchmark::DoNotOptimize(&events);
                                 }
                               })
      ->Unit(benchmark::kMillisecond)
      ->Iterations(1)
      ->Repetitions(3)
      ->UseRealTime();
  benchmark::RegisterBenchmark("diodes/cvode_one_run",
                               [](benchmark::State& state) {
                                 const Circuit& c = bridge();
                                 std::vector<std::unique_ptr<Solution>> schedules;
                                 for (double deg : {-180.0, -97.3, -12.5, 45.0, 133.7})
                                   schedules.push_back(std::make_unique<Solution>(solve(c, at_phase(c, deg))));
                                 std::size_t k = 0;
                                 long steps = 0;
                                 for (auto _ : state) {
                                   NumericalRun run = integrate_inputs(*schedules[k++ % schedules.size()],
                                                                       IntegrateOptions{integrator_rtol_for(1e-6), 0.0, 5'000'000});
                                   steps = run.stats.steps;
                                   benchmark::DoNotOptimize(&run);
                                 }
                                 state.counters["steps"] = static_cast<double>(steps);
                               })
      ->Unit(benchmark::kMillisecond)
      ->Iterations(5)
      ->Repetitions(3)
      ->UseRealTime();
}

void summarize(const Timings& t, Summary& s) {
  const double solve_s = t.seconds("diodes/solve_1s");
  const double pieces_s = t.seconds("diodes/solve_1s_and_pieces");
  const double verify_s = t.seconds("diodes/cvode_verify_1s");
  const double worst_s = t.seconds("diodes/sweep_360_worst");
  const double plain_s = t.seconds("diodes/sweep_360_solves");
  const double run_s = t.seconds("diodes/cvode_one_run");
  if (!std::isnan(solve_s))
    s.figure("(a) bridge rectifier inrush over 1 s at 50 Hz: solve", solve_s * 1e3, "ms", 50.0,
             fmt::format("{} diode events ({} conducts, {} blocks), {} segments", g_events, g_conducts,
                         g_blocks, g_segments));
  if (!std::isnan(pieces_s))
    s.figure("(a) the same + the pieces of fuse.i and bulk.v", pieces_s * 1e3, "ms", 50.0,
             fmt::format("peak |fuse.i| {:.6g} A", g_peak_fuse));
  if (!std::isnan(verify_s) && !std::isnan(solve_s))
    s.speedup("(c) of (a): CVODE cross-check (verify_closed_form) / solve", verify_s, solve_s, 100,
              fmt::format("{} samples; max rel difference {:.2g}, {}; events {} closed form, {} CVODE ({} conducts), "
                          "largest time difference {:.3g} s",
                          g_samples, g_max_rel, g_passed ? "passed" : "FAILED", g_closed_events,
                          g_numeric_events, g_numeric_conducts, g_event_err));
  if (!std::isnan(worst_s))
    s.figure("(b) 360-point closing-angle sweep: find_worst_case on fuse.i", worst_s, "s", 2.0,
             fmt::format("{} grid points then refinement; worst peak |fuse.i| {:.6g} A at {:.4g} deg", g_grid_points,
                         g_worst, g_worst_at * 180.0 / std::numbers::pi));
  if (!std::isnan(plain_s))
    s.figure("(b) 360 plain solves (phase through the scenario, shared NetworkCache)", plain_s, "s", 2.0, "");
  if (!std::isnan(run_s)) {
    if (!std::isnan(worst_s))
      s.speedup("(c) of (b): 361 CVODE runs (extrapolated) / find_worst_case sweep", kSweepPoints * run_s, worst_s,
                100,
                fmt::format("361 x {} per run, {:.0f} steps per run (grid points only: the refinement's "
                            "solves are not counted, which favours CVODE)",
                            Summary::seconds_text(run_s), t.counter("diodes/cvode_one_run", "steps")));
    if (!std::isnan(plain_s))
      s.speedup("(c) of (b): 360 CVODE runs (extrapolated) / 360 plain solves", 360.0 * run_s, plain_s, 100,
                fmt::format("360 x {} per run", Summary::seconds_text(run_s)));
  }
}

}  // namespace

int main(int argc, char** argv) {
  register_all();
  return netfold::bench::run_benchmarks(argc, argv, summarize);
}
