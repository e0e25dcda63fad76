#include "netfold/reduce.hpp"

#include <algorithm>
#include <cmath>

#include <Eigen/LU>

#include "network/linear_solver.hpp"

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
  if (!response_.allFinite()) rcond_ = 0.0;
}

std::vector<double> ReducedNetwork::coefficients(const LinearForm& form) const {
  std::vector<double> c(system_.input_count(), 0.0);
  if (response_.size() == 0 && system_.unknown_count() > 0) throw NumericError("coefficients of a singular network");
  for (auto [x, coef] : form.unknowns)
    for (std::uint32_t j = 0; j < c.size(); ++j) c[j] += coef * response_(x, j);
  for (auto [u, coef] : form.inputs) c[u] += coef;
  return c;
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
  if (std::fabs(c0) <= kCancellation * network.magnitudes(port)[0]) c0 = 0.0;
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
  auto [it, fresh] = networks_.try_emplace(Key{positions.closed, mode});
  if (fresh) {
    BuildOptions options;
    options.mode = mode;
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
