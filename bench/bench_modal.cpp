// The modal closed form of n states (src/response/modal.hpp) against a reference integration of
// the same state equation dx/dt = A·x + B·u(t), on 10^4 intervals (10^4 + 1 samples), in one run.
//
//   closed_form/N      decompose(A) + solve_modal + three outputs (the first state, the last one
//                      and the sum of all) as Responses, each sampled on the grid (`sample`)
//   closed_form_states/N   the same with every one of the N states sampled (all of x on the grid)
//   cvode/N            CVODE BDF with the dense direct solver and the exact Jacobian, rtol 1e-10,
//                      atol 1e-12·max|x0|, stepping to every sample and forming the same three
//                      outputs; its counter max_rel_err is the largest difference from the closed
//                      form relative to each output's largest value
//   modes/1000, decompose/1000, closed_form/1000   the eigenvalues alone (balanced, Eigen's real
//                      EigenSolver), the whole decomposition, and the closed form as above, for
//                      1000 states
// The systems: A = G/√N − 1.2·I with G standard normal (a random stable matrix, eigenvalues in a
// disc of radius about 1 around −1.2, a few of them nearly critically damped pairs), two inputs
// (DC 1.5 and a 0.7 Hz phasor; a 2.3 Hz phasor), a window of 10 s.
#include <random>

#include <cvode/cvode.h>
#include <nvector/nvector_serial.h>
#include <sunlinsol/sunlinsol_dense.h>
#include <sunmatrix/sunmatrix_dense.h>

#include "bench_common.hpp"
#include "response/modal.hpp"

