#pragma once
// The numerical path's own reading of the network (see integrate.hpp): the sources evaluated
// from the circuit's waveforms, one nodal system per switch configuration, and the state
// equation CVODE integrates. Private to src/verify/.
//
// Everything here works in units of the run's input scale S (integrate.hpp): source values are
// divided by S, so that the state and every unknown are too.

#include <memory>
#include <optional>
#include <string>
#include <unordered_map>
#include <utility>
#include <vector>

#include <Eigen/Dense>

#include "netfold/solve.hpp"
#include "network/linear_solver.hpp"

namespace netfold::integration {

// y = Σ c·x_i + Σ c·u_j.
double evaluate(const LinearForm& form, const Eigen::VectorXd& x, const Eigen::VectorXd& u);

// The circuit's storage element (kNone for a resistive circuit), read from the circuit; the
// engine refuses a circuit with more than one before the cross-check runs.
ElementId storage_element(const Circuit& circuit);

// One source's waveform as the numerical path sees it, divided by the input scale.
struct SourceSignal {
  const Waveform* waveform = nullptr;
  double time_shift = 0.0;   // s: the scenario's phase moves the sinusoids' time origin by this
  double inv_scale = 1.0;    // 1/S, a power of two

  // The sinusoids at t; with `only`, just those at these frequencies (Hz).
  double sinusoids_at(double t, const std::vector<double>* only = nullptr) const;
  // dc plus the steps taken at or before t.
  double level_at(double t) const;
  // dc plus the steps at negative times: the level "for all t < 0" of the format.
  double level_before_zero() const;
  // The largest |value| the waveform can take, unscaled: |dc| + Σ|steps| + Σ|amplitudes|.
  double magnitude() const;
};

// The schedule's sources in input order, with the scenario's phase applied and 1/S.
std::vector<SourceSignal> source_signals(const Solution& schedule, double inv_scale);

// The state at t = 0− that the scenario or the storage element's `initial` gives, if any.
std::optional<double> given_initial_state(const Solution& schedule, ElementId storage);

// The distinct frequencies (Hz) of every sinusoid with a non-zero amplitude, ascending.
std::vector<double> source_frequencies(const std::vector<SourceSignal>& signals);

// Largest step allowed: a quarter period of the fastest of `frequencies`, a guard against
// stepping over a whole period where the forcing happens to look flat (0 = no limit).
double step_limit(const std::vector<double>& frequencies);

// Gains of a linear form per input: |∂y/∂u_j| for every j (j = 0 the state).
using InputGains = std::vector<double>;

// One switch configuration: its MNA system and one factorization of G, reused for every
// right-hand side evaluated in it.
struct Configuration {
  SwitchPositions positions;
  PortMode mode = PortMode::port;
  NodalSystem system;
  std::unique_ptr<LinearSolver> lu;
  LinearForm port;
  // Per observable: its form, and the current's form for a power (v·i).
  std::vector<std::pair<LinearForm, std::optional<LinearForm>>> observable_forms;
  // Per observable: ∂/∂x of each of the two forms above (per unit of state).
  std::vector<std::pair<double, double>> observable_gains;
  // Per observable: the input gains of each of the two forms (the second empty unless a power).
  std::vector<std::pair<InputGains, InputGains>> observable_input_gains;
  // The input gains of every element's voltage and current (those defined here).
  std::vector<InputGains> voltage_gains, current_gains;
  // True once the observables' forms and every gain above are filled in (Configurations::get).
  bool forms_ready = false;

  // x = G⁻¹·B·u.
  Eigen::VectorXd unknowns(const Eigen::VectorXd& u) const;
};

// Each distinct configuration (positions, port mode) is assembled and factored once.
class Configurations {
 public:
  Configurations(const Circuit& circuit, const std::vector<Observable>& observables)
      : circuit_(circuit), observables_(observables) {}

  // The configuration; throws NumericError when its equations have a structural problem or a
  // singular matrix (the engine reports those first), InputError when an observable is
  // undefined in it. `where` names it in messages.
  const Configuration& get(const SwitchPositions& positions, PortMode mode, const std::string& where);
  // The configuration, or nullptr with `why` when its equations have a structural problem or a
  // singular matrix (the network before t = 0 may be degenerate: the format allows it).
  const Configuration* find(const SwitchPositions& positions, PortMode mode, std::string& why);
  // How the storage element enters the equations of a configuration, decided here from the
  // topology: held_at_zero for an inductor whose loop is open (the format's rule), port otherwise.
  PortMode mode_for(const SwitchPositions& positions, const std::string& where);
  long count() const { return static_cast<long>(items_.size()); }

 private:
  const Circuit& circuit_;
  const std::vector<Observable>& observables_;
  std::vector<std::unique_ptr<Configuration>> items_;
  std::unordered_map<std::vector<bool>, std::size_t> index_;  // positions + mode → items_
  std::unordered_map<std::vector<bool>, PortMode> modes_;      // positions → mode_for

  Configuration* lookup(const SwitchPositions& positions, PortMode mode, std::string& why);
  std::unique_ptr<Configuration> assemble(const SwitchPositions& positions, PortMode mode, std::string& why) const;
  void add_forms(Configuration& c, const std::string& where) const;
};

// Which sources drive a StateEquation.
struct Forcing {
  std::vector<double> levels;  // per source: its constant level in the segment (scaled)
  bool sinusoids = true;       // false: no sinusoid at all
  std::vector<double> only;    // when not empty: just the sinusoids at these frequencies
};

// The right-hand side CVODE integrates, dx/dt = f(t, x) = q(t, x)/S_e: q the port quantity
// (capacitor current, A, or inductor voltage, V) from the full solve of G·x = B·u(t, x), S_e the
// capacitance (F) or inductance (H). Within a segment a source's level (dc plus the steps taken)
// is the level at the segment's start: CVODE evaluates the right-hand side at the segment's
// end, where a step of the next segment must not count yet. With an offset (set_offset), the
// state is shifted: f(t, w + offset), which gives the shooting its deviation run.
class StateEquation {
 public:
  StateEquation(const Configuration& config, double storage_value, const std::vector<SourceSignal>& signals,
                Forcing forcing);

  void set_offset(double offset) { offset_ = offset; }
  // u(t, x): u[0] = x (+ offset), u[1 + k] = source k at t.
  const Eigen::VectorXd& inputs(double t, double x);
  double rate(double t, double x);
  const Configuration& config() const { return *config_; }

 private:
  const Configuration* config_;
  double storage_value_;
  const std::vector<SourceSignal>* signals_;
  Forcing forcing_;
  double offset_ = 0.0;
  Eigen::VectorXd u_;
};

// ∂f/∂u_j for every input j (j = 0: the state, 1/s; j > 0: per unit of source j), each from a
// full MNA solve with u = e_j. Used to size tolerances and to find the DC operating point.
std::vector<double> sensitivities(const Configuration& config, double storage_value);

// Magnitude the forcing can give the state over a span `span` (s), term by term:
// |∂f/∂u_k|·|term| / max(|∂f/∂x|, ω, 1/span), with ω = 0 for the level (scaled units).
double forcing_scale(const std::vector<double>& d, const std::vector<double>& levels,
                     const std::vector<SourceSignal>& signals, double span);

}  // namespace netfold::integration
