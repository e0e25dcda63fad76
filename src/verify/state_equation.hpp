#pragma once
// The numerical path's own reading of the network (see integrate.hpp): the sources evaluated
// from the scenario's waveforms, one nodal system per switch configuration, and the state
// equation CVODE integrates. Private to src/verify/.
//
// Everything here works in units of the run's input scale S (integrate.hpp): source values are
// divided by S, so that the states and every unknown are too.

#include <memory>
#include <optional>
#include <string>
#include <unordered_map>
#include <utility>
#include <vector>

#include <Eigen/Dense>

#include "netfold/scenario.hpp"
#include "netfold/solve.hpp"
#include "network/linear_solver.hpp"

namespace netfold::integration {

// y = Σ c·x_i + Σ c·u_j.
double evaluate(const LinearForm& form, const Eigen::VectorXd& x, const Eigen::VectorXd& u);

// One source's waveform as the numerical path sees it (the scenario applied), divided by the
// input scale.
struct SourceSignal {
  const Waveform* waveform = nullptr;
  double inv_scale = 1.0;  // 1/S, a power of two

  // The sinusoids at t; with `only`, just those at these frequencies (Hz).
  double sinusoids_at(double t, const std::vector<double>* only = nullptr) const;
  // d/dt of the sinusoids at t (the levels are constant between events).
  double sinusoid_slope_at(double t) const;
  // dc plus the steps taken at or before t.
  double level_at(double t) const;
  // dc plus the steps at negative times: the level "for all t < 0" of the format.
  double level_before_zero() const;
  // The largest |value| the waveform can take, unscaled: |dc| + Σ|steps| + Σ|amplitudes|.
  double magnitude() const;
};

// The sources in the network stage's input order, with the scenario applied, and 1/S.
std::vector<SourceSignal> source_signals(const AppliedScenario& applied, double inv_scale);

// The state at t = 0− that the scenario or the element's `initial` gives, if any.
std::optional<double> given_initial_state(const AppliedScenario& applied, ElementId storage);

// The distinct frequencies (Hz) of every sinusoid with a non-zero amplitude, ascending.
std::vector<double> source_frequencies(const std::vector<SourceSignal>& signals);

// Largest step allowed: a quarter period of the fastest of `frequencies`, a guard against
// stepping over a whole period where the forcing happens to look flat (0 = no limit).
double step_limit(const std::vector<double>& frequencies);

// Gains of a linear form per input: |∂y/∂u_j| for every j (the states first, then the sources).
using InputGains = std::vector<double>;

// One switch configuration: its MNA system, one factorization of G reused for every
// right-hand side evaluated in it, and the state equation's matrices found from it.
struct Configuration {
  SwitchPositions positions;
  std::vector<PortMode> modes;  // per state
  NodalSystem system;
  std::unique_ptr<LinearSolver> lu;
  std::vector<LinearForm> ports;  // per state: its port quantity (C·dv/dt or L·di/dt)
  std::vector<double> values;     // per state: its capacitance (F) or inductance (H)
  // dx/dt = A·x + B·u_sources, A (n×n, 1/s) and B (n×m), each column from one full nodal solve
  // with a unit input: A is the Newton matrix's Jacobian, and sizes the tolerances. A state
  // held at zero has a zero row and column.
  Eigen::MatrixXd a, b;
  // The smallest |eigenvalue| of A over the states not held at zero (1/s; 0 with a λ = 0 mode).
  double slowest_rate = 0.0;
  // Per observable: its form, and the current's form for a power (v·i).
  std::vector<std::pair<LinearForm, std::optional<LinearForm>>> observable_forms;
  // Per observable: ∂/∂x_k of each of the two forms above (per unit of each state).
  std::vector<std::pair<std::vector<double>, std::vector<double>>> observable_gains;
  // Per observable: the input gains of each of the two forms (the second empty unless a power).
  std::vector<std::pair<InputGains, InputGains>> observable_input_gains;
  // The input gains of every element's voltage and current (those defined here).
  std::vector<InputGains> voltage_gains, current_gains;
  // True once the observables' forms and every gain above are filled in (Configurations::get).
  bool forms_ready = false;

  std::size_t state_count() const { return ports.size(); }
  Eigen::Index first_source() const { return static_cast<Eigen::Index>(system.first_source_input()); }
  // x = G⁻¹·B·u.
  Eigen::VectorXd unknowns(const Eigen::VectorXd& u) const;
};

// Each distinct configuration (positions, port modes) is assembled and factored once.
class Configurations {
 public:
  Configurations(const Circuit& circuit, const std::vector<Observable>& observables)
      : circuit_(circuit), observables_(observables) {}

