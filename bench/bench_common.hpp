#pragma once
// Shared by the bench_*.cpp executables: circuits kept alive with their solutions, a console
// reporter that remembers every benchmark's time, and the summary of ratios printed at the end
// of the run, so that each ratio compares two timings taken in the same process, minutes apart.
//
// Each executable's main() is
//
//   int main(int argc, char** argv) {
//     return netfold::bench::run_benchmarks(argc, argv, [](const Timings& t, Summary& s) { ... });
//   }
//
// and the callback turns the timings into `RATIO ...` and `FIGURE ...` lines (run_all.sh
// collects them from every executable's output).

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <functional>
#include <iostream>
#include <map>
#include <memory>
#include <sstream>
#include <string>
#include <vector>

#include <benchmark/benchmark.h>
#include <fmt/format.h>

#include "netfold/parse.hpp"
#include "netfold/solve.hpp"

namespace netfold::bench {

/// A parsed circuit and (optionally) its solution, kept together: a Solution refers to its Circuit.
struct Prepared {
  std::unique_ptr<Circuit> circuit;
  std::unique_ptr<Solution> solution;
};

/// Parses `text`; with `solved`, also solves it.
inline Prepared prepare(const std::string& text, bool solved = true) {
  Prepared p;
  p.circuit = std::make_unique<Circuit>(parse_netlist(text, "generated.nf"));
  if (solved) p.solution = std::make_unique<Solution>(solve(*p.circuit));
  return p;
}

/// Seconds per iteration of every benchmark reported so far, by name ("BM_x/10000").
class Timings {
 public:
  /// Median over the repetitions (or the single run); NaN when the benchmark did not run.
  double seconds(const std::string& name) const {
    auto agg = medians_.find(name);
    if (agg != medians_.end()) return agg->second;
    auto it = samples_.find(name);
    if (it == samples_.end() || it->second.empty()) return std::nan("");
    std::vector<double> v = it->second;
    std::sort(v.begin(), v.end());
    const std::size_t m = v.size() / 2;
    return v.size() % 2 ? v[m] : 0.5 * (v[m - 1] + v[m]);
  }
  bool has(const std::string& name) const { return !std::isnan(seconds(name)); }
  /// A user counter of the benchmark's last run (NaN when absent).
  double counter(const std::string& name, const std::string& key) const {
    auto it = counters_.find(name);
    if (it == counters_.end()) return std::nan("");
    auto c = it->second.find(key);
    return c == it->second.end() ? std::nan("") : c->second;
  }
  /// Every timing, min and max over the repetitions, for the spread printed in the summary.
  double spread(const std::string& name) const {
    auto it = samples_.find(name);
    if (it == samples_.end() || it->second.size() < 2) return 0.0;
    auto [lo, hi] = std::minmax_element(it->second.begin(), it->second.end());
    return *lo > 0.0 ? *hi / *lo - 1.0 : 0.0;
  }

  void add(const benchmark::BenchmarkReporter::Run& run) {
    const std::string name = run.run_name.function_name + (run.run_name.args.empty() ? "" : "/" + run.run_name.args);
    const double s = run.GetAdjustedRealTime() / benchmark::GetTimeUnitMultiplier(run.time_unit);
    if (run.run_type == benchmark::BenchmarkReporter::Run::RT_Aggregate) {
      if (run.aggregate_name == "median") medians_[name] = s;
      return;
    }
    samples_[name].push_back(s);
    for (const auto& [key, c] : run.counters) counters_[name][key] = c.value;
  }

 private:
  std::map<std::string, double> medians_;
  std::map<std::string, std::vector<double>> samples_;
  std::map<std::string, std::map<std::string, double>> counters_;
};

/// The console reporter, which also hands every run to a Timings.
class RecordingReporter : public benchmark::ConsoleReporter {
 public:
  explicit RecordingReporter(Timings& timings) : timings_(timings) {}
  void ReportRuns(const std::vector<Run>& runs) override {
    for (const Run& r : runs)
      if (!r.error_occurred) timings_.add(r);
    benchmark::ConsoleReporter::ReportRuns(runs);
  }

