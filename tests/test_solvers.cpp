// The three factorizations of the nodal matrix (src/network/linear_solver.hpp) — dense LU, KLU and, for
// symmetric positive definite matrices, a sparse Cholesky (LDLT) — solve the same systems to the same
// answer, and the engine's results do not depend on which one a circuit's size selects.
//
// Systems: resistive grids, ladders and random networks with controlled sources from
// bench/network_generator.hpp, from a handful to a few thousand unknowns. Agreement is measured
// column by column, max_i |x_i − y_i| / max_i |y_i| ≤ 1e-10, and each solution's residual
// ‖G·X − B‖ / (‖G‖·‖X‖) is checked too, so that two paths cannot agree on a wrong answer.
#include <cmath>
#include <string>

#include "../bench/network_generator.hpp"
#include "engine_helpers.hpp"
#include "network/linear_solver.hpp"
#include "netfold/mna.hpp"

using namespace netfold;
using namespace netfold::testing;
using bench::generate_grid;
using bench::generate_ladder;
using bench::generate_random;

namespace {

constexpr double kAgreement = 1e-10;

// Largest column-wise relative difference max_j (max_i |a_ij − b_ij| / max_i |b_ij|).
double column_relative_difference(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b) {
  double worst = 0.0;
  for (Eigen::Index j = 0; j < b.cols(); ++j) {
    const double scale = b.col(j).cwiseAbs().maxCoeff();
    const double diff = (a.col(j) - b.col(j)).cwiseAbs().maxCoeff();
    worst = std::max(worst, scale > 0.0 ? diff / scale : diff);
  }
  return worst;
}

// ‖G·X − B‖_∞ / (‖G‖_∞·‖X‖_∞): the backward error of a solution.
double backward_error(const Eigen::SparseMatrix<double>& g, const Eigen::MatrixXd& x, const Eigen::MatrixXd& b) {
  const Eigen::MatrixXd r = g * x - b;
  double g_norm = 0.0;
  Eigen::VectorXd row_sums = Eigen::VectorXd::Zero(g.rows());
  for (Eigen::Index k = 0; k < g.outerSize(); ++k)
    for (Eigen::SparseMatrix<double>::InnerIterator it(g, k); it; ++it) row_sums[it.row()] += std::fabs(it.value());
  g_norm = row_sums.maxCoeff();
  return r.cwiseAbs().maxCoeff() / (g_norm * x.cwiseAbs().maxCoeff());
}

// A circuit parsed and kept alive with one configuration's nodal system.
struct System {
  std::unique_ptr<Circuit> circuit;
  NodalSystem nodal;
  Eigen::MatrixXd rhs;  // B, and a few fixed pseudo-random columns: several right-hand sides at once
};

System system_of(const std::string& text, bool switches_closed) {
  System s;
  s.circuit = std::make_unique<Circuit>(parse_netlist(text, "generated.nf"));
  SwitchPositions p = positions_before_zero(*s.circuit);
  if (switches_closed) p.closed.assign(p.closed.size(), true);
  s.nodal = build_nodal_system(*s.circuit, p);
  const Eigen::MatrixXd b = Eigen::MatrixXd(s.nodal.inputs());
  s.rhs.resize(b.rows(), b.cols() + 3);
  s.rhs.leftCols(b.cols()) = b;
  bench::SplitMix64 rng(42);
  for (Eigen::Index j = b.cols(); j < s.rhs.cols(); ++j)
    for (Eigen::Index i = 0; i < s.rhs.rows(); ++i)
      s.rhs(i, j) = static_cast<double>(rng.below(2001)) / 1000.0 - 1.0;
  return s;
}

Eigen::MatrixXd solve_with(const System& s, SolverKind kind) {
  auto f = factor_nodal_matrix_with(s.nodal.matrix(), kind);
  INFO(solver_kind_name(kind) << " rcond " << f->rcond());
  REQUIRE(f->rcond() > kSingularRcond);
  return f->solve(s.rhs);
}

// Every applicable path against the first one, and every residual.
void check_paths_agree(const System& s, bool dense, bool cholesky) {
  INFO(s.nodal.unknown_count() << " unknowns, " << s.nodal.matrix().nonZeros() << " nonzeros");
  REQUIRE(s.nodal.problems().empty());
  REQUIRE(s.nodal.symmetric_positive_definite() == cholesky);
  const Eigen::MatrixXd klu = solve_with(s, SolverKind::sparse_klu);
  CHECK(backward_error(s.nodal.matrix(), klu, s.rhs) < 1e-13);
  if (dense) {
    const Eigen::MatrixXd lu = solve_with(s, SolverKind::dense_lu);
    const double d = column_relative_difference(lu, klu);
    INFO("dense LU vs KLU: " << d);
    CHECK(d <= kAgreement);
    CHECK(backward_error(s.nodal.matrix(), lu, s.rhs) < 1e-13);
  }
  if (cholesky) {
    const Eigen::MatrixXd llt = solve_with(s, SolverKind::sparse_cholesky);
    const double d = column_relative_difference(llt, klu);
    INFO("sparse LDLT vs KLU: " << d);
    CHECK(d <= kAgreement);
    CHECK(backward_error(s.nodal.matrix(), llt, s.rhs) < 1e-13);
  }
}

std::string grid(std::size_t rows, std::size_t cols) {
  bench::GridOptions o;
  o.rows = rows;
  o.cols = cols;
  return generate_grid(o).text;
}

std::string ladder(std::size_t sections) {
  bench::LadderOptions o;
  o.sections = sections;
  return generate_ladder(o).text;
}

std::string random_network(std::size_t nodes, std::uint64_t seed) {
  bench::RandomOptions o;
  o.nodes = nodes;
  o.seed = seed;
  return generate_random(o).text;
}

}  // namespace

