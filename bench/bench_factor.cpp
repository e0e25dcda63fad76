// Issue 7 (c) and (e): end-to-end reduction of a resistive grid versus the bare factorization of
// its nodal matrix, with the factorization's alternatives beside it (where the time goes, and
// what another choice would cost), and the size of the factor.
//
// For each grid of 10^3 … 10^6 nodes (network_generator.hpp, one capacitor, one grounded source,
// one switch configuration):
//   solve/grid_N          netfold::solve(circuit): assembly, factorization, X = G⁻¹·B, closed form
//   build/grid_N          build_nodal_system alone
//   factor/grid_N         factor_nodal_matrix(G, spd) alone: what the engine factors (CHOLMOD
//                         simplicial LLᵀ, after the symmetric equilibration and the rcond)
//   factor_solve/grid_N   the same plus the solve for every input column, X = G⁻¹·B
//   cholmod_analyze/…, cholmod_factorize/…  the two halves of CHOLMOD simplicial LLᵀ (Eigen's
//                         wrapper; CHOLMOD's default ordering choice)
//   cholmod_supernodal/…  CHOLMOD supernodal LLᵀ (BLAS level 3: Debian's reference libblas3)
//   cholmod_metis/…       CHOLMOD simplicial LLᵀ with METIS nested dissection forced
//   cholmod_metis_supernodal/…  both: METIS ordering, supernodal LLᵀ
//   eigen_ldlt/…          Eigen's own SimplicialLDLT (AMD ordering)
//   klu/…                 KLU on the same (symmetric) matrix, the unsymmetric path
// Counters: unknowns, nnz(G), lnz (nonzeros of L) and the factor's bytes (lnz × 12: a double and
// an int index per entry), flops of the factorization as CHOLMOD counts them.
#include <Eigen/CholmodSupport>
#include <Eigen/KLUSupport>
#include <Eigen/SparseCholesky>
#include <string_view>

#include "bench_common.hpp"
#include "network/linear_solver.hpp"
#include "netfold/mna.hpp"
#include "network_generator.hpp"