namespace {

using namespace netfold;
using namespace netfold::bench;
using namespace netfold::response;

constexpr std::size_t kIntervals = 10'000;
constexpr double kT0 = 0.0, kT1 = 10.0;

struct System {
  Eigen::MatrixXd a, b;
  Eigen::VectorXd x0;
  std::vector<Drive> inputs;
  std::vector<Eigen::RowVectorXd> outputs;  // rows c of y = c·x
};

const System& system_of(int n) {
  static std::map<int, System> cache;
  auto it = cache.find(n);
  if (it != cache.end()) return it->second;
  System s;
  std::mt19937_64 rng(static_cast<std::uint64_t>(n) * 7919u);
  std::normal_distribution<double> normal;
  s.a.resize(n, n);
  for (int i = 0; i < n; ++i)
    for (int k = 0; k < n; ++k) s.a(i, k) = normal(rng) / std::sqrt(static_cast<double>(n));
  s.a.diagonal().array() -= 1.2;
  s.b.resize(n, 2);
  s.x0.resize(n);
  for (int i = 0; i < n; ++i) s.b(i, 0) = normal(rng), s.b(i, 1) = normal(rng), s.x0(i) = normal(rng);
  Drive u1, u2;
  u1.dc = 1.5;
  u1.add_phasor(0.7, {0.4, -0.3});
  u2.add_phasor(2.3, {0.0, 0.5});
  s.inputs = {u1, u2};
  Eigen::RowVectorXd first = Eigen::RowVectorXd::Zero(n), last = first;
  first(0) = 1.0;
  last(n - 1) = 1.0;
  s.outputs = {first, last, Eigen::RowVectorXd::Ones(n)};
  return cache.emplace(n, std::move(s)).first->second;
}

// The three outputs on the grid by the closed form.
std::vector<std::vector<double>> closed_form(const System& s, bool all_states) {
  const ModalResponse m = solve_modal(s.a, s.b, s.x0, s.inputs, kT0, kT1);
  if (!m.accuracy().ok) throw std::runtime_error("closed form flagged: " + m.accuracy().reason);
  std::vector<std::vector<double>> out;
  const Eigen::RowVectorXd no_direct = Eigen::RowVectorXd::Zero(2);
  for (const auto& c : s.outputs) out.push_back(sample(m.output(c, no_direct), kT0, kT1, kIntervals));
  if (all_states)
    for (int i = 0; i < m.states(); ++i) out.push_back(sample(m.state(i), kT0, kT1, kIntervals));
  return out;
}

struct CvodeData {
  const System* s;
};

int rhs(sunrealtype t, N_Vector y, N_Vector ydot, void* user) {
  const System& s = *static_cast<CvodeData*>(user)->s;
  const auto n = s.a.rows();
  Eigen::Map<const Eigen::VectorXd> x(N_VGetArrayPointer(y), n);
  Eigen::Map<Eigen::VectorXd> dx(N_VGetArrayPointer(ydot), n);
  dx.noalias() = s.a * x;
  for (std::size_t j = 0; j < s.inputs.size(); ++j) dx += s.b.col(static_cast<Eigen::Index>(j)) * s.inputs[j].value(t);
  return 0;
}

int jacobian(sunrealtype, N_Vector, N_Vector, SUNMatrix jac, void* user, N_Vector, N_Vector, N_Vector) {
  const System& s = *static_cast<CvodeData*>(user)->s;
  const auto n = s.a.rows();
  Eigen::Map<Eigen::MatrixXd>(SUNDenseMatrix_Data(jac), n, n) = s.a;  // column-major, as Eigen
  return 0;
}

// The three outputs on the grid by CVODE.
std::vector<std::vector<double>> integrate(const System& s) {
  const auto n = s.a.rows();
  SUNContext ctx = nullptr;
  SUNContext_Create(nullptr, &ctx);
  N_Vector y = N_VNew_Serial(n, ctx);
  Eigen::Map<Eigen::VectorXd>(N_VGetArrayPointer(y), n) = s.x0;
  SUNMatrix jac = SUNDenseMatrix(n, n, ctx);
  SUNLinearSolver ls = SUNLinSol_Dense(y, jac, ctx);
  void* mem = CVodeCreate(CV_BDF, ctx);
  CvodeData data{&s};
  CVodeInit(mem, rhs, kT0, y);
  CVodeSStolerances(mem, 1e-10, 1e-12 * s.x0.cwiseAbs().maxCoeff());
  CVodeSetLinearSolver(mem, ls, jac);
  CVodeSetJacFn(mem, jacobian);
  CVodeSetUserData(mem, &data);
  CVodeSetMaxNumSteps(mem, 10'000'000);
  std::vector<std::vector<double>> out(s.outputs.size(), std::vector<double>(kIntervals + 1));
  Eigen::Map<Eigen::VectorXd> x(N_VGetArrayPointer(y), n);
  for (std::size_t i = 0; i <= kIntervals; ++i) {
    const double t = i == kIntervals ? kT1 : kT0 + (kT1 - kT0) * static_cast<double>(i) / kIntervals;
    sunrealtype reached = kT0;
    if (i > 0 && CVode(mem, t, y, &reached, CV_NORMAL) < 0) throw std::runtime_error("CVODE failed");
    for (std::size_t k = 0; k < s.outputs.size(); ++k) out[k][i] = s.outputs[k].dot(x);
  }
  CVodeFree(&mem);
  SUNLinSolFree(ls);
  SUNMatDestroy(jac);
  N_VDestroy(y);
  SUNContext_Free(&ctx);
  return out;
}

double max_relative_difference(const std::vector<std::vector<double>>& a, const std::vector<std::vector<double>>& b) {
  double worst = 0.0;
  for (std::size_t k = 0; k < b.size(); ++k) {
    double scale = 0.0, diff = 0.0;
    for (std::size_t i = 0; i < b[k].size(); ++i) {
      scale = std::max(scale, std::fabs(b[k][i]));
      diff = std::max(diff, std::fabs(a[k][i] - b[k][i]));
    }
    worst = std::max(worst, diff / scale);
  }
  return worst;
}

void BM_closed_form(benchmark::State& state) {
  const System& s = system_of(static_cast<int>(state.range(0)));
  for (auto _ : state) benchmark::DoNotOptimize(closed_form(s, false));
}

void BM_closed_form_states(benchmark::State& state) {
  const System& s = system_of(static_cast<int>(state.range(0)));
  for (auto _ : state) benchmark::DoNotOptimize(closed_form(s, true));
}

void BM_cvode(benchmark::State& state) {
  const System& s = system_of(static_cast<int>(state.range(0)));
  std::vector<std::vector<double>> ref;
  for (auto _ : state) ref = integrate(s);
  state.counters["max_rel_err"] = max_relative_difference(closed_form(s, false), ref);
}

void BM_modes(benchmark::State& state) {
  const System& s = system_of(static_cast<int>(state.range(0)));
  for (auto _ : state) benchmark::DoNotOptimize(modes_of(s.a));
}

void BM_decompose(benchmark::State& state) {
  const System& s = system_of(static_cast<int>(state.range(0)));
  for (auto _ : state) benchmark::DoNotOptimize(decompose(s.a, kT1 - kT0));
}

BENCHMARK(BM_closed_form)->Arg(2)->Arg(10)->Arg(200)->Unit(benchmark::kMillisecond)->Repetitions(5);
BENCHMARK(BM_closed_form_states)->Arg(2)->Arg(10)->Arg(200)->Unit(benchmark::kMillisecond)->Repetitions(5);
BENCHMARK(BM_cvode)->Arg(2)->Arg(10)->Arg(200)->Unit(benchmark::kMillisecond)->Repetitions(5);
BENCHMARK(BM_modes)->Arg(1000)->Unit(benchmark::kMillisecond)->Iterations(1)->Repetitions(3);
BENCHMARK(BM_decompose)->Arg(1000)->Unit(benchmark::kMillisecond)->Iterations(1)->Repetitions(3);
BENCHMARK(BM_closed_form)->Arg(1000)->Unit(benchmark::kMillisecond)->Iterations(1)->Repetitions(3);

}  // namespace

int main(int argc, char** argv) {
  return run_benchmarks(argc, argv, [](const Timings& t, Summary& s) {
    for (int n : {2, 10, 200}) {
      const std::string arg = "/" + std::to_string(n);
      s.speedup(fmt::format("modal closed form vs CVODE, n = {} (3 outputs, 10^4 intervals)", n),
                t.seconds("BM_cvode" + arg), t.seconds("BM_closed_form" + arg), 100.0,
                fmt::format("CVODE rtol 1e-10, max rel difference {:.1e}", t.counter("BM_cvode" + arg, "max_rel_err")));
      s.speedup(fmt::format("modal closed form of all states vs CVODE, n = {}", n), t.seconds("BM_cvode" + arg),
                t.seconds("BM_closed_form_states" + arg), 0.0, "every state sampled on the grid");
    }
    s.figure("modes of 1000 states", t.seconds("BM_modes/1000"), "s", 0.0, "balance + eigenvalues");
    s.figure("decomposition of 1000 states", t.seconds("BM_decompose/1000"), "s", 0.0,
             "balance, Schur, clusters, Sylvester decoupling, condition");
    s.figure("closed form of 1000 states", t.seconds("BM_closed_form/1000"), "s", 2.0,
             "decomposition + solution + 3 outputs sampled at 10^4 intervals");
  });
}
