#include "response/modal.hpp"

#include <cmath>
#include <fmt/format.h>
#include <limits>
#include <map>
#include <numbers>

namespace netfold::response {

namespace {

constexpr double kEps = std::numeric_limits<double>::epsilon();
constexpr double kErrorFactor = 16.0;   // the estimate's constant: rounding of a few operations
constexpr double kMaxExponent = 700.0;  // e^{Re λ·L} beyond this leaves double range

// One forcing rate: DC (z = 0) or a phasor frequency (z = jω), for every input at once.
struct Forcing {
  double frequency = 0.0;  // Hz; 0 for DC
  Complex z;               // rate, 1/s
  Complex phase;           // e^{z·t0}: the forcing's value at the segment start per unit phasor
  Eigen::VectorXcd modal;  // V⁻¹Q*D⁻¹·B·U, U the inputs' phasors at this frequency (absolute time)
};

std::vector<Forcing> forcings_of(const ModalBasis& basis, const Eigen::MatrixXd& b, const std::vector<Drive>& inputs,
                                 double t0) {
  const Eigen::Index m = b.cols();
  std::map<double, Eigen::VectorXcd> by_frequency;
  auto slot = [&](double f) -> Eigen::VectorXcd& {
    auto it = by_frequency.find(f);
    if (it == by_frequency.end()) it = by_frequency.emplace(f, Eigen::VectorXcd::Zero(m)).first;
    return it->second;
  };
  for (Eigen::Index i = 0; i < m && i < static_cast<Eigen::Index>(inputs.size()); ++i) {
    const Drive& u = inputs[static_cast<std::size_t>(i)];
    if (u.dc != 0.0) slot(0.0)(i) += u.dc;
    for (const auto& p : u.phasors) slot(p.frequency)(i) += p.value;
  }
  std::vector<Forcing> out;
  for (const auto& [f, u] : by_frequency) {
    Forcing forcing;
    forcing.frequency = f;
    forcing.z = Complex(0.0, 2.0 * std::numbers::pi * f);
    forcing.phase = std::exp(forcing.z * t0);
    forcing.modal = basis.to_modal(b.cast<Complex>() * u);
    out.push_back(std::move(forcing));
  }
  return out;
}

// What the clusters' solutions add up to, besides the terms.
struct Assembly {
  std::vector<Eigen::VectorXcd> particular;  // per forcing, modal coordinates, absolute time
  double amplification = 1.0;
  bool converged = true;
  bool local = false;
};

void add_term(std::vector<ModalTerm>& terms, const Term& shape, Eigen::Index begin, Eigen::VectorXcd coef) {
  if (coef.isZero(0.0)) return;
  terms.push_back({shape, begin, std::move(coef)});
}

// The solution of one cluster: far forcings as particular solutions, near ones inside the
// cluster (see the file comment of modal.hpp).
void solve_cluster(const ModalBasis& basis, const Cluster& cl, const Eigen::VectorXcd& y0,
                   const std::vector<Forcing>& forcings, double span, std::vector<ModalTerm>& terms, Assembly& sum) {
  const Eigen::Index b = cl.begin, p = cl.size();
  const Eigen::MatrixXcd tc = basis.t.block(b, b, p, p);
  Eigen::VectorXcd w0 = y0.segment(b, p);
  std::vector<std::size_t> near;
  for (std::size_t f = 0; f < forcings.size(); ++f) {
    bool close = false;
    for (Eigen::Index i = 0; i < p; ++i) close = close || rates_close(tc(i, i), forcings[f].z, span);
    if (close) {
      near.push_back(f);
      continue;
    }
    Eigen::MatrixXcd shifted = -tc;
    shifted.diagonal().array() += forcings[f].z;
    Eigen::VectorXcd particular = shifted.triangularView<Eigen::Upper>().solve(forcings[f].modal.segment(b, p));
    sum.particular[f].segment(b, p) = particular;
    w0 -= particular * forcings[f].phase;
  }
  if (p == 1) {
    const Complex lambda = tc(0, 0);
    add_term(terms, Term{1.0, lambda, 0, false, 0.0}, b, w0);
    // b·e^{zs}·φ(λ − z, s) per near forcing: the exact forced part of one mode near each forcing
    // rate (a scalar equation superposes them; a short segment can put DC and the supply's
    // frequency both near one mode); a detuning below the eigenvalue's own rounding is exact
    // resonance, b·s·e^{zs}.
    for (std::size_t index : near) {
      const Forcing& f = forcings[index];
      const Complex detuning = std::abs(lambda - f.z) <= basis.rounding ? Complex(0.0) : lambda - f.z;
      add_term(terms, Term{1.0, f.z, 0, true, detuning}, b, f.modal.segment(b, 1) * f.phase);
    }
    return;
  }
  const Eigen::Index q = static_cast<Eigen::Index>(near.size());
  Eigen::MatrixXcd m = Eigen::MatrixXcd::Zero(p + q, p + q);
  Eigen::VectorXcd v(p + q);
  m.topLeftCorner(p, p) = tc;
  v.head(p) = w0;
  for (Eigen::Index j = 0; j < q; ++j) {
    const Forcing& f = forcings[near[static_cast<std::size_t>(j)]];
    m.col(p + j).head(p) = f.modal.segment(b, p) * f.phase;
    m(p + j, p + j) = f.z;
    v(p + j) = 1.0;
  }
  const ClusterSeries series = exponential_series(m, v, p, span);
  for (std::size_t k = 0; k < series.coefs.size(); ++k)
    add_term(terms, Term{1.0, series.centre, static_cast<int>(k), false, 0.0}, b, series.coefs[k].col(0));
  sum.amplification = std::max(sum.amplification, series.amplification);
  sum.converged = sum.converged && series.converged;
  sum.local = sum.local || q > 0;
}

Accuracy judge(const ModalBasis& basis, const Assembly& sum, double span, const ModalOptions& options) {
  Accuracy acc;
  double growth = 0.0;
  if (basis.ok)
    for (int i = 0; i < basis.n; ++i) growth = std::max(growth, basis.eigenvalue(i).real() * span);
  acc.estimated_error = kErrorFactor * kEps * basis.condition * sum.amplification;
  if (!basis.ok) {
    acc.reason = basis.reason;
  } else if (growth > kMaxExponent) {
    acc.reason = fmt::format("a mode grows by e^{:.0f} over the segment, beyond double range", growth);
  } else if (!sum.converged) {
    acc.reason = "the series of a cluster of nearly equal modes did not converge over the segment";
  } else if (!(acc.estimated_error <= options.max_relative_error)) {
    acc.reason = fmt::format(
        "the modes are too close to independent: estimated relative error {:.1e} > {:.0e} "
        "(eigenvector condition {:.1e}, series cancellation {:.1e})",
        acc.estimated_error, options.max_relative_error, basis.condition, sum.amplification);
  }
  acc.ok = acc.reason.empty();
  return acc;
}

}  // namespace

ModalResponse solve_modal(std::shared_ptr<const ModalBasis> shared, const Eigen::MatrixXd& b, const Eigen::VectorXd& x0,
                          const std::vector<Drive>& inputs, double t0, double t1, const ModalOptions& options) {
  const ModalBasis& basis = *shared;
  ModalResponse r;
  r.basis_ = std::move(shared);
  r.t0_ = t0;
  r.t1_ = t1;
  r.inputs_ = inputs;
  r.dc_ = Eigen::VectorXcd::Zero(basis.n);
  const double span = t1 - t0;
  Assembly sum;
  if (basis.ok) {
    r.modes_ = modes_of(basis);
    const auto forcings = forcings_of(basis, b, inputs, t0);
    sum.particular.assign(forcings.size(), Eigen::VectorXcd::Zero(basis.n));
    const Eigen::VectorXcd y0 = basis.to_modal(x0.cast<Complex>());
    for (const auto& cl : basis.clusters) solve_cluster(basis, cl, y0, forcings, span, r.terms_, sum);
    for (std::size_t f = 0; f < forcings.size(); ++f) {
      if (forcings[f].frequency == 0.0) {
        r.dc_ = sum.particular[f];
      } else if (!sum.particular[f].isZero(0.0)) {
        r.phasors_.emplace_back(forcings[f].frequency, sum.particular[f]);
      }
    }
    r.local_ = sum.local;
  }
  r.accuracy_ = judge(basis, sum, span, options);
  return r;
}

ModalResponse solve_modal(const Eigen::MatrixXd& a, const Eigen::MatrixXd& b, const Eigen::VectorXd& x0,
                          const std::vector<Drive>& inputs, double t0, double t1, const ModalOptions& options) {
  return solve_modal(std::make_shared<const ModalBasis>(decompose(a, t1 - t0)), b, x0, inputs, t0, t1, options);
}

Response ModalResponse::assemble(const Eigen::RowVectorXcd& row) const {
  Response r;
  r.t0 = t0_;
  r.t1 = t1_;
  r.local = local_;
  if (!basis_ || !basis_->ok) return r;
  r.periodic.dc = Complex(row * dc_).real();
  for (const auto& [f, vec] : phasors_) {
    const Complex v = row * vec;
    if (v != Complex(0.0, 0.0)) r.periodic.add_phasor(f, v);
  }
  r.terms.reserve(terms_.size());
  for (const auto& mt : terms_) {
    Term t = mt.shape;
    t.c = row.segment(mt.begin, mt.coef.size()) * mt.coef;
    r.terms.push_back(t);
  }
  r.normalise();
  return r;
}

Response ModalResponse::state(int i) const {
  Eigen::RowVectorXcd unit = Eigen::RowVectorXcd::Zero(states());
  unit(i) = 1.0;
  return assemble(basis_ && basis_->ok ? basis_->output_row(unit) : unit);
}

Response ModalResponse::output(const Eigen::RowVectorXd& c, const Eigen::RowVectorXd& d) const {
  const Eigen::RowVectorXcd row = c.cast<Complex>();
  Response r = assemble(basis_ && basis_->ok ? basis_->output_row(row) : row);
  for (Eigen::Index j = 0; j < d.size() && j < static_cast<Eigen::Index>(inputs_.size()); ++j)
    if (d(j) != 0.0) r.periodic.add(inputs_[static_cast<std::size_t>(j)], d(j));
  return r;
}

Eigen::VectorXd ModalResponse::value(double t) const {
  if (!basis_ || !basis_->ok) return Eigen::VectorXd::Zero(states());
  const double s = t - t0_;
  Eigen::VectorXcd y = dc_;
  for (const auto& [f, vec] : phasors_) y += vec * std::polar(1.0, 2.0 * std::numbers::pi * f * t);
  for (const auto& mt : terms_) y.segment(mt.begin, mt.coef.size()) += mt.coef * mt.shape.value(s);
  return basis_->to_state(y).real();
}

}  // namespace netfold::response
