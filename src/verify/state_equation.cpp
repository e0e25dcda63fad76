#include "verify/state_equation.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <numbers>

#include <Eigen/Eigenvalues>
#include <fmt/format.h>

#include "netfold/reduce.hpp"

namespace netfold::integration {

namespace {

constexpr double kTwoPi = 2.0 * std::numbers::pi;

InputGains input_gains(const LinearForm& form, const Eigen::MatrixXd& unit_unknowns) {
  const Eigen::Index n = unit_unknowns.cols();
  InputGains g(static_cast<std::size_t>(n));
  Eigen::VectorXd e = Eigen::VectorXd::Zero(n);
  for (Eigen::Index j = 0; j < n; ++j) {
    e[j] = 1.0;
    g[static_cast<std::size_t>(j)] = std::fabs(evaluate(form, unit_unknowns.col(j), e));
    e[j] = 0.0;
  }
  return g;
}

// ∂y/∂x_k with its sign, for every state k (the product rule of a power needs the sign).
std::vector<double> state_gains(const LinearForm& form, const Eigen::MatrixXd& unit_unknowns, std::size_t states) {
  std::vector<double> g(states, 0.0);
  const Eigen::Index n = unit_unknowns.cols();
  for (std::size_t k = 0; k < states; ++k) {
    const auto j = static_cast<Eigen::Index>(k);
    g[k] = evaluate(form, unit_unknowns.col(j), Eigen::VectorXd::Unit(n, j));
  }
  return g;
}

// Key of a configuration: its switch positions, its diodes' states (two bits each), then one
// flag per state held at zero.
std::vector<bool> key_of(const SwitchPositions& positions, const std::vector<PortMode>& modes) {
  std::vector<bool> key = positions.closed;
  key.push_back(true);  // separator: the positions' length is fixed per circuit anyway
  for (DiodeState d : positions.diodes) {
    key.push_back(d == DiodeState::forward);
    key.push_back(d == DiodeState::reverse);
  }
  for (PortMode m : modes) key.push_back(m == PortMode::held_at_zero);
  return key;
}

}  // namespace

double evaluate(const LinearForm& form, const Eigen::VectorXd& x, const Eigen::VectorXd& u) {
  double y = 0.0;
  for (auto [i, c] : form.unknowns) y += c * x[static_cast<Eigen::Index>(i)];
  for (auto [j, c] : form.inputs) y += c * u[static_cast<Eigen::Index>(j)];
  return y;
}

double SourceSignal::sinusoids_at(double t, const std::vector<double>* only) const {
  double v = 0.0;
  for (const auto& s : waveform->sinusoids) {
    if (only && std::find(only->begin(), only->end(), s.frequency) == only->end()) continue;
    v += s.amplitude * std::cos(kTwoPi * s.frequency * t + s.phase);
  }
  return v * inv_scale;
}

double SourceSignal::sinusoid_slope_at(double t) const {
  double v = 0.0;
  for (const auto& s : waveform->sinusoids) v -= s.amplitude * kTwoPi * s.frequency * std::sin(kTwoPi * s.frequency * t + s.phase);
  return v * inv_scale;
}

double SourceSignal::level_at(double t) const { return waveform->level_at(t) * inv_scale; }

double SourceSignal::level_before_zero() const {
  double v = waveform->dc;
  for (const auto& s : waveform->steps)
    if (s.time < 0.0) v += s.level;
  return v * inv_scale;
}

double SourceSignal::magnitude() const {
  double m = std::fabs(waveform->dc);
  for (const auto& s : waveform->steps) m += std::fabs(s.level);
  for (const auto& s : waveform->sinusoids) m += std::fabs(s.amplitude);
  return m;
}

std::vector<SourceSignal> source_signals(const AppliedScenario& applied, double inv_scale) {
  std::vector<SourceSignal> out;
  // The network stage's input layout (u[first source + k] = source k), read from the circuit;
  // each waveform as the scenario makes it (a swept phase moves every harmonic with it).
  for (ElementId id : independent_sources(applied.circuit())) out.push_back(SourceSignal{&applied.waveform(id), inv_scale});
  return out;
}

std::optional<double> given_initial_state(const AppliedScenario& applied, ElementId storage) {
  if (auto v = applied.initial_state(storage)) return v;
  return applied.circuit().element(storage).initial;
}

std::vector<double> source_frequencies(const std::vector<SourceSignal>& signals) {
  std::vector<double> f;
  for (const auto& sig : signals)
    for (const auto& s : sig.waveform->sinusoids)
      if (s.amplitude != 0.0) f.push_back(s.frequency);
  std::sort(f.begin(), f.end());
  f.erase(std::unique(f.begin(), f.end()), f.end());
  return f;
}

double step_limit(const std::vector<double>& frequencies) {
  if (frequencies.empty()) return 0.0;
  return 0.25 / *std::max_element(frequencies.begin(), frequencies.end());
}

Eigen::VectorXd Configuration::unknowns(const Eigen::VectorXd& u) const {
  Eigen::MatrixXd x = lu->solve(system.right_hand_side(u));
  return x.col(0);
}

std::unique_ptr<Configuration> Configurations::assemble(const SwitchPositions& positions,
                                                        const std::vector<PortMode>& modes, std::string& why) const {
  auto c = std::make_unique<Configuration>();
  c->positions = positions;
  c->modes = modes;
  c->system = build_nodal_system(circuit_, positions, BuildOptions{PortMode::port, std::nullopt, modes});
  if (!c->system.problems().empty()) {
    why = "its nodal equations have a structural problem";
    return nullptr;
  }
  // The same solver choice as the engine (its agreement across solvers is tested in
  // test_solvers): independence comes from solving the full system at every step for the
  // states' own right-hand side, not from a different factorization.
  c->lu = factor_nodal_matrix(c->system.matrix(), c->system.symmetric_positive_definite());
  if (c->lu->rcond() < kSingularRcond) {
    why = fmt::format("its nodal matrix is singular (reciprocal condition {:.1e} < {:.0e})", c->lu->rcond(),
                      kSingularRcond);
    return nullptr;
  }
  // A and B, column by column from full nodal solves with a unit input.
  const std::size_t n = c->system.state_count();
  const auto n_in = static_cast<Eigen::Index>(c->system.input_count());
  const Eigen::Index first = c->first_source();
  const auto nn = static_cast<Eigen::Index>(n);
  c->a = Eigen::MatrixXd::Zero(nn, nn);
  c->b = Eigen::MatrixXd::Zero(nn, n_in - first);
  for (std::size_t k = 0; k < n; ++k) {
    c->ports.push_back(c->system.port_quantity(k));
    c->values.push_back(circuit_.element(c->system.state_elements()[k]).value);
  }
  std::vector<bool> active(n);
  for (std::size_t k = 0; k < n; ++k) active[k] = c->system.port_mode(k) == PortMode::port;
  for (Eigen::Index j = 0; j < n_in; ++j) {
    if (j < nn && !active[static_cast<std::size_t>(j)]) continue;
    if (j >= nn && j < first) continue;
    const Eigen::VectorXd u = Eigen::VectorXd::Unit(n_in, j);
    const Eigen::VectorXd x = c->unknowns(u);
    for (std::size_t k = 0; k < n; ++k) {
      if (!active[k]) continue;
      const double r = evaluate(c->ports[k], x, u) / c->values[k];
      if (j < nn) c->a(static_cast<Eigen::Index>(k), j) = r;
      else c->b(static_cast<Eigen::Index>(k), j - first) = r;
    }
  }
  std::vector<Eigen::Index> idx;
  for (std::size_t k = 0; k < n; ++k)
    if (active[k]) idx.push_back(static_cast<Eigen::Index>(k));
  if (!idx.empty()) {
    Eigen::MatrixXd sub(static_cast<Eigen::Index>(idx.size()), static_cast<Eigen::Index>(idx.size()));
    for (std::size_t i = 0; i < idx.size(); ++i)
      for (std::size_t j = 0; j < idx.size(); ++j)
        sub(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) = c->a(idx[i], idx[j]);
    const Eigen::VectorXcd ev = Eigen::EigenSolver<Eigen::MatrixXd>(sub, false).eigenvalues();
    c->slowest_rate = ev.cwiseAbs().minCoeff();
    if (!std::isfinite(c->slowest_rate)) c->slowest_rate = 0.0;
  }
  return c;
}

void Configurations::add_forms(Configuration& c, const std::string& where) const {
  const auto n_inputs = static_cast<Eigen::Index>(c.system.input_count());
  const std::size_t n = c.state_count();
  Eigen::MatrixXd unit(c.system.matrix().rows(), n_inputs);
  for (Eigen::Index j = 0; j < n_inputs; ++j) unit.col(j) = c.unknowns(Eigen::VectorXd::Unit(n_inputs, j));
  for (const auto& obs : observables_) {
    // The format's one definition of the observable (network stage), read directly: the
    // engine's reading of it goes through its own evaluation (and its test seams), so a
    // misreading there still shows here as a failed cross-check.
    ObservableForm form = observable_form(c.system, obs);
    LinearForm f = std::move(form.value);
    std::optional<LinearForm> g = std::move(form.current);
    if (!f.defined || (g && !g->defined))
      throw InputError(circuit_.diagnostic(obs.loc, fmt::format("'{}' is not defined in {}: the node has no "
                                                                "path to the reference there",
                                                                obs.text, where)));
    const InputGains gf = input_gains(f, unit);
    const InputGains gg = g ? input_gains(*g, unit) : InputGains{};
    c.observable_gains.emplace_back(state_gains(f, unit, n), g ? state_gains(*g, unit, n) : std::vector<double>(n));
    c.observable_input_gains.emplace_back(gf, gg);
    c.observable_forms.emplace_back(std::move(f), std::move(g));
  }
  for (ElementId id = 0; id < circuit_.elements().size(); ++id) {
    const LinearForm v = c.system.element_voltage(id), i = c.system.element_current(id);
    if (v.defined) c.voltage_gains.push_back(input_gains(v, unit));
    if (i.defined) c.current_gains.push_back(input_gains(i, unit));
  }
}

const Configuration& Configurations::get(const SwitchPositions& positions, const std::vector<PortMode>& modes,
                                         const std::string& where) {
  std::string why;
  Configuration* c = lookup(positions, modes, why);
  if (!c) throw NumericError(fmt::format("cross-check: {} in {}, which the engine did not report", why, where));
  if (!c->forms_ready) {
    add_forms(*c, where);
    c->forms_ready = true;
  }
  return *c;
}

const Configuration* Configurations::find(const SwitchPositions& positions, const std::vector<PortMode>& modes,
                                          std::string& why) {
  return lookup(positions, modes, why);
}

std::optional<std::vector<PortMode>> Configurations::modes_for(const SwitchPositions& positions, std::string& why) {
  const std::vector<bool> key = key_of(positions, {});
  if (auto it = modes_.find(key); it != modes_.end()) return it->second;
  const std::vector<ElementId> states = circuit_.storage_elements();
  std::vector<PortMode> modes(states.size(), PortMode::port);
  if (!lookup(positions, modes, why)) {
    // The format's rule: an inductor whose loop is open carries no current, held at zero there;
    // any other problem the engine reports as an error before the cross-check runs.
    const NodalSystem sys = build_nodal_system(circuit_, positions, BuildOptions{PortMode::port, std::nullopt, modes});
    const auto& p = sys.problems();
    if (p.empty()) return std::nullopt;  // singular: `why` says so
    for (const TopologyProblem& q : p) {
      if (q.kind != TopologyProblem::Kind::inductor_open) return std::nullopt;
      for (ElementId id : q.elements)
        if (const std::uint32_t k = sys.state_input(id); k != kNone) modes[k] = PortMode::held_at_zero;
    }
    if (!lookup(positions, modes, why)) return std::nullopt;
  }
  modes_.emplace(key, modes);
  return modes;
}

Configuration* Configurations::lookup(const SwitchPositions& positions, const std::vector<PortMode>& modes,
                                      std::string& why) {
  // Found by hash: a sequence of many events has as many configurations, and a linear
  // search over them made the cross-check quadratic in the events.
  std::vector<bool> key = key_of(positions, modes);
  if (auto it = index_.find(key); it != index_.end()) return items_[it->second].get();
  std::unique_ptr<Configuration> c = assemble(positions, modes, why);
  if (!c) return nullptr;
  index_.emplace(std::move(key), items_.size());
  items_.push_back(std::move(c));
  return items_.back().get();
}

StateEquation::StateEquation(const Configuration& config, const std::vector<SourceSignal>& signals, Forcing forcing)
    : config_(&config), signals_(&signals), forcing_(std::move(forcing)),
      offset_(Eigen::VectorXd::Zero(static_cast<Eigen::Index>(config.state_count()))),
      u_(Eigen::VectorXd::Zero(static_cast<Eigen::Index>(config.system.input_count()))) {}

const Eigen::VectorXd& StateEquation::inputs(double t, const double* x) {
  const auto n = static_cast<Eigen::Index>(size());
  for (Eigen::Index k = 0; k < n; ++k)
    u_[k] = config_->modes[static_cast<std::size_t>(k)] == PortMode::port ? x[k] + offset_[k] : 0.0;
  const std::vector<double>* only = forcing_.only.empty() ? nullptr : &forcing_.only;
  const Eigen::Index first = config_->first_source();
  for (std::size_t k = 0; k < signals_->size(); ++k) {
    double v = k < forcing_.levels.size() ? forcing_.levels[k] : 0.0;
    if (forcing_.sinusoids) v += (*signals_)[k].sinusoids_at(t, only);
    u_[first + static_cast<Eigen::Index>(k)] = v;
  }
  if (const std::uint32_t unit = config_->system.unit_input(); unit != kNone) u_[unit] = forcing_.unit;
  return u_;
}

Eigen::VectorXd StateEquation::input_slopes(double t, const double* x) {
  const auto n = static_cast<Eigen::Index>(size());
  Eigen::VectorXd du = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(config_->system.input_count()));
  if (n > 0) {
    Eigen::VectorXd r(n);
    rate(t, x, r.data());
    du.head(n) = r;
  }
  const Eigen::Index first = config_->first_source();
  if (forcing_.sinusoids && forcing_.only.empty())
    for (std::size_t k = 0; k < signals_->size(); ++k)
      du[first + static_cast<Eigen::Index>(k)] = (*signals_)[k].sinusoid_slope_at(t);
  return du;
}

