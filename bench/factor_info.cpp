// factor_info FILE.nf: the nodal matrix of the circuit's first configuration and the size of the
// factor the engine computes for it, one `key value` per line (bench/run_all.sh reads them for
// issue 7 (e), peak memory versus the factor's size).
//
//   unknowns 998000
//   nnz_G 4990000
//   solver CHOLMOD Cholesky
//   factor_nnz 3.1e+07         nnz(L) (CHOLMOD) or nnz(L) + nnz(U) (KLU)
//   factor_bytes 3.7e+08       factor_nnz × 12 (a double and an int index per entry)
//   file_bytes 99911456
#include <filesystem>
#include <iostream>

#include <Eigen/CholmodSupport>
#include <Eigen/KLUSupport>

#include "network/linear_solver.hpp"
#include "netfold/mna.hpp"
#include "netfold/parse.hpp"

namespace {

using SpMat = Eigen::SparseMatrix<double>;

class CholmodStats : public Eigen::CholmodSimplicialLLT<SpMat, Eigen::Lower> {
 public:
  double lnz() { return cholmod().lnz; }
};

class KluStats : public Eigen::KLU<SpMat> {
 public:
  double lu_nonzeros() const { return m_numeric ? static_cast<double>(m_numeric->lnz + m_numeric->unz) : 0.0; }
};

}  // namespace

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: factor_info FILE.nf\n";
    return 2;
  }
  try {
    const netfold::Circuit c = netfold::parse_netlist_file(argv[1]);
    const netfold::NodalSystem sys = netfold::build_nodal_system(c, netfold::positions_before_zero(c));
    const SpMat& g = sys.matrix();
    // The engine's choice (linear_solver.cpp): dense up to kDenseLimit, CHOLMOD for SPD, else KLU.
    auto solver = netfold::factor_nodal_matrix(g, sys.symmetric_positive_definite());
    double nnz = 0.0;
    if (solver->kind() == netfold::SolverKind::sparse_cholesky) {
      CholmodStats llt;
      llt.analyzePattern(g);
      nnz = llt.lnz();
    } else if (solver->kind() == netfold::SolverKind::sparse_klu) {
      KluStats klu;
      klu.compute(g);
      nnz = klu.lu_nonzeros();
    } else {
      nnz = static_cast<double>(g.rows()) * static_cast<double>(g.rows());
    }
    std::cout << "unknowns " << g.rows() << "\n"
              << "nnz_G " << g.nonZeros() << "\n"
              << "solver " << netfold::solver_kind_name(solver->kind()) << "\n"
              << "factor_nnz " << nnz << "\n"
              << "factor_bytes " << 12.0 * nnz << "\n"
              << "file_bytes " << std::filesystem::file_size(argv[1]) << "\n";
  } catch (const std::exception& e) {
    std::cerr << e.what() << "\n";
    return 3;
  }
  return 0;
}
