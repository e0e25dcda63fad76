#include "netfold/reduce.hpp"

#include <algorithm>
#include <cmath>

#include <Eigen/LU>

#include "network/linear_solver.hpp"
#include "network/refine.hpp"

namespace netfold {

ReducedNetwork::ReducedNetwork(const Circuit& circuit, const SwitchPositions& positions, const BuildOptions& options)
    : system_(build_nodal_system(circuit, positions, options)) {
  const auto& g = system_.matrix();
  auto solver = factor_nodal_matrix(g, system_.symmetric_positive_definite());
  rcond_ = solver->rcond();
  solver_name_ = solver_kind_name(solver->kind());
  if (rcond_ < kSingularRcond) {
    // Name what is degenerate: the unknowns a null vector of G involves.
    if (g.rows() <= kDenseLimit && g.rows() > 0) {
      Eigen::FullPivLU<Eigen::MatrixXd> lu{Eigen::MatrixXd(g)};
      lu.setThreshold(1e-10);
      Eigen::MatrixXd kernel = lu.kernel();
      if (kernel.cols() > 0 && kernel.norm() > 0) {
        Eigen::VectorXd v = kernel.col(0).cwiseAbs();
        double vmax = v.maxCoeff();
        for (Eigen::Index i = 0; i < v.size(); ++i)
          if (v[i] > 1e-6 * vmax) singular_unknowns_.push_back(static_cast<std::uint32_t>(i));
      }
    }
    return;
  }
  response_ = solver->solve(Eigen::MatrixXd(system_.inputs()));
  if (!response_.allFinite()) {
    rcond_ = 0.0;
    return;
  }
  refine_response(*solver);
}

// Refined against the unsummed stamps (network/refine.hpp) where the work is modest: the
// refinement carries the digits that small differences of large terms need, and its last
// correction decides which coefficients are zero (negligible).
void ReducedNetwork::refine_response(const LinearSolver& solver) {
  const auto m = response_.cols();
  const double work = static_cast<double>(system_.matrix_stamps().size() + system_.input_stamps().size()) *
                      static_cast<double>(m);
  if (response_.size() == 0 || work > kRefinementWorkLimit) return;  // 10⁶-node grids keep the plain solve
  refined_error_ = refine_solution(system_, solver, Eigen::MatrixXd::Identity(m, m), response_, response_lo_);
  estimate_value_noise();
}

// The element values are rounded to ε each (0.3 Ω is not a double), so a coefficient that the
// data cannot resolve — an R_th that controlled sources cancel exactly, whose cancellation
// happens inside the solve where no magnitude of terms shows it — must be told from a real
// one. The same network with every stamp moved by ±4ε (signs from a fixed hash, so runs
// repeat) is solved too; a coefficient that moves by a tenth of itself or more is rounding.
void ReducedNetwork::estimate_value_noise() {
  auto perturbed = [](Stamps stamps, std::uint64_t salt) {
    for (std::size_t k = 0; k < stamps.size(); ++k) {
      std::uint64_t h = (k + 1) * 0x9e3779b97f4a7c15ULL ^ salt;
      h ^= h >> 31;
      h *= 0xbf58476d1ce4e5b9ULL;
      const double sign = (h >> 40) & 1 ? 1.0 : -1.0;
      auto& t = stamps[k];
      t = Eigen::Triplet<double>(t.row(), t.col(), t.value() * (1.0 + sign * kValueRounding));
    }
    return stamps;
  };
  const Stamps g = perturbed(system_.matrix_stamps(), 1), b = perturbed(system_.input_stamps(), 2);
  const auto n = static_cast<Eigen::Index>(system_.unknown_count()), m = response_.cols();
  Eigen::SparseMatrix<double> gp(n, n), bp(n, m);
  gp.setFromTriplets(g.begin(), g.end());
  bp.setFromTriplets(b.begin(), b.end());
  auto solver = factor_nodal_matrix(gp, system_.symmetric_positive_definite());
  if (solver->rcond() < kSingularRcond) return;
  perturbed_ = solver->solve(Eigen::MatrixXd(bp));
  if (!perturbed_.allFinite()) {
    perturbed_.resize(0, 0);
    return;
  }
  refine_solution(g, b, *solver, Eigen::MatrixXd::Identity(m, m), perturbed_, perturbed_lo_);
}

std::vector<double> ReducedNetwork::coefficients(const LinearForm& form) const {
  std::vector<double> c(system_.input_count(), 0.0);
  if (response_.size() == 0 && system_.unknown_count() > 0) throw NumericError("coefficients of a singular network");
  if (response_lo_.size() == 0) {
    for (auto [x, coef] : form.unknowns)
      for (std::uint32_t j = 0; j < c.size(); ++j) c[j] += coef * response_(x, j);
    for (auto [u, coef] : form.inputs) c[u] += coef;
    return c;
  }
  return refined_coefficients(form, response_, response_lo_);
}

std::vector<double> ReducedNetwork::refined_coefficients(const LinearForm& form, const Eigen::MatrixXd& x,
                                                         const Eigen::MatrixXd& x_lo) const {
  std::vector<Compensated> sum(system_.input_count());
  for (auto [i, coef] : form.unknowns)
    for (std::uint32_t j = 0; j < sum.size(); ++j) {
      sum[j].add_product(coef, x(i, j));
      sum[j].add_product(coef, x_lo(i, j));
    }
  for (auto [u, coef] : form.inputs) sum[u].add(coef);
  std::vector<double> c(sum.size());
  for (std::size_t j = 0; j < c.size(); ++j) c[j] = sum[j].value();
  return c;
}

bool ReducedNetwork::negligible(const LinearForm& form, std::uint32_t input, double coefficient) const {
  const double magnitude = magnitudes(form).at(input);
  if (refined_error_.empty()) return std::fabs(coefficient) <= kCancellation * magnitude;
  // A refined coefficient is exact for the element values as stored, each of which is itself
  // rounded by up to ε/2 (0.3 Ω is not a double): a coefficient within a few ε of the terms
  // that made it is a cancellation the values cannot resolve (a ccvs of −0.3 Ω against 0.1 Ω
  // + 0.2 Ω), so zero; so is one within the refinement's own error estimate.
  const double relative = std::max(kValueRounding, refined_error_[input]);
  if (std::fabs(coefficient) <= 10.0 * relative * magnitude) return true;
  if (perturbed_.size() == 0) return false;
  const double moved = refined_coefficients(form, perturbed_, perturbed_lo_).at(input);
  return std::fabs(coefficient) <= 10.0 * std::fabs(moved - coefficient);
}

std::vector<double> ReducedNetwork::magnitudes(const LinearForm& form) const {
  std::vector<double> m(system_.input_count(), 0.0);
  if (response_.size() == 0 && system_.unknown_count() > 0) throw NumericError("magnitudes of a singular network");
  for (auto [x, coef] : form.unknowns)
    for (std::uint32_t j = 0; j < m.size(); ++j) m[j] += std::fabs(coef * response_(x, j));
  for (auto [u, coef] : form.inputs) m[u] += std::fabs(coef);
  return m;
}

Equivalent storage_equivalent(const Circuit& circuit, const ReducedNetwork& network, ElementId storage) {
  const Element& e = circuit.element(storage);
  const LinearForm port = network.system().port_quantity();
  std::vector<double> c = network.coefficients(port);
  // The state's coefficient is zero (R_th = ∞ for a capacitor, 0 for an inductor) when
  // nothing but rounding is left of the terms that made it.
  double c0 = c[0];
  if (network.negligible(port, 0, c0)) c0 = 0.0;
  Equivalent eq;
  c[0] = 0.0;
  if (e.kind == ElementKind::capacitor) {
    // i_C = c0·v_C + Σ c_j·u_j
    eq.rate = c0 / e.value;
    eq.isc = c;
    if (c0 == 0.0) {
      eq.rth = kInfinity;
    } else {
      eq.rth = -1.0 / c0;
      eq.voc = c;
      for (double& v : eq.voc) v = -v / c0;
    }
  } else {
    // v_L = c0·i_L + Σ c_j·u_j
    eq.rate = c0 / e.value;
    eq.rth = -c0;
    eq.voc = c;
    if (c0 != 0.0) {
      eq.isc = c;
      for (double& v : eq.isc) v = v / eq.rth;
    }
  }
  if (eq.rth == 0.0) eq.rth = 0.0;  // no negative zero in reports
  return eq;
}

const ReducedNetwork& NetworkCache::get(const SwitchPositions& positions, PortMode mode) {
  return get(positions, std::vector<PortMode>(state_count_, mode));
}

const ReducedNetwork& NetworkCache::get(const SwitchPositions& positions, const std::vector<PortMode>& modes) {
  auto [it, fresh] = networks_.try_emplace(Key{positions.closed, positions.diodes, modes});
  if (fresh) {
    BuildOptions options;
    options.port_modes = modes;
    try {
      it->second = std::make_unique<ReducedNetwork>(*circuit_, positions, options);
    } catch (...) {
      networks_.erase(it);  // leave no empty entry behind a failed build
      throw;
    }
  }
  return *it->second;
}

}  // namespace netfold
