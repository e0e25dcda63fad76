// The states at t = 0− on the numerical path, from the circuit alone (nothing of the closed
// form, not even its initial state).
//
// Given: the scenario's residual state, else the element's `initial`; that state keeps it.
// The others come from the steady state of the network before t = 0 (inductors whose loop is
// open there held at 0 A, the format's rule), dx/dt = A·x + B·(u_dc + u_ac(t)), which by
// superposition (the network is linear) is the sum of
//   - the DC operating point, A·x = −B·u_dc, solved by a complete orthogonal decomposition: the
//     states along A's null space (λ = 0 modes: a floating capacitor, an inductor with no
//     resistance in its loop) are undetermined and take the least-norm choice, which starts a
//     decoupled one from 0, as the format prescribes; where A·x = −B·u_dc has no solution (a DC
//     source drives a λ = 0 mode) there is no steady state;
//   - per group of harmonically related frequencies (harmonic_groups), the periodic response to
//     that group's sinusoids alone, found by shooting over the group's period T = 1/f₀.
// A network before t = 0 that is degenerate (a structural problem, a singular matrix), that
// grows (an eigenvalue of A with Re λ > 0) or that a source drives at a lossless resonance has no
// steady state: every state not given starts from 0, and the note says why.
//
// Shooting on one group, with the monodromy matrix: n unforced deviation runs from t = −T to 0,
// w_j = x − e_j from x(−T) = e_j (w keeps the digits of Φ − I where T ≪ τ), give
//   W = Φ − I (column j = w_j(0)) and  Q_h = ∫e^{A(t+T)}dt over the period (column j = T·e_j + ∫w_j).
// For a start x₀ a forced run gives r(x₀) = [x(0) − x₀ ; ∫x dt / T], the periodicity defect
// and the mean over the period; the periodic response has both zero (the sinusoids have zero
// mean, so A·∫x = x(0) − x(−T) = 0 and a λ = 0 mode's mean is the phasor solution's, 0). Newton:
// x₀ ← x₀ − M⁺·r(x₀), M = [W ; Q_h/T], the least-squares solution of the 2n×n system, until a
// correction is below kShootingTolerance of the state. Each half is well conditioned where the
// other is not: a mode with |λ|·T ≫ 1 is fixed by the periodicity (1 − e^{λT} ≈ 1), a slow one
// (|λ|·T ≪ 1, where 1 − e^{λT} → 0 would amplify the runs' error) by its mean ((e^{λT} − 1)/(λT)
// → 1); stacked, M's singular values stay of order one unless a source meets a lossless
// resonance (e^{λT} = 1 with λ ≠ 0), which is then reported.
#include "verify/initial_state.hpp"

#include <algorithm>
#include <cmath>

#include <Eigen/Eigenvalues>
#include <Eigen/QR>
#include <Eigen/SVD>
#include <fmt/format.h>
#include <fmt/ranges.h>

#include "netfold/units.hpp"

