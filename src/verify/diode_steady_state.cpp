// The states and the diodes' configuration at t = 0− on the numerical path, for a circuit with
// diodes (initial_state.cpp does the linear circuits: its superposition of a DC point and
// per-group periodic responses does not hold once diodes switch).
//
// All states given: they keep their values, and the configuration is the consistent one at
// t = 0 (settle, judged with the sources' slopes there). With DC sources only: the DC steady
// state of the consistent configuration — each candidate configuration judged at its own DC
// operating point A·x = −B·u. With sinusoids (all whole multiples of one fundamental f₀): the
// periodic steady state, found by shooting over T = 1/f₀ on this path's own march (CVODE with
// its root finding, every diode event in the period taken): Newton on F(x₀) = Φ(x₀) − x₀ with a
// difference Jacobian (one more period per state), each step halved while it does not reduce
// |F|, from the DC steady state; converged when |F| is below kPeriodTolerance of the states'
// size (the period runs' own error sets the floor, far below the comparison's threshold).
// States given beside others not given keep their values after the search.
#include "verify/diode_steady_state.hpp"

#include <algorithm>
#include <cmath>
#include <functional>

#include <Eigen/QR>
#include <fmt/format.h>

#include "netfold/units.hpp"

namespace netfold::integration {

namespace {

constexpr int kMaxNewton = 40;
constexpr int kMaxHalvings = 12;
// |Φ(x₀) − x₀| at which the shooting stops, relative to the states' size.
constexpr double kPeriodTolerance = 1e-11;

const char* unit_of(const Element& e) { return e.kind == ElementKind::capacitor ? "V" : "A"; }

std::string states_text(const Circuit& c, const std::vector<ElementId>& states, const Eigen::VectorXd& x,
                        double scale) {
  std::string out;
  for (std::size_t k = 0; k < states.size(); ++k)
    out += fmt::format("{}{} = {}", k == 0 ? "" : ", ", c.element(states[k]).name,
                       format_si(x[static_cast<Eigen::Index>(k)] * scale, unit_of(c.element(states[k]))));
  return out;
}

std::string diodes_text(const Circuit& c, const SwitchPositions& p) {
  std::string out;
  const std::vector<ElementId> ids = diode_elements(c);
  for (std::size_t k = 0; k < ids.size(); ++k)
    if (p.diodes[k] != DiodeState::blocking)
      out += fmt::format("{}{}{}", out.empty() ? "" : ", ", c.element(ids[k]).name,
                         p.diodes[k] == DiodeState::forward ? "" : " (reverse)");
  return out.empty() ? "none conducting" : out + " conducting";
}

// Newton on F(x) = Φ(x) − x from x (file comment): true when converged; `defect` is the last
// |F| relative to the states' size.
bool periodic_newton(const std::function<Eigen::VectorXd(const Eigen::VectorXd&)>& phi, const bool& stopped,
                     Eigen::VectorXd& x, int& iterations, double& defect) {
  const Eigen::Index n = x.size();
  auto size_of = [](const Eigen::VectorXd& v) { return std::max(v.cwiseAbs().maxCoeff(), 1e-3); };
  Eigen::VectorXd f = phi(x) - x;
  bool converged = false;
  for (iterations = 0; iterations < kMaxNewton && !stopped; ++iterations) {
    if (f.cwiseAbs().maxCoeff() <= kPeriodTolerance * size_of(x)) {
      converged = true;
      break;
    }
    Eigen::MatrixXd jac(n, n);
    for (Eigen::Index j = 0; j < n; ++j) {
      Eigen::VectorXd xp = x;
      const double h = 1e-6 * std::max(std::fabs(x[j]), size_of(x));
      xp[j] += h;
      jac.col(j) = (phi(xp) - xp - f) / h;
    }
    const Eigen::VectorXd dx = Eigen::CompleteOrthogonalDecomposition<Eigen::MatrixXd>(jac).solve(-f);
    double step = 1.0;
    Eigen::VectorXd xn = x + dx, fn = phi(xn) - xn;
    for (int k = 0; k < kMaxHalvings && !(fn.cwiseAbs().maxCoeff() < f.cwiseAbs().maxCoeff()) && !stopped; ++k) {
      step /= 2.0;
      xn = x + step * dx;
      fn = phi(xn) - xn;
    }
    if (!(fn.cwiseAbs().maxCoeff() < f.cwiseAbs().maxCoeff())) {
      // No Newton step helps: the run's own error is the floor when |F| is already small.
      converged = f.cwiseAbs().maxCoeff() <= 1e3 * kPeriodTolerance * size_of(x);
      break;
    }
    x = xn;
    f = fn;
  }
  defect = f.cwiseAbs().maxCoeff() / size_of(x);
  return converged && !stopped;
}

}  // namespace

// The steps of the search (about 110 lines: each way of finding the states ends with its own
// note, in the order of the format's rules).
InitialState diode_initial_state(const AppliedScenario& applied, const std::vector<SourceSignal>& signals, double scale,
                                 EventMarch& march, SwitchPositions& at_zero) {
  InitialState out;
  const Circuit& c = applied.circuit();
  const std::vector<ElementId> states = c.storage_elements();
  const auto n = static_cast<Eigen::Index>(states.size());
  out.values = Eigen::VectorXd::Zero(n);
  std::vector<double> levels;
  for (const auto& s : signals) levels.push_back(s.level_before_zero());
  const SwitchPositions pre = positions_before_zero(c);
  const std::string where = "before t = 0";
  std::vector<bool> given(states.size(), false);
  Eigen::VectorXd given_values = Eigen::VectorXd::Zero(n);
  for (std::size_t k = 0; k < states.size(); ++k)
    if (auto v = given_initial_state(applied, states[k])) {
      given[k] = true;
      given_values[static_cast<Eigen::Index>(k)] = *v / scale;
    }
  auto fixed = [](const Eigen::VectorXd& x) {
    return [x](const Configuration&) { return std::optional<Eigen::VectorXd>(x); };
  };
  if (std::all_of(given.begin(), given.end(), [](bool g) { return g; })) {
    at_zero = march.settle(pre, 0.0, levels, false, fixed(given_values), where).first;
    out.values = given_values;
    out.method = n == 0 ? InitialStateMethod::none : InitialStateMethod::given;
    out.note = fmt::format("the states at t = 0- are given ({}); the diodes there: {}",
                           states_text(c, states, given_values, scale), diodes_text(c, at_zero));
    return out;
  }
  auto keep_given = [&](Eigen::VectorXd& x) {
    for (std::size_t k = 0; k < states.size(); ++k)
      if (given[k]) x[static_cast<Eigen::Index>(k)] = given_values[static_cast<Eigen::Index>(k)];
  };

  // The DC steady state of a candidate configuration: A·x = −B·u (levels and the unit input).
  auto dc_states = [&](const Configuration& cfg) -> std::optional<Eigen::VectorXd> {
    Eigen::VectorXd u = Eigen::VectorXd::Zero(cfg.b.cols());
    for (std::size_t k = 0; k < levels.size() && static_cast<Eigen::Index>(k) < u.size(); ++k)
      u[static_cast<Eigen::Index>(k)] = levels[k];
    if (cfg.system.unit_input() != kNone) u[static_cast<Eigen::Index>(levels.size())] = march.unit();
    Eigen::MatrixXd a = cfg.a;
    const double norm = std::max(1.0, a.cwiseAbs().rowwise().sum().maxCoeff());
    for (std::size_t k = 0; k < cfg.modes.size(); ++k)
      if (cfg.modes[k] == PortMode::held_at_zero) a(static_cast<Eigen::Index>(k), static_cast<Eigen::Index>(k)) = -norm;
    const Eigen::VectorXd rhs = -(cfg.b * u);
    Eigen::CompleteOrthogonalDecomposition<Eigen::MatrixXd> cod(a);
    cod.setThreshold(1e-12);
    Eigen::VectorXd x = cod.solve(rhs);
    if (!x.allFinite() || (a * x - rhs).norm() > 1e-9 * (norm * x.norm() + rhs.norm())) return std::nullopt;
    return x;
  };
  const std::vector<std::vector<double>> groups = harmonic_groups(source_frequencies(signals));
  if (groups.size() > 1) {
    out.status = IntegrationStatus::failed;
    out.message = fmt::format(
        "the sources' frequencies {} and {} are not whole multiples of one fundamental, so "
        "the circuit with diodes has no periodic steady state before t = 0",
        format_si(groups[0].front(), "Hz"), format_si(groups[1].front(), "Hz"));
    return out;
  }
  const double period = groups.empty() ? 0.0 : 1.0 / groups.front().front();
  auto [p, x] = march.settle(pre, -period, levels, true, dc_states, where);
  if (groups.empty()) {
    keep_given(x);
    at_zero = march.settle(p, 0.0, levels, true, fixed(x), where).first;
    out.values = x;
    out.method = InitialStateMethod::dc_operating_point;
    out.note = fmt::format(
        "the states at t = 0- from the DC steady state of the consistent configuration before "
        "t = 0 ({}): {}",
        diodes_text(c, at_zero), states_text(c, states, x, scale));
    return out;
  }

  // Φ(x₀): one period from −T, every diode event in it taken.
  SwitchPositions last = p;
  march.record = false;
  bool stopped = false;
  auto phi = [&](const Eigen::VectorXd& x0) {
    Eigen::VectorXd z = x0;
    SwitchPositions q = march.settle(last, -period, levels, false, fixed(x0), where).first;
    if (!march.run(-period, 0.0, {}, z, q, levels, [](StateEquation&, double, const Eigen::VectorXd&) { return true; }))
      stopped = true;
    last = q;
    return z;
  };
  int iterations = 0;
  double defect = 0.0;
  const bool converged = periodic_newton(phi, stopped, x, iterations, defect);
  out.shooting_iterations = iterations;
  if (stopped) {
    out.status = IntegrationStatus::failed;  // the caller reads the integrator's own status
    out.message = "a period run of the shooting stopped";
    return out;
  }
  if (!converged) {
    out.status = IntegrationStatus::failed;
    out.message = fmt::format(
        "the periodic steady state with diodes was not found in {} Newton iterations "
        "(|x(0) - x(-T)| = {:.3g} of the states' size)",
        iterations, defect);
    return out;
  }
  keep_given(x);
  phi(x);  // the configuration at t = 0−; its events before t = 0 are not the run's
  march.record = true;
  at_zero = last;
  out.values = x;
  out.method = InitialStateMethod::shooting;
  out.note = fmt::format(
      "the states at t = 0- from the periodic steady state with diodes, by shooting over one "
      "period ({}) with CVODE's root finding for the diode events and Newton with a difference "
      "Jacobian ({} iteration{}): {}; the diodes at t = 0-: {}",
      format_si(period, "s"), iterations, iterations == 1 ? "" : "s", states_text(c, states, x, scale),
      diodes_text(c, at_zero));
  return out;
}

}  // namespace netfold::integration