namespace {

using namespace netfold;
using namespace netfold::bench;
using SpMat = Eigen::SparseMatrix<double>;

const std::vector<std::size_t> kSizes = {1'000, 10'000, 100'000, 1'000'000};

struct GridCase {
  Prepared prepared;  // parsed only
  NodalSystem system;
  std::size_t elements = 0;
};

// One grid per size, built on first use and kept for every benchmark of the run.
GridCase& grid_case(std::size_t nodes) {
  static std::map<std::size_t, std::unique_ptr<GridCase>> cases;
  auto& slot = cases[nodes];
  if (!slot) {
    slot = std::make_unique<GridCase>();
    GridOptions o;
    o.rows = o.cols = grid_side_for(nodes);
    GeneratedNetwork net = generate_grid(o);
    slot->elements = net.elements;
    slot->prepared = prepare(net.text, false);
    const Circuit& c = *slot->prepared.circuit;
    slot->system = build_nodal_system(c, positions_before_zero(c));
  }
  return *slot;
}

std::string name(const char* what, std::size_t nodes) { return fmt::format("{}/grid_{}", what, nodes); }

void set_matrix_counters(benchmark::State& state, const SpMat& g) {
  state.counters["unknowns"] = static_cast<double>(g.rows());
  state.counters["nnz_G"] = static_cast<double>(g.nonZeros());
}

// CHOLMOD simplicial LLᵀ with access to the factor's statistics.
class CholmodSimplicial : public Eigen::CholmodSimplicialLLT<SpMat, Eigen::Lower> {
 public:
  double lnz() { return cholmod().lnz; }
  double flops() { return cholmod().fl; }
  int ordering() { return cholmod().method[cholmod().selected].ordering; }
};

class CholmodSupernodal : public Eigen::CholmodSupernodalLLT<SpMat, Eigen::Lower> {
 public:
  double lnz() { return cholmod().lnz; }
};

class KluStats : public Eigen::KLU<SpMat> {
 public:
  double lu_nonzeros() const { return m_numeric ? static_cast<double>(m_numeric->lnz + m_numeric->unz) : 0.0; }
};

const char* ordering_name(int ordering) {
  switch (ordering) {
    case CHOLMOD_NATURAL: return "natural";
    case CHOLMOD_GIVEN: return "given";
    case CHOLMOD_AMD: return "AMD";
    case CHOLMOD_METIS: return "METIS";
    case CHOLMOD_NESDIS: return "NESDIS";
    case CHOLMOD_COLAMD: return "COLAMD";
    default: return "?";
  }
}

std::map<std::size_t, std::string> g_orderings;  // the ordering CHOLMOD chose, per size

void register_all() {
  for (std::size_t n : kSizes) {
    auto reg = [&](const char* what, auto body) {
      // The alternatives are evidence, not targets: one repetition at 10^6 nodes (each takes
      // 10 … 60 s there), five elsewhere; the engine's own stages three times at 10^6.
      const bool alternative = std::string_view(what).starts_with("cholmod_") || std::string_view(what) == "eigen_ldlt" ||
                               std::string_view(what) == "klu";
      const int reps = n < 1'000'000 ? 5 : alternative ? 1 : 3;
      benchmark::RegisterBenchmark(name(what, n).c_str(), body)
          ->Unit(benchmark::kMillisecond)
          ->MinTime(n >= 100'000 ? 0.01 : 0.3)
          ->Repetitions(reps)
          ->ReportAggregatesOnly(false)
          ->UseRealTime();
    };
    reg("solve", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      for (auto _ : state) {
        Solution s = solve(*g.prepared.circuit);
        benchmark::DoNotOptimize(s.segments().back().tau);
      }
      state.counters["elements"] = static_cast<double>(g.elements);
    });
    reg("build", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const Circuit& c = *g.prepared.circuit;
      for (auto _ : state) {
        NodalSystem sys = build_nodal_system(c, positions_before_zero(c));
        benchmark::DoNotOptimize(sys.matrix().nonZeros());
      }
    });
    reg("factor", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const SpMat& m = g.system.matrix();
      for (auto _ : state) {
        auto f = factor_nodal_matrix(m, g.system.symmetric_positive_definite());
        benchmark::DoNotOptimize(f->rcond());
      }
      set_matrix_counters(state, m);
    });
    reg("factor_solve", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const SpMat& m = g.system.matrix();
      const Eigen::MatrixXd b = Eigen::MatrixXd(g.system.inputs());
      for (auto _ : state) {
        auto f = factor_nodal_matrix(m, g.system.symmetric_positive_definite());
        Eigen::MatrixXd x = f->solve(b);
        benchmark::DoNotOptimize(x.data());
      }
    });
    reg("cholmod_analyze", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const SpMat& m = g.system.matrix();
      double lnz = 0, fl = 0;
      for (auto _ : state) {
        CholmodSimplicial llt;
        llt.analyzePattern(m);
        lnz = llt.lnz();
        fl = llt.flops();
        g_orderings[n] = ordering_name(llt.ordering());
      }
      set_matrix_counters(state, m);
      state.counters["lnz"] = lnz;
      state.counters["factor_bytes"] = 12.0 * lnz;
      state.counters["flops"] = fl;
    });
    reg("cholmod_factorize", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const SpMat& m = g.system.matrix();
      CholmodSimplicial llt;
      llt.analyzePattern(m);
      for (auto _ : state) {
        llt.factorize(m);
        benchmark::DoNotOptimize(llt.info());
      }
    });
    reg("cholmod_supernodal", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const SpMat& m = g.system.matrix();
      double lnz = 0;
      for (auto _ : state) {
        CholmodSupernodal llt;
        llt.compute(m);
        lnz = llt.lnz();
        benchmark::DoNotOptimize(llt.info());
      }
      state.counters["lnz"] = lnz;
    });
    reg("cholmod_metis", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const SpMat& m = g.system.matrix();
      double lnz = 0;
      for (auto _ : state) {
        CholmodSimplicial llt;
        llt.cholmod().nmethods = 1;
        llt.cholmod().method[0].ordering = CHOLMOD_METIS;
        llt.compute(m);
        lnz = llt.lnz();
        benchmark::DoNotOptimize(llt.info());
      }
      state.counters["lnz"] = lnz;
    });
    reg("cholmod_metis_supernodal", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const SpMat& m = g.system.matrix();
      double lnz = 0;
      for (auto _ : state) {
        CholmodSupernodal llt;
        llt.cholmod().nmethods = 1;
        llt.cholmod().method[0].ordering = CHOLMOD_METIS;
        llt.compute(m);
        lnz = llt.lnz();
        benchmark::DoNotOptimize(llt.info());
      }
      state.counters["lnz"] = lnz;
    });
    reg("eigen_ldlt", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const SpMat& m = g.system.matrix();
      for (auto _ : state) {
        Eigen::SimplicialLDLT<SpMat, Eigen::Lower> ldlt;
        ldlt.compute(m);
        benchmark::DoNotOptimize(ldlt.info());
      }
    });
    reg("klu", [n](benchmark::State& state) {
      GridCase& g = grid_case(n);
      const SpMat& m = g.system.matrix();
      double lu = 0;
      for (auto _ : state) {
        KluStats klu;
        klu.compute(m);
        lu = klu.lu_nonzeros();
        benchmark::DoNotOptimize(klu.info());
      }
      state.counters["nnz_LU"] = lu;
    });
  }
}

