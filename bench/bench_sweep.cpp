// Issue 7 (b), and issue 5's figure: the worst case over a 3600-point phase sweep of the ladder of
// 48 sections (99 elements: a 325 V 50 Hz source closed onto the ladder at t = 0 by K1, the
// inductor L1 at its far end), `sweep V1.phase -180 deg .. 180 deg step 0.1 deg`, by the closed form
// (find_worst_case: 3601 grid responses, each peak found exactly, then golden-section refinement),
// versus 3600 numerical runs, extrapolated from a few: each is one CVODE integration of the full
// nodal equations over the window on the default sample grid (integrate_inputs with the
// cross-check's tolerance, rtol 1e-10; and with a loose rtol 1e-6, where CVODE does fewer steps)
// at a phase of the sweep.
#include <numbers>

#include "bench_common.hpp"
#include "netfold/integrate.hpp"
#include "netfold/verify.hpp"
#include "netfold/worst.hpp"
#include "network_generator.hpp"

namespace {

using namespace netfold;
using namespace netfold::bench;

constexpr double kSweepPoints = 3600;

const Circuit& ladder() {
  static const Prepared p = [] {
    LadderOptions o;
    o.extra = "watch L1.i\nsweep V1.phase -180 deg .. 180 deg step 0.1 deg\n";
    return prepare(generate_ladder(o).text, false);
  }();
  return *p.circuit;
}

std::size_t g_grid_points = 0;
double g_worst = 0.0, g_worst_at = 0.0;

void register_all() {
  benchmark::RegisterBenchmark("sweep/closed_form_3600_points",
                               [](benchmark::State& state) {
                                 const Circuit& c = ladder();
                                 for (auto _ : state) {
                                   WorstReport r = find_worst_case(c, c.sweeps());
                                   g_grid_points = r.sweeps.front().grid.size();
                                   g_worst = r.sweeps.front().observables.front().worst;
                                   g_worst_at = r.sweeps.front().observables.front().worst_at;
                                   benchmark::DoNotOptimize(&r);  // not a double lvalue: see bench/README.md
                                 }
                                 state.counters["grid_points"] = static_cast<double>(g_grid_points);
                                 state.counters["elements"] = static_cast<double>(c.elements().size());
                               })
      ->Unit(benchmark::kMillisecond)
      ->MinTime(0.5)
      ->Repetitions(5)
      ->UseRealTime();

  auto numerical = [](double rtol) {
    return [rtol](benchmark::State& state) {
      const Circuit& c = ladder();
      const ElementId v1 = *c.find_element("V1");
      // A few phases of the sweep, in turn; each run integrates the window at one phase.
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
}

void summarize(const Timings& t, Summary& s) {
  const double cf = t.seconds("sweep/closed_form_3600_points");
  if (std::isnan(cf)) return;
  s.figure("(issue 5) worst case over the 3600-point phase sweep, 99 elements", cf * 1e3, "ms", 0,
           fmt::format("{} grid points; worst peak |L1.i| {:.6g} A at {:.4g} deg", g_grid_points, g_worst,
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

}  // namespace

int main(int argc, char** argv) {
  register_all();
  return netfold::bench::run_benchmarks(argc, argv, summarize);
}
