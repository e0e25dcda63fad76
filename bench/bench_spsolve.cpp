// Issue 7 (d): the project's solve of G·X = B versus scipy.sparse.linalg.spsolve on the same
// matrix and right-hand sides. For grids of 10^5 and 10^6 nodes:
//   netfold_solve/grid_N   factor_nodal_matrix(G, spd) then solve(B): what ReducedNetwork does
//                          (CHOLMOD simplicial LLᵀ on the equilibrated G, both input columns)
// After the benchmarks, G, B and the project's X are written as Matrix Market files to the
// scratch directory, and bench/scipy_spsolve.py (run with /usr/bin/python3, Debian's scipy) times
// spsolve(G, B) on them (G converted to CSC outside the timing) and checks its X against ours.
// The ratio scipy / netfold is printed with the rest of the summary. --no_scipy skips that step.
#include <cstdio>
#include <cstring>

#include "bench_common.hpp"
#include "network/linear_solver.hpp"
#include "matrix_market.hpp"
#include "netfold/mna.hpp"
#include "network_generator.hpp"

#ifndef NETFOLD_BENCH_DIR
#define NETFOLD_BENCH_DIR "bench"
#endif

namespace {

using namespace netfold;
using namespace netfold::bench;

const std::vector<std::size_t> kSizes = {100'000, 1'000'000};
bool g_run_scipy = true;
int g_scipy_repeat = 3;

struct GridCase {
  Prepared prepared;
  NodalSystem system;
};

GridCase& grid_case(std::size_t nodes) {
  static std::map<std::size_t, std::unique_ptr<GridCase>> cases;
  auto& slot = cases[nodes];
  if (!slot) {
    slot = std::make_unique<GridCase>();
    GridOptions o;
    o.rows = o.cols = grid_side_for(nodes);
    slot->prepared = prepare(generate_grid(o).text, false);
    const Circuit& c = *slot->prepared.circuit;
    slot->system = build_nodal_system(c, positions_before_zero(c));
  }
  return *slot;
}

std::string name(std::size_t n) { return fmt::format("netfold_solve/grid_{}", n); }

void register_all() {
  for (std::size_t n : kSizes)
    benchmark::RegisterBenchmark(name(n).c_str(),
                                 [n](benchmark::State& state) {
                                   GridCase& g = grid_case(n);
                                   const Eigen::MatrixXd b = Eigen::MatrixXd(g.system.inputs());
                                   for (auto _ : state) {
                                     auto f = factor_nodal_matrix(g.system.matrix(),
                                                                  g.system.symmetric_positive_definite());
                                     Eigen::MatrixXd x = f->solve(b);
                                     benchmark::DoNotOptimize(x.data());
                                   }
                                   state.counters["unknowns"] = static_cast<double>(g.system.unknown_count());
                                   state.counters["nnz_G"] = static_cast<double>(g.system.matrix().nonZeros());
                                 })
        ->Unit(benchmark::kMillisecond)
        ->MinTime(0.01)
        ->Repetitions(n >= 1'000'000 ? 3 : 5)
        ->UseRealTime();
}

// Runs a command and returns its standard output.
std::string run_command(const std::string& command) {
  std::string out;
  std::FILE* p = popen(command.c_str(), "r");
  if (!p) return out;
  char buf[4096];
  std::size_t k;
  while ((k = std::fread(buf, 1, sizeof buf, p)) > 0) out.append(buf, k);
  pclose(p);
  return out;
}

// The text after `key ` on its line of the script's output ("" when absent).
std::string text_of(const std::string& output, const std::string& key) {
  std::istringstream in(output);
  std::string line;
  while (std::getline(in, line))
    if (line.rfind(key + " ", 0) == 0) return line.substr(key.size() + 1);
  return "";
}

// The number after `key ` (NaN when absent).
double value_of(const std::string& output, const std::string& key) {
  const std::string t = text_of(output, key);
  return t.empty() ? std::nan("") : std::strtod(t.c_str(), nullptr);
}

void summarize(const Timings& t, Summary& s) {
  for (std::size_t n : kSizes) {
    if (!t.has(name(n))) continue;
    const double ours = t.seconds(name(n));
    if (!g_run_scipy) {
      s.figure(fmt::format("(d) grid {} nodes: netfold factor + solve", n), ours, "s", 0, "scipy not run");
      continue;
    }
    GridCase& g = grid_case(n);
    const std::filesystem::path dir = scratch_dir();
    const auto gp = dir / fmt::format("spsolve_grid_{}_G.mtx", n), bp = dir / fmt::format("spsolve_grid_{}_B.mtx", n),
               xp = dir / fmt::format("spsolve_grid_{}_X.mtx", n);
    const Eigen::MatrixXd b = Eigen::MatrixXd(g.system.inputs());
    const Eigen::MatrixXd x = factor_nodal_matrix(g.system.matrix(), g.system.symmetric_positive_definite())->solve(b);
    write_matrix_market(gp, g.system.matrix());
    write_matrix_market(bp, b);
    write_matrix_market(xp, x);
    const std::string cmd = fmt::format("/usr/bin/python3 {}/scipy_spsolve.py --repeat {} --reference {} {} {}",
                                        NETFOLD_BENCH_DIR, g_scipy_repeat, xp.string(), gp.string(), bp.string());
    std::cout << "running: " << cmd << std::endl;
    const std::string out = run_command(cmd);
    std::cout << out;
    const double theirs = value_of(out, "spsolve_seconds_median");
    if (std::isnan(theirs)) {
      s.note(fmt::format("(d) grid {} nodes: scipy_spsolve.py gave no time", n));
      continue;
    }
    s.speedup(fmt::format("(d) grid {} nodes: scipy spsolve / netfold factor + solve", n), theirs, ours,
              n >= 1'000'000 ? 2.0 : 0.0,
              fmt::format("{} unknowns, {} right-hand sides; scipy {} SuperLU (COLAMD); X agrees to {:.2g}",
                          g.system.unknown_count(), b.cols(), text_of(out, "scipy_version"),
                          value_of(out, "max_rel_diff_vs_reference")));
  }
}

}  // namespace

int main(int argc, char** argv) {
  // Our own flags, removed before Google Benchmark sees the rest.
  int kept = 1;
  for (int i = 1; i < argc; ++i) {
    if (std::strcmp(argv[i], "--no_scipy") == 0) {
      g_run_scipy = false;
    } else if (std::strncmp(argv[i], "--scipy_repeat=", 15) == 0) {
      g_scipy_repeat = std::atoi(argv[i] + 15);
    } else {
      argv[kept++] = argv[i];
    }
  }
  register_all();
  return netfold::bench::run_benchmarks(kept, argv, summarize);
}