void summarize(const Timings& t, Summary& s) {
  for (std::size_t n : kSizes) {
    const std::string solve_name = name("solve", n), factor_name = name("factor", n);
    if (!t.has(solve_name) || !t.has(factor_name)) continue;
    s.multiple(fmt::format("(c) grid {} nodes: solve end to end / bare factorization", n), t.seconds(solve_name),
               t.seconds(factor_name), 1.5, "netfold::solve vs factor_nodal_matrix(NodalSystem::matrix())");
    if (t.has(name("build", n)))
      s.multiple(fmt::format("    grid {} nodes: build_nodal_system / bare factorization", n),
                 t.seconds(name("build", n)), t.seconds(factor_name), 0, "share of assembly");
    if (t.has(name("factor_solve", n)))
      s.multiple(fmt::format("    grid {} nodes: factor + solve(B) / bare factorization", n),
                 t.seconds(name("factor_solve", n)), t.seconds(factor_name), 0, "share of the triangular solves");
    const std::string an = name("cholmod_analyze", n), fa = name("cholmod_factorize", n);
    if (t.has(an) && t.has(fa)) {
      s.multiple(fmt::format("    grid {} nodes: CHOLMOD analyze / CHOLMOD numeric factorize", n), t.seconds(an),
                 t.seconds(fa), 0, fmt::format("ordering chosen: {}", g_orderings[n]));
      const double lnz = t.counter(an, "lnz");
      s.figure(fmt::format("(e) grid {} nodes: factor size", n), 12.0 * lnz / (1024.0 * 1024.0), "MiB", 0,
               fmt::format("lnz = {:.4g} x 12 bytes; nnz(G) = {:.4g}; flops {:.3g}", lnz, t.counter(an, "nnz_G"),
                           t.counter(an, "flops")));
    }
    for (const char* alt : {"cholmod_supernodal", "cholmod_metis", "cholmod_metis_supernodal", "eigen_ldlt", "klu"})
      if (t.has(name(alt, n)))
        s.multiple(fmt::format("    grid {} nodes: {} / engine factorization", n, alt), t.seconds(name(alt, n)),
                   t.seconds(factor_name), 0, "alternative factorizations of the same matrix");
  }
}

}  // namespace

int main(int argc, char** argv) {
  register_all();
  return netfold::bench::run_benchmarks(argc, argv, summarize);
}