TEST_CASE("dense LU, KLU and Cholesky solve a small resistive grid to the same answer", "[solvers]") {
  check_paths_agree(system_of(grid(3, 4), false), true, true);
  check_paths_agree(system_of(grid(8, 8), false), true, true);
}

TEST_CASE("dense LU, KLU and Cholesky agree on grids of a few hundred to a thousand unknowns", "[solvers]") {
  check_paths_agree(system_of(grid(18, 18), false), true, true);   // 322 unknowns
  check_paths_agree(system_of(grid(33, 33), false), true, true);   // 1087 unknowns
}

TEST_CASE("KLU and Cholesky agree on grids of a few thousand unknowns", "[solvers]") {
  check_paths_agree(system_of(grid(60, 60), false), false, true);  // 3598 unknowns
  check_paths_agree(system_of(grid(20, 150), false), false, true); // a long strip
}

TEST_CASE("dense LU, KLU and Cholesky agree on ladders, short and long", "[solvers]") {
  check_paths_agree(system_of(ladder(6), true), true, true);
  check_paths_agree(system_of(ladder(400), true), true, true);
  check_paths_agree(system_of(ladder(3000), true), false, true);
}

TEST_CASE("dense LU and KLU agree on random networks with controlled sources", "[solvers]") {
  // Controlled sources make G unsymmetric: no Cholesky.
  for (std::uint64_t seed : {3u, 11u, 29u}) {
    INFO("seed " << seed);
    check_paths_agree(system_of(random_network(12, seed), true), true, false);
    check_paths_agree(system_of(random_network(400, seed), true), true, false);
  }
  check_paths_agree(system_of(random_network(3000, 5), true), false, false);
}

TEST_CASE("the engine picks dense LU for small systems, Cholesky for large SPD ones and KLU otherwise",
          "[solvers]") {
  auto kind_of = [](const System& s) {
    return factor_nodal_matrix(s.nodal.matrix(), s.nodal.symmetric_positive_definite())->kind();
  };
  CHECK(kind_of(system_of(grid(10, 10), false)) == SolverKind::dense_lu);
  CHECK(kind_of(system_of(grid(30, 30), false)) == SolverKind::sparse_cholesky);
  CHECK(kind_of(system_of(ladder(1000), true)) == SolverKind::sparse_cholesky);
  CHECK(kind_of(system_of(random_network(1000, 3), true)) == SolverKind::sparse_klu);
}

// ---- The engine's answers do not depend on the path -------------------------------------------