void StateEquation::roots(double t, const double* x, double* g) {
  const Eigen::VectorXd& u = inputs(t, x);
  const Eigen::VectorXd xs = config_->unknowns(u);
  for (std::size_t i = 0; i < watches_.size(); ++i)
    g[i] = watches_[i].sign * evaluate(watches_[i].form, xs, u) - watches_[i].level;
}

void StateEquation::rate(double t, const double* x, double* rate) {
  const Eigen::VectorXd& u = inputs(t, x);
  const Eigen::VectorXd xs = config_->unknowns(u);
  for (std::size_t k = 0; k < size(); ++k)
    rate[k] = config_->modes[k] == PortMode::port ? evaluate(config_->ports[k], xs, u) / config_->values[k] : 0.0;
}

std::vector<double> forcing_scale(const Configuration& config, const std::vector<double>& levels,
                                  const std::vector<SourceSignal>& signals, double span, double unit) {
  const auto n = static_cast<Eigen::Index>(config.state_count());
  std::vector<double> x(static_cast<std::size_t>(n), 0.0);
  if (n == 0) return x;
  const double sigma = span > 0.0 ? 1.0 / span : 1.0;
  const Eigen::MatrixXcd a = config.a.cast<std::complex<double>>();
  // |(s − A)⁻¹·b·term| per state, added term by term.
  auto add = [&](std::complex<double> s, const Eigen::VectorXd& b, double term) {
    if (term == 0.0 || b.isZero()) return;
    const Eigen::MatrixXcd m = s * Eigen::MatrixXcd::Identity(n, n) - a;
    const Eigen::VectorXcd y = Eigen::FullPivLU<Eigen::MatrixXcd>(m).solve(b.cast<std::complex<double>>());
    for (Eigen::Index j = 0; j < n; ++j) x[static_cast<std::size_t>(j)] += std::abs(y[j]) * term;
  };
  for (std::size_t k = 0; k < signals.size(); ++k) {
    const Eigen::VectorXd b = config.b.col(static_cast<Eigen::Index>(k));
    add(sigma, b, std::fabs(levels.at(k)));
    for (const auto& s : signals[k].waveform->sinusoids)
      add(std::complex<double>(sigma, kTwoPi * s.frequency), b, std::fabs(s.amplitude) * signals[k].inv_scale);
  }
  if (config.system.unit_input() != kNone && config.b.cols() > static_cast<Eigen::Index>(signals.size()))
    add(sigma, config.b.col(static_cast<Eigen::Index>(signals.size())), std::fabs(unit));
  for (double& v : x)
    if (!std::isfinite(v)) v = 0.0;
  return x;
}

}  // namespace netfold::integration