  // The configuration; throws NumericError when its equations have a structural problem or a
  // singular matrix (the engine reports those first), InputError when an observable is
  // undefined in it. `where` names it in messages.
  const Configuration& get(const SwitchPositions& positions, const std::vector<PortMode>& modes,
                           const std::string& where);
  // The configuration, or nullptr with `why` when its equations have a structural problem or a
  // singular matrix (the network before t = 0 may be degenerate: the format allows it).
  const Configuration* find(const SwitchPositions& positions, const std::vector<PortMode>& modes, std::string& why);
  // How each storage element enters the equations of a configuration, decided here from the
  // topology: held_at_zero for an inductor whose loop is open (the format's rule), port
  // otherwise. Nullopt, with `why`, when the configuration has any other structural problem.
  std::optional<std::vector<PortMode>> modes_for(const SwitchPositions& positions, std::string& why);
  long count() const { return static_cast<long>(items_.size()); }

 private:
  const Circuit& circuit_;
  const std::vector<Observable>& observables_;
  std::vector<std::unique_ptr<Configuration>> items_;
  std::unordered_map<std::vector<bool>, std::size_t> index_;  // positions + modes → items_
  std::unordered_map<std::vector<bool>, std::vector<PortMode>> modes_;  // positions (key_of) → modes_for

  Configuration* lookup(const SwitchPositions& positions, const std::vector<PortMode>& modes, std::string& why);
  std::unique_ptr<Configuration> assemble(const SwitchPositions& positions, const std::vector<PortMode>& modes,
                                          std::string& why) const;
  void add_forms(Configuration& c, const std::string& where) const;
};

// Which sources drive a StateEquation.
struct Forcing {
  std::vector<double> levels;  // per source: its constant level in the segment (scaled)
  bool sinusoids = true;       // false: no sinusoid at all
  std::vector<double> only;    // when not empty: just the sinusoids at these frequencies
  // The value of the unit input that carries the diodes' drops (NodalSystem::unit_input): 1/S
  // in the run's units; 0 for an unforced (deviation) run.
  double unit = 0.0;
};

// A root function CVODE watches (state_events.cpp): g = sign·y(t, x) − level, y a linear form
// of the configuration's unknowns and inputs (a diode's current or voltage, a contact's).
struct Watch {
  LinearForm form;
  double sign = 1.0;
  double level = 0.0;  // in the run's units (÷ S)
  int direction = -1;  // CVODE's root direction: −1 falling only, 0 either way
};

// The right-hand side CVODE integrates, dx_k/dt = f_k(t, x) = q_k(t, x)/S_k: q_k the k-th port
// quantity (capacitor current, A, or inductor voltage, V) from the full solve of
// G·x = B·u(t, x), S_k the capacitance (F) or inductance (H). Within a segment a source's level
// (dc plus the steps taken) is the level at the segment's start: CVODE evaluates the
// right-hand side at the segment's end, where a step of the next segment must not count yet.
// With an offset (set_offset), the state is shifted: f(t, w + offset), which gives the shooting
// its deviation runs.
class StateEquation {
 public:
  StateEquation(const Configuration& config, const std::vector<SourceSignal>& signals, Forcing forcing);

  void set_offset(Eigen::VectorXd offset) { offset_ = std::move(offset); }
  // u(t, x): u[0 .. n−1] = x (+ offset), u[first source + k] = source k at t.
  const Eigen::VectorXd& inputs(double t, const double* x);
  // dx/dt at (t, x) into `rate` (n values each).
  void rate(double t, const double* x, double* rate);
  // du/dt at (t, x): the states' rates, the sinusoids' slopes, 0 for the levels and the unit.
  Eigen::VectorXd input_slopes(double t, const double* x);
  // The root functions watched in this run, and their values at (t, x) into `g`.
  void set_watches(std::vector<Watch> watches) { watches_ = std::move(watches); }
  const std::vector<Watch>& watches() const { return watches_; }
  void roots(double t, const double* x, double* g);
  const Configuration& config() const { return *config_; }
  std::size_t size() const { return config_->state_count(); }

 private:
  const Configuration* config_;
  const std::vector<SourceSignal>* signals_;
  Forcing forcing_;
  Eigen::VectorXd offset_;
  Eigen::VectorXd u_;
  std::vector<Watch> watches_;
};

// Magnitude the forcing can give each state over a span `span` (s), term by term:
// Σ_k |((σ + jω − A)⁻¹·b_k)_j|·|term| with σ = 1/span, b_k source k's column of B, ω = 0 for the
// level (scaled units): the forced response of each term, kept finite by σ where A has a λ = 0
// mode or a lossless one at ω (a drift or a secular growth over the span).
// `unit`: the unit input's value (Forcing::unit), a level like the sources'.
std::vector<double> forcing_scale(const Configuration& config, const std::vector<double>& levels,
                                  const std::vector<SourceSignal>& signals, double span, double unit = 0.0);

}  // namespace netfold::integration