namespace {

// A 50 Hz source closed at t = 0 onto R1 = 100 ohm into C1 = 10 uF, with R2 = 300 ohm across C1:
// R_th = R1 ∥ R2 = 75 ohm, τ = 0.75 ms. `r1` is the text of R1 between nodes a and c: one resistor,
// or a chain. `extra` adds elements (a controlled source) before the watch line.
std::string rc_circuit(const std::string& r1, const std::string& extra) {
  return "V1: voltage-source s -> gnd, cosine 10 V 50 Hz phase 30 deg\n"
         "K1: switch s -> a, closes at 0 s\n" +
         r1 +
         "R2: resistor c -> gnd, 300 ohm\n"
         "C1: capacitor c -> gnd, 10 uF\n" +
         extra + "watch C1.v, C1.i\nwindow 0 .. 40 ms\n";
}

const std::string kOneResistor = "R1: resistor a -> c, 100 ohm\n";

// R1 as 400 resistors of 0.25 ohm in series (exactly 100 ohm: 0.25 is a power of two), a → p1 →
// … → p399 → c, named R1_1 … R1_400, plus a dead-end tail of 50 resistors hanging from p200 that
// carries no current: 449 extra nodes, so that the nodal matrix exceeds kDenseLimit.
std::string padded_resistor() {
  std::string out;
  for (int k = 1; k <= 400; ++k) {
    std::string from = k == 1 ? "a" : "p" + std::to_string(k - 1);
    std::string to = k == 400 ? "c" : "p" + std::to_string(k);
    out += "R1_" + std::to_string(k) + ": resistor " + from + " -> " + to + ", 0.25 ohm\n";
  }
  for (int k = 1; k <= 50; ++k) {
    std::string from = k == 1 ? "p200" : "t" + std::to_string(k - 1);
    out += "T" + std::to_string(k) + ": resistor " + from + " -> t" + std::to_string(k) + ", 3.3 kohm\n";
  }
  return out;
}

void check_same_results(const Solved& dense, const Solved& padded, const char* padded_solver, double rth) {
  const Segment& a = dense->segments().back();
  const Segment& b = padded->segments().back();
  INFO("solvers: " << a.solver << " and " << b.solver);
  CHECK(std::string(a.solver) == "dense LU");
  CHECK(std::string(b.solver) == padded_solver);
  CHECK_REL(a.equivalent.rth, rth, 1e-12);
  CHECK_REL(b.equivalent.rth, rth, 1e-12);
  CHECK_REL(b.equivalent.rth, a.equivalent.rth, kAgreement);
  CHECK_REL(b.tau, a.tau, kAgreement);
  CHECK_REL(b.tau, rth * 10e-6, 1e-12);
  for (const char* obs : {"C1.v", "C1.i"}) {
    INFO(obs);
    const Peak pa = find_peak(*dense, observable(dense, obs));
    const Peak pb = find_peak(*padded, observable(padded, obs));
    CHECK_REL(pb.value, pa.value, kAgreement);
    CHECK_REL(pb.time, pa.time, 1e-6);
    CHECK_REL(dense->value(observable(dense, obs), 3e-3), padded->value(observable(padded, obs), 3e-3), kAgreement);
  }
}

}  // namespace

TEST_CASE("a resistor replaced by a 400-link chain of the same total gives the same R_th, tau and peaks "
          "through Cholesky as through dense LU",
          "[solvers]") {
  auto dense = solve_text(rc_circuit(kOneResistor, ""));
  auto padded = solve_text(rc_circuit(padded_resistor(), ""));
  REQUIRE(padded->network(padded->segments().back()).system().unknown_count() > kDenseLimit);
  check_same_results(dense, padded, "sparse LDLT", 75.0);
}

TEST_CASE("with a current-controlled source the padded circuit takes KLU and still gives the dense answer",
          "[solvers]") {
  // F1 drives R1's current from gnd into c, doubling the current R1 delivers to c:
  // i_C = 2·(v_a − v_c)/100 − v_c/300, so R_th = 1/(2/100 + 1/300) = 300/7 ohm. In the chain
  // every link carries R1's current, so F1 senses the first link.
  auto dense = solve_text(rc_circuit(kOneResistor, "F1: cccs gnd -> c, gain 1, sense R1\n"));
  auto padded = solve_text(rc_circuit(padded_resistor(), "F1: cccs gnd -> c, gain 1, sense R1_1\n"));
  REQUIRE(padded->network(padded->segments().back()).system().unknown_count() > kDenseLimit);
  check_same_results(dense, padded, "KLU", 300.0 / 7.0);
}