 private:
  Timings& timings_;
};

/// The lines printed after the benchmarks: ratios against their targets, and figures.
class Summary {
 public:
  /// `slow` / `fast` as a speed-up, against `target` (met when ≥ target; target 0 = none).
  void speedup(const std::string& label, double slow_s, double fast_s, double target, const std::string& how) {
    const double r = slow_s / fast_s;
    lines_.push_back(fmt::format("RATIO {}: {:.3g}x  ({} / {}){}  [{}]", label, r, seconds_text(slow_s),
                                 seconds_text(fast_s), verdict(target > 0.0, r >= target, fmt::format(">= {}x", target)),
                                 how));
  }
  /// `value` / `reference` as a cost multiple, against `target` (met when ≤ target; 0 = none).
  void multiple(const std::string& label, double value_s, double reference_s, double target, const std::string& how) {
    const double r = value_s / reference_s;
    lines_.push_back(fmt::format("RATIO {}: {:.3g}x  ({} / {}){}  [{}]", label, r, seconds_text(value_s),
                                 seconds_text(reference_s),
                                 verdict(target > 0.0, r <= target, fmt::format("<= {}x", target)), how));
  }
  /// A single measured value with an optional upper limit (0 = none).
  void figure(const std::string& label, double value, const std::string& unit, double limit, const std::string& how) {
    lines_.push_back(fmt::format("FIGURE {}: {:.4g} {}{}  [{}]", label, value, unit,
                                 verdict(limit > 0.0, value <= limit, fmt::format("<= {} {}", limit, unit)), how));
  }
  void note(const std::string& text) { lines_.push_back("NOTE " + text); }
  void print(std::ostream& out) const {
    out << "\n==== summary (ratios of timings taken in this run; medians over the repetitions) ====\n";
    for (const auto& l : lines_) out << l << '\n';
  }

  static std::string seconds_text(double s) {
    if (std::isnan(s)) return "n/a";
    if (s >= 1.0) return fmt::format("{:.3g} s", s);
    if (s >= 1e-3) return fmt::format("{:.3g} ms", s * 1e3);
    return fmt::format("{:.3g} us", s * 1e6);
  }

 private:
  std::vector<std::string> lines_;
  static std::string verdict(bool has_target, bool met, const std::string& target) {
    if (!has_target) return "";
    return fmt::format("  target {}: {}", target, met ? "MET" : "NOT MET");
  }
};

/// Runs the registered benchmarks with a RecordingReporter, then `summarize` (when every
/// benchmark was run: a --benchmark_filter run prints what it can), then the summary.
inline int run_benchmarks(int argc, char** argv, const std::function<void(const Timings&, Summary&)>& summarize) {
  benchmark::Initialize(&argc, argv);
  if (benchmark::ReportUnrecognizedArguments(argc, argv)) return 1;
  Timings timings;
  RecordingReporter reporter(timings);
  benchmark::RunSpecifiedBenchmarks(&reporter);
  Summary summary;
  summarize(timings, summary);
  summary.print(std::cout);
  benchmark::Shutdown();
  return 0;
}

/// A scratch directory for generated files: $NETFOLD_BENCH_TMP, else /tmp/netfold_bench.
inline std::filesystem::path scratch_dir() {
  const char* env = std::getenv("NETFOLD_BENCH_TMP");
  std::filesystem::path dir = env && *env ? env : "/tmp/netfold_bench";
  std::filesystem::create_directories(dir);
  return dir;
}

/// Writes `text` to `path` (for the parse and memory benchmarks, which read real files).
inline void write_file(const std::filesystem::path& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out.write(text.data(), static_cast<std::streamsize>(text.size()));
}

/// Wall-clock seconds of one call.
template <class F>
double time_once(F&& f) {
  auto t0 = std::chrono::steady_clock::now();
  f();
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
}

}  // namespace netfold::bench
