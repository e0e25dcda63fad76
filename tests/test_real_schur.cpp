// Tests of the real Schur form used by the modal decomposition (src/response/real_schur.hpp):
// A = Z·T·Zᵀ to rounding, Z orthogonal, T quasi-triangular with complex pairs only in its 2×2
// blocks, and the eigenvalues of Eigen's own EigenSolver (an independent implementation).
#include <algorithm>
#include <complex>
#include <random>

#include <Eigen/Eigenvalues>

#include "engine_helpers.hpp"
#include "response/real_schur.hpp"

using namespace netfold::response;

namespace {

std::vector<std::complex<double>> sorted(std::vector<std::complex<double>> v) {
  std::sort(v.begin(), v.end(),
            [](auto a, auto b) { return a.real() != b.real() ? a.real() < b.real() : a.imag() < b.imag(); });
  return v;
}

// Checks the factorisation and returns the largest eigenvalue difference from EigenSolver,
// relative to ‖A‖.
double check_schur(const Eigen::MatrixXd& a) {
  Eigen::MatrixXd t, z;
  REQUIRE(real_schur(a, t, z));
  const Eigen::Index n = a.rows();
  const double norm = std::max(a.norm(), 1e-300);
  INFO("n = " << n);
  CHECK((z * t * z.transpose() - a).norm() <= 1e-13 * norm * std::sqrt(static_cast<double>(n)));
  CHECK((z.transpose() * z - Eigen::MatrixXd::Identity(n, n)).norm() <= 1e-13 * static_cast<double>(n));
  std::vector<std::complex<double>> mine;
  for (Eigen::Index i = 0; i < n; ++i) {
    for (Eigen::Index j = 0; j + 1 < i; ++j) CHECK(t(i, j) == 0.0);
    if (i + 1 < n && t(i + 1, i) != 0.0) {
      CHECK((i + 2 >= n || t(i + 2, i + 1) == 0.0));  // no two subdiagonal entries in a row
      const double p = 0.5 * (t(i, i) - t(i + 1, i + 1)), q = p * p + t(i, i + 1) * t(i + 1, i);
      CHECK(q < 0.0);  // a 2×2 block holds a complex pair
      const double im = std::sqrt(-q), re = 0.5 * (t(i, i) + t(i + 1, i + 1));
      mine.emplace_back(re, im);
      mine.emplace_back(re, -im);
      ++i;
    } else {
      mine.emplace_back(t(i, i), 0.0);
    }
  }
  Eigen::EigenSolver<Eigen::MatrixXd> reference(a, false);
  std::vector<std::complex<double>> theirs(reference.eigenvalues().begin(), reference.eigenvalues().end());
  mine = sorted(mine);
  theirs = sorted(theirs);
  double worst = 0.0;
  for (std::size_t i = 0; i < mine.size(); ++i) worst = std::max(worst, std::abs(mine[i] - theirs[i]) / norm);
  return worst;
}

}  // namespace

TEST_CASE("random matrices of 5 to 300 states have their Schur form and eigenvalues", "[modal]") {
  // Reference: the definition A = Z·T·Zᵀ, and Eigen's EigenSolver for the eigenvalues.
  std::mt19937_64 rng(42);
  std::normal_distribution<double> normal;
  for (int n : {5, 17, 64, 300}) {
    Eigen::MatrixXd a(n, n);
    for (int i = 0; i < n; ++i)
      for (int k = 0; k < n; ++k) a(i, k) = normal(rng);
    CHECK(check_schur(a) <= 1e-12);
  }
}

TEST_CASE("matrices that stall plain shifts or are already reduced converge", "[modal]") {
  // Reference: as above. The cyclic permutation stalls the standard Francis shifts (its
  // eigenvalues are the roots of unity, all of modulus 1; from memory, a textbook example for
  // exceptional shifts); the others are degenerate inputs.
  const int n = 12;
  Eigen::MatrixXd cyclic = Eigen::MatrixXd::Zero(n, n);
  for (int i = 0; i < n; ++i) cyclic((i + 1) % n, i) = 1.0;
  CHECK(check_schur(cyclic) <= 1e-12);
  CHECK(check_schur(Eigen::MatrixXd::Zero(4, 4)) <= 1e-12);
  CHECK(check_schur(Eigen::MatrixXd::Identity(6, 6) * 3.0) <= 1e-12);
  Eigen::MatrixXd upper = Eigen::MatrixXd::Random(7, 7).triangularView<Eigen::Upper>();
  CHECK(check_schur(upper) <= 1e-12);
  Eigen::MatrixXd jordan = Eigen::MatrixXd::Identity(5, 5) * -2.0;
  for (int i = 0; i + 1 < 5; ++i) jordan(i, i + 1) = 1.0;
  CHECK(check_schur(jordan) <= 1e-3);  // a defective eigenvalue is known to ε^{1/5} only
  CHECK(check_schur(Eigen::MatrixXd::Constant(1, 1, -4.0)) == 0.0);
  const Eigen::Matrix2d lc{{0.0, -1e3}, {1e6, 0.0}};  // a lossless pair
  CHECK(check_schur(lc) <= 1e-15);
}