namespace netfold::integration {

namespace {

// Tightest tolerance asked of a shooting run: a few ulps.
constexpr double kTightestShootingRtol = 1e-15;
// Smallest absolute tolerance: far below any state in units of S, far above the denormals, so
// that CVODE's error weights 1/(rtol·|x| + atol) stay finite where the state is exactly 0.
constexpr double kAtolFloor = 1e-280;
// An eigenvalue or singular value below this share of ‖A‖ (or of M's largest) counts as 0.
constexpr double kZeroEigenvalue = 1e-12;
// Smallest σ_min/σ_max of the shooting's M: below, a source meets a lossless resonance.
constexpr double kResonanceCondition = 1e-11;

const char* unit_of_state(const Element& storage) { return storage.kind == ElementKind::capacitor ? "V" : "A"; }

// "C1 = 5 V, L1 = 0.2 A" (or "5 V" for one state).
std::string states_text(const Circuit& c, const std::vector<ElementId>& states, const Eigen::VectorXd& x,
                        double scale) {
  if (states.size() == 1) return format_si(x[0] * scale, unit_of_state(c.element(states[0])));
  std::vector<std::string> parts;
  for (std::size_t k = 0; k < states.size(); ++k)
    parts.push_back(fmt::format("{} = {}", c.element(states[k]).name,
                                format_si(x[static_cast<Eigen::Index>(k)] * scale, unit_of_state(c.element(states[k])))));
  return fmt::format("{}", fmt::join(parts, ", "));
}

// The periods shot over, for the note: "20 ms" or "20 ms, 16.67 ms and 2 more".
std::string periods_text(const std::vector<std::vector<double>>& groups) {
  std::string out;
  const std::size_t shown = std::min<std::size_t>(groups.size(), 3);
  for (std::size_t k = 0; k < shown; ++k) {
    if (k > 0) out += k + 1 == groups.size() ? " and " : ", ";
    out += format_si(1.0 / groups[k].front(), "s");
  }
  if (groups.size() > shown) out += fmt::format(" and {} more", groups.size() - shown);
  return out;
}

// A with each state held at zero given the equation x_k = 0 (its row and column are zero), so
// that it is not mistaken for an undetermined λ = 0 mode.
Eigen::MatrixXd held_as_fixed(const Configuration& pre) {
  Eigen::MatrixXd a = pre.a;
  const double norm = std::max(1.0, a.cwiseAbs().rowwise().sum().maxCoeff());
  for (std::size_t k = 0; k < pre.modes.size(); ++k)
    if (pre.modes[k] == PortMode::held_at_zero) a(static_cast<Eigen::Index>(k), static_cast<Eigen::Index>(k)) = -norm;
  return a;
}

// The DC operating point (file comment); false when A·x = −B·u_dc has no solution.
bool dc_operating_point(const Configuration& pre, const Eigen::VectorXd& u_dc, Eigen::VectorXd& x,
                        std::vector<bool>& undetermined) {
  const Eigen::MatrixXd a = held_as_fixed(pre);
  const auto n = a.rows();
  const double norm = a.cwiseAbs().rowwise().sum().maxCoeff();
  const Eigen::VectorXd rhs = -(pre.b * u_dc);
  Eigen::CompleteOrthogonalDecomposition<Eigen::MatrixXd> cod(a);
  cod.setThreshold(kZeroEigenvalue);
  x = cod.solve(rhs);
  if (!x.allFinite() || (a * x - rhs).norm() > 1e-9 * (norm * x.norm() + rhs.norm())) return false;
  undetermined.assign(static_cast<std::size_t>(n), false);
  if (cod.rank() < n) {
    const Eigen::MatrixXd kernel = cod.matrixZ().transpose().rightCols(n - cod.rank());
    const Eigen::MatrixXd null = cod.colsPermutation() * kernel;
    for (Eigen::Index i = 0; i < n; ++i)
      if (null.row(i).norm() > 1e-8) undetermined[static_cast<std::size_t>(i)] = true;
  }
  return true;
}

// One shooting run from x(−T) = x0 on `eq`: x(0) and ∫x dt; false when the integrator stopped.
bool period_run(Integrator& cv, StateEquation& eq, double period, const Eigen::VectorXd& x0, double rtol,
                const Eigen::VectorXd& atol, double hmax, Eigen::VectorXd& end, Eigen::VectorXd& integral) {
  cv.start(eq, -period, x0, 0.0, rtol, atol, hmax);
  const bool ok = cv.advance_to(0.0, end);
  integral = cv.quadrature();
  cv.finish();
  return ok;
}

// The outcome of one group's shooting.
enum class Shot : std::uint8_t { ok, stopped, resonance };

// The periodic response at t = 0 to the sinusoids of one group, by shooting (file comment).
Shot shoot_group(const Configuration& pre, const std::vector<SourceSignal>& signals, const std::vector<double>& group,
                 Integrator& cv, double rtol, Eigen::VectorXd& x, int& iterations) {
  const double period = 1.0 / group.front();
  const double rtol_s = std::max(kTightestShootingRtol, 1e-2 * rtol);
  const auto n = static_cast<Eigen::Index>(pre.state_count());
  const double norm = pre.a.cwiseAbs().rowwise().sum().maxCoeff();

  // The monodromy matrix, as W = Φ − I and the integral Q_h, from n deviation runs.
  Eigen::MatrixXd m(2 * n, n);
  StateEquation deviation(pre, signals, Forcing{{}, false, {}});
  const Eigen::VectorXd w_atol =
      Eigen::VectorXd::Constant(n, std::max(rtol_s * kAtolFraction * std::min(1.0, norm * period), kAtolFloor));
  Eigen::VectorXd end, integral;
  for (Eigen::Index j = 0; j < n; ++j) {
    deviation.set_offset(Eigen::VectorXd::Unit(n, j));
    if (!period_run(cv, deviation, period, Eigen::VectorXd::Zero(n), rtol_s, w_atol, 0.0, end, integral))
      return Shot::stopped;
    m.col(j).head(n) = end;
    m.col(j).tail(n) = (integral + period * Eigen::VectorXd::Unit(n, j)) / period;
  }
  const Eigen::JacobiSVD<Eigen::MatrixXd> svd(m);
  const Eigen::VectorXd sv = svd.singularValues();
  if (!(sv(n - 1) > kResonanceCondition * sv(0))) return Shot::resonance;
  const Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(m);

  // Newton on the periodicity and the mean, from x₀ = 0.
  StateEquation forced(pre, signals, Forcing{{}, true, group});
  const std::vector<double> no_levels(signals.size(), 0.0);
  const std::vector<double> scale = forcing_scale(pre, no_levels, signals, period);
  Eigen::VectorXd atol(n);
  for (Eigen::Index k = 0; k < n; ++k)
    atol[k] = std::max(rtol_s * kAtolFraction * scale[static_cast<std::size_t>(k)], kAtolFloor);
  x = Eigen::VectorXd::Zero(n);
  double last = kInfinity;
  for (iterations = 0; iterations < kMaxShootingIterations;) {
    if (!period_run(cv, forced, period, x, rtol_s, atol, step_limit(group), end, integral)) return Shot::stopped;
    Eigen::VectorXd r(2 * n);
    r.head(n) = end - x;
    r.tail(n) = integral / period;
    const Eigen::VectorXd dx = qr.solve(r);
    const double size = dx.cwiseAbs().maxCoeff();
    // A correction that no longer shrinks is the integrator's own error: x stands.
    if (!(size < last)) break;
    x -= dx;
    ++iterations;
    last = size;
    if (size <= kShootingTolerance * x.cwiseAbs().maxCoeff()) break;
  }
  return Shot::ok;
}

}  // namespace

std::vector<std::vector<double>> harmonic_groups(const std::vector<double>& frequencies) {
  std::vector<std::vector<double>> groups;
  std::vector<bool> taken(frequencies.size(), false);
  for (std::size_t i = 0; i < frequencies.size(); ++i) {
    if (taken[i]) continue;
    std::vector<double> group{frequencies[i]};
    for (std::size_t j = i + 1; j < frequencies.size(); ++j) {
      const double cycles = frequencies[j] / frequencies[i];
      if (taken[j] || cycles > kMaxShootingPeriods) continue;
      if (std::fabs(cycles - std::round(cycles)) <= 1e-12 * cycles) {
        group.push_back(frequencies[j]);
        taken[j] = true;
      }
    }
    groups.push_back(std::move(group));
  }
  return groups;
}

// The steps of find_initial_state (a function of about 110 lines: each step ends the search
// with its own note, and the notes read best in the order the format states its rules).
InitialState find_initial_state(const AppliedScenario& applied, Configurations& configs,
                                const std::vector<SourceSignal>& signals, double scale, StepBudget& budget,
                                double rtol) {
  InitialState out;
  const Circuit& c = applied.circuit();
  const std::vector<ElementId> states = c.storage_elements();
  const auto n = static_cast<Eigen::Index>(states.size());
  out.values = Eigen::VectorXd::Zero(n);
  if (states.empty()) return out;
  std::vector<std::string> names;
  for (ElementId id : states) names.push_back(c.element(id).name);
  const std::string subject = fmt::format("{}", fmt::join(names, ", "));

  // 1. Given states keep their value.
  std::vector<bool> given(states.size(), false);
  Eigen::VectorXd given_values = Eigen::VectorXd::Zero(n);
  for (std::size_t k = 0; k < states.size(); ++k)
    if (auto v = given_initial_state(applied, states[k])) {
      given[k] = true;
      given_values[static_cast<Eigen::Index>(k)] = *v / scale;
    }
  auto with_given = [&] {
    for (std::size_t k = 0; k < states.size(); ++k)
      if (given[k]) out.values[static_cast<Eigen::Index>(k)] = given_values[static_cast<Eigen::Index>(k)];
  };
  if (std::all_of(given.begin(), given.end(), [](bool g) { return g; })) {
    out.values = given_values;
    out.method = InitialStateMethod::given;
    out.note = fmt::format("{} at t = 0- {} given: {}", subject, n == 1 ? "is" : "are",
                           states_text(c, states, out.values, scale));
    return out;
  }
  auto undetermined = [&](const std::string& why) {
    out.values.setZero();
    with_given();
    out.method = InitialStateMethod::undetermined;
    out.note = n == 1 ? fmt::format("{} at t = 0-: {}, so its steady state there is undetermined; started from 0 {}, "
                                    "as the format prescribes",
                                    subject, why, unit_of_state(c.element(states[0])))
                      : fmt::format("{} at t = 0-: {}, so their steady state there is undetermined; the states not "
                                    "given start from 0, as the format prescribes: {}",
                                    subject, why, states_text(c, states, out.values, scale));
    return out;
  };

  // 2. The network before t = 0, its inductors with an open loop held at zero.
  std::string why;
  const SwitchPositions pre_positions = positions_before_zero(c);
  const std::optional<std::vector<PortMode>> modes = configs.modes_for(pre_positions, why);
  const Configuration* pre = modes ? configs.find(pre_positions, *modes, why) : nullptr;
  if (!pre) return undetermined("the network before t = 0 is degenerate (" + why + ")");
  const Eigen::MatrixXd a = held_as_fixed(*pre);
  const double norm = a.cwiseAbs().rowwise().sum().maxCoeff();
  const Eigen::VectorXcd ev = Eigen::EigenSolver<Eigen::MatrixXd>(a, false).eigenvalues();
  const double growth = ev.real().maxCoeff();
  if (growth > kZeroEigenvalue * norm)
    return undetermined(fmt::format("the network before t = 0 makes {} grow (an eigenvalue {:.3g} 1/s)",
                                    n == 1 ? "it" : "them", growth));

  // 3. The DC operating point.
  Eigen::VectorXd u_dc(static_cast<Eigen::Index>(signals.size()));
  for (std::size_t k = 0; k < signals.size(); ++k) u_dc[static_cast<Eigen::Index>(k)] = signals[k].level_before_zero();
  Eigen::VectorXd x;
  std::vector<bool> free_states;
  if (!dc_operating_point(*pre, u_dc, x, free_states))
    return undetermined("a DC source drives a state that has no DC path before t = 0");
  std::vector<std::string> free_names;
  for (std::size_t k = 0; k < states.size(); ++k)
    if (free_states[k] && !given[k]) free_names.push_back(names[k]);
  if (n == 1 && !free_names.empty()) return undetermined("it sees no resistance before t = 0 (∂f/∂x = 0)");
  const std::string free_text =
      free_names.empty() ? ""
                         : fmt::format("; {} see{} no resistance before t = 0, so {} steady state is undetermined and "
                                       "the least-norm one is taken (0 where decoupled), as the format prescribes",
                                       fmt::join(free_names, ", "), free_names.size() == 1 ? "s" : "",
                                       free_names.size() == 1 ? "its" : "their");
  out.values = x;
  out.method = free_names.empty() ? InitialStateMethod::dc_operating_point : InitialStateMethod::undetermined;
  const std::vector<double> reach = forcing_scale(*pre, std::vector<double>(u_dc.data(), u_dc.data() + u_dc.size()),
                                                  signals, 1.0);
  if (std::all_of(reach.begin(), reach.end(), [](double r) { return r == 0.0; })) {
    // No source reaches a state before t = 0 (they are switched off, or absent): at rest.
    with_given();
    out.note = n == 1 ? fmt::format("{} at t = 0-: no source reaches it before t = 0, so it rests at 0 {}", subject,
                                    unit_of_state(c.element(states[0])))
                      : fmt::format("{} at t = 0-: no source reaches them before t = 0, so they rest at {}{}", subject,
                                    states_text(c, states, out.values, scale), free_text);
    return out;
  }

  // 4. The periodic response to each group of harmonically related sinusoids.
  const std::vector<std::vector<double>> groups = harmonic_groups(source_frequencies(signals));
  if (groups.empty()) {
    with_given();
    out.note = fmt::format("{} at t = 0- from the DC operating point of the network before t = 0: {}{}", subject,
                           states_text(c, states, out.values, scale), free_text);
    return out;
  }
  Integrator cv(budget, states.size(), true);
  for (const auto& group : groups) {
    Eigen::VectorXd shot;
    int iterations = 0;
    const Shot result = shoot_group(*pre, signals, group, cv, rtol, shot, iterations);
    if (result == Shot::stopped) {
      out.status = cv.status();
      out.message = cv.message();
      out.stats = cv.totals();
      return out;
    }
    if (result == Shot::resonance) {
      out.stats = cv.totals();
      return undetermined(fmt::format("a source drives a lossless resonance at {} before t = 0",
                                      format_si(group.front(), "Hz")));
    }
    out.values += shot;
    out.shooting_iterations = std::max(out.shooting_iterations, iterations);
  }
  with_given();
  out.stats = cv.totals();
  if (out.method != InitialStateMethod::undetermined) out.method = InitialStateMethod::shooting;
  out.note = fmt::format("{} at t = 0- from the steady state before t = 0: the DC operating point plus the periodic "
                         "response to {} group{} of harmonically related sinusoids, each by shooting over its period "
                         "({}; rtol {:.0e}; Newton with the monodromy matrix, {} correction{} at most): {}{}",
                         subject, groups.size(), groups.size() == 1 ? "" : "s", periods_text(groups),
                         std::max(kTightestShootingRtol, 1e-2 * rtol), out.shooting_iterations,
                         out.shooting_iterations == 1 ? "" : "s", states_text(c, states, out.values, scale),
                         free_text);
  return out;
}

}  // namespace netfold::integration
