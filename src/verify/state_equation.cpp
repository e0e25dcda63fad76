#include "verify/state_equation.hpp"

#include "netfold/scenario.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

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

}  // namespace

double evaluate(const LinearForm& form, const Eigen::VectorXd& x, const Eigen::VectorXd& u) {
  double y = 0.0;
  for (auto [i, c] : form.unknowns) y += c * x[static_cast<Eigen::Index>(i)];
  for (auto [j, c] : form.inputs) y += c * u[static_cast<Eigen::Index>(j)];
  return y;
}

ElementId storage_element(const Circuit& circuit) {
  const std::vector<ElementId> storages = circuit.storage_elements();
  return storages.empty() ? kNone : storages.front();
}

double SourceSignal::sinusoids_at(double t, const std::vector<double>* only) const {
  double v = 0.0;
  for (const auto& s : waveform->sinusoids) {
    if (only && std::find(only->begin(), only->end(), s.frequency) == only->end()) continue;
    v += s.amplitude * std::cos(kTwoPi * s.frequency * (t + time_shift) + s.phase);
  }
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

std::vector<SourceSignal> source_signals(const Solution& s, double inv_scale) {
  std::vector<SourceSignal> out;
  // The network stage's input layout (u[1 + k] = source k), read from the circuit, not the schedule.
  for (ElementId id : independent_sources(s.circuit())) {
    const Element& e = s.circuit().element(id);
    SourceSignal sig{&e.waveform, 0.0, inv_scale};
    // The scenario's phase is the first sinusoid's `phase` as written (spec v2): read here on
    // the numerical path's own terms, as a shift of the source's time origin by Δ/(2π·f₁), so
    // that every harmonic moves with it and the DC part and steps stay.
    for (const SourcePhase& sp : s.options().scenario.source_phases)
      if (sp.source == id && !e.waveform.sinusoids.empty()) {
        const Sinusoid& first = e.waveform.sinusoids.front();
        sig.time_shift = (sp.phase - written_phase(s.circuit(), id)) / (kTwoPi * first.frequency);
      }
    out.push_back(sig);
  }
  return out;
}

std::optional<double> given_initial_state(const Solution& s, ElementId storage) {
  std::optional<double> given = s.circuit().element(storage).initial;
  for (const ResidualState& r : s.options().scenario.residual_states)
    if (r.element == storage) given = r.value;
  return given;
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

std::unique_ptr<Configuration> Configurations::assemble(const SwitchPositions& positions, PortMode mode,
                                                        std::string& why) const {
  auto c = std::make_unique<Configuration>();
  c->positions = positions;
  c->mode = mode;
  c->system = build_nodal_system(circuit_, positions, BuildOptions{mode, std::nullopt, {}});
  if (!c->system.problems().empty()) {
    why = "its nodal equations have a structural problem";
    return nullptr;
  }
  // The same solver choice as the engine (its agreement across solvers is tested in
  // test_solvers): independence comes from solving the full system at every step for the
  // state's own right-hand side, not from a different factorization.
  c->lu = factor_nodal_matrix(c->system.matrix(), c->system.symmetric_positive_definite());
  if (c->lu->rcond() < kSingularRcond) {
    why = fmt::format("its nodal matrix is singular (reciprocal condition {:.1e} < {:.0e})", c->lu->rcond(),
                      kSingularRcond);
    return nullptr;
  }
  c->port = c->system.port_quantity();
  return c;
}

void Configurations::add_forms(Configuration& c, const std::string& where) const {
  const auto n_inputs = static_cast<Eigen::Index>(c.system.input_count());
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
    // ∂/∂x with its sign, for the product rule of a power.
    const Eigen::VectorXd e0 = Eigen::VectorXd::Unit(n_inputs, 0);
    c.observable_gains.emplace_back(evaluate(f, unit.col(0), e0), g ? evaluate(*g, unit.col(0), e0) : 0.0);
    c.observable_input_gains.emplace_back(gf, gg);
    c.observable_forms.emplace_back(std::move(f), std::move(g));
  }
  for (ElementId id = 0; id < circuit_.elements().size(); ++id) {
    const LinearForm v = c.system.element_voltage(id), i = c.system.element_current(id);
    if (v.defined) c.voltage_gains.push_back(input_gains(v, unit));
    if (i.defined) c.current_gains.push_back(input_gains(i, unit));
  }
}

const Configuration& Configurations::get(const SwitchPositions& positions, PortMode mode, const std::string& where) {
  std::string why;
  Configuration* c = lookup(positions, mode, why);
  if (!c) throw NumericError(fmt::format("cross-check: {} in {}, which the engine did not report", why, where));
  if (!c->forms_ready) {
    add_forms(*c, where);
    c->forms_ready = true;
  }
  return *c;
}

const Configuration* Configurations::find(const SwitchPositions& positions, PortMode mode, std::string& why) {
  return lookup(positions, mode, why);
}

PortMode Configurations::mode_for(const SwitchPositions& positions, const std::string& where) {
  std::vector<bool> key = positions.closed;
  if (auto it = modes_.find(key); it != modes_.end()) return it->second;
  std::string why;
  PortMode mode = PortMode::port;
  if (!lookup(positions, PortMode::port, why)) {
    // The format's rule: an inductor whose loop is open carries no current, held at zero there;
    // any other problem the engine reports as an error before the cross-check runs.
    const NodalSystem sys = build_nodal_system(circuit_, positions, BuildOptions{PortMode::port, std::nullopt, {}});
    const auto& p = sys.problems();
    const bool loop_open = !p.empty() && std::all_of(p.begin(), p.end(), [](const TopologyProblem& q) {
      return q.kind == TopologyProblem::Kind::inductor_open;
    });
    if (!loop_open) throw NumericError(fmt::format("cross-check: {} in {}, which the engine did not report", why, where));
    mode = PortMode::held_at_zero;
  }
  modes_.emplace(std::move(key), mode);
  return mode;
}

Configuration* Configurations::lookup(const SwitchPositions& positions, PortMode mode, std::string& why) {
  // Found by hash: a sequence of many events has as many configurations, and a linear
  // search over them made the cross-check quadratic in the events.
  std::vector<bool> key = positions.closed;
  key.push_back(mode == PortMode::held_at_zero);
  if (auto it = index_.find(key); it != index_.end()) return items_[it->second].get();
  std::unique_ptr<Configuration> c = assemble(positions, mode, why);
  if (!c) return nullptr;
  index_.emplace(std::move(key), items_.size());
  items_.push_back(std::move(c));
  return items_.back().get();
}

StateEquation::StateEquation(const Configuration& config, double storage_value,
                             const std::vector<SourceSignal>& signals, Forcing forcing)
    : config_(&config), storage_value_(storage_value), signals_(&signals), forcing_(std::move(forcing)),
      u_(static_cast<Eigen::Index>(1 + signals.size())) {}

const Eigen::VectorXd& StateEquation::inputs(double t, double x) {
  u_[0] = x + offset_;
  const std::vector<double>* only = forcing_.only.empty() ? nullptr : &forcing_.only;
  for (std::size_t k = 0; k < signals_->size(); ++k) {
    double v = k < forcing_.levels.size() ? forcing_.levels[k] : 0.0;
    if (forcing_.sinusoids) v += (*signals_)[k].sinusoids_at(t, only);
    u_[static_cast<Eigen::Index>(k + 1)] = v;
  }
  return u_;
}

double StateEquation::rate(double t, double x) {
  const Eigen::VectorXd& u = inputs(t, x);
  return evaluate(config_->port, config_->unknowns(u), u) / storage_value_;
}

std::vector<double> sensitivities(const Configuration& config, double storage_value) {
  const auto n = static_cast<Eigen::Index>(config.system.input_count());
  std::vector<double> d(static_cast<std::size_t>(n), 0.0);
  for (Eigen::Index j = 0; j < n; ++j) {
    const Eigen::VectorXd u = Eigen::VectorXd::Unit(n, j);
    d[static_cast<std::size_t>(j)] = evaluate(config.port, config.unknowns(u), u) / storage_value;
  }
  return d;
}

double forcing_scale(const std::vector<double>& d, const std::vector<double>& levels,
                     const std::vector<SourceSignal>& signals, double span) {
  const double a = std::fabs(d.at(0));
  const double slow = span > 0.0 ? 1.0 / span : 0.0;
  double x = 0.0;
  for (std::size_t k = 0; k < signals.size(); ++k) {
    const double b = std::fabs(d.at(k + 1));
    if (b == 0.0) continue;
    const double rate = std::max(a, slow);
    if (rate > 0.0) x += b * std::fabs(levels.at(k)) / rate;
    for (const auto& s : signals[k].waveform->sinusoids) {
      double r = std::max(rate, kTwoPi * s.frequency);
      if (r > 0.0) x += b * std::fabs(s.amplitude) * signals[k].inv_scale / r;
    }
  }
  return std::isfinite(x) ? x : 0.0;
}

}  // namespace netfold::integration
