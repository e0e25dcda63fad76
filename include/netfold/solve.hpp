#pragma once
/// \file solve.hpp
/// The engine's entry point: parse → build equations → reduce → closed form, for a whole
/// window of switching events.
///
/// Example:
/// \code
///   netfold::Circuit c = netfold::parse_netlist_file("netlists/valve_coil.nf");
///   netfold::Solution s = netfold::solve(c);
///   double i = s.value(c.watches()[0], 0.010);   // coil current at 10 ms, A
///   // s.segments()[0].tau == 0.1200 / 18.0  (6.667 ms)
/// \endcode

#include <complex>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "netfold/closed_form.hpp"
#include "netfold/netlist.hpp"
#include "netfold/reduce.hpp"
#include "netfold/scenario.hpp"
#include "netfold/schedule.hpp"

namespace netfold {

namespace response {
class ModalResponse;
}  // namespace response

/// How to solve: the scenario (what a sweep or what-if run changes, in the user's terms) and
/// the window.
struct SolveOptions {
  /// Changes to the circuit as declared, applied once (scenario.hpp).
  Scenario scenario;
  /// Use this window instead of the circuit's (or the default one).
  std::optional<Window> window;
};

/// Where the state at t = 0− came from.
enum class InitialStateSource : std::uint8_t {
  attribute,     ///< the storage element's `initial`
  option,        ///< the scenario's ResidualState (a sweep)
  steady_state,  ///< the steady state of the network before t = 0
  undetermined,  ///< no steady state (isolated, unstable, ramping): started from 0
  none,          ///< no storage element
};

/// A natural mode of a segment with several storage elements (a complex pair listed once).
struct NaturalMode {
  bool oscillatory = false;         ///< a complex pair
  std::complex<double> eigenvalue;  ///< λ, 1/s (Im λ > 0 for a pair)
  int multiplicity = 1;             ///< how many times λ repeats
  /// s: a real mode's time constant −1/λ; a pair's decay time constant 1/α; +∞ where Re λ = 0;
  /// negative for a growing mode.
  double tau = kInfinity;
  double frequency = 0.0;           ///< pairs: damped natural frequency f_d, Hz
  double natural_frequency = 0.0;   ///< pairs: undamped natural frequency f_n, Hz
  double damping = 0.0;             ///< pairs: damping ratio ζ
};

/// One interval between switching events.
struct Segment {
  int number = 1;                 ///< from 1, in time order
  double from = 0.0, to = 0.0;    ///< s
  SwitchPositions positions;
  std::vector<std::string> changes;  ///< what happens at `from`: "K1 closes", "supply steps"
  /// What started the segment, with exact times (state-dependent events included; diodes that
  /// the configuration search changed at `from` appear as their own events).
  std::vector<ScheduledEvent> events;
  PortMode mode = PortMode::port;
  /// The equivalent the storage element sees (rth, voc, isc as input combinations).
  Equivalent equivalent;
  Drive voc;                      ///< open-circuit voltage of this segment: DC + phasors (V)
  Drive isc;                      ///< short-circuit current (A)
  bool voc_defined = true;        ///< false when R_th = ∞ and v_oc is undefined
  bool isc_defined = true;        ///< false when R_th = 0
  double tau = kInfinity;         ///< s: −1/a; kInfinity when a = 0; negative when unstable
  double rate = 0.0;              ///< a, 1/s
  double state_start = 0.0;       ///< x(from)
  Wave state;                     ///< the closed-form state over [from, to]
  double rcond = 1.0;             ///< condition estimate of the segment's equations
  const char* solver = "dense LU";
  /// The segment's reduced network, owned by the solution's NetworkCache (found once, so that
  /// evaluating observables does not look it up again per segment).
  const ReducedNetwork* network = nullptr;
  /// Several storage elements: every state at `from` (state order), the natural modes (slowest
  /// first) and the exact response of the states. `tau` is then the slowest decay time
  /// constant and the equivalent is undefined.
  std::vector<double> states_start;
  std::vector<NaturalMode> modes;
  std::shared_ptr<const response::ModalResponse> modal;
  /// True when τ is negative (a controlled source makes the response grow).
  bool unstable() const { return rate > 0.0; }
};

/// The exact solution over the window; any observable can be evaluated at any time.
/// Keeps a reference to the circuit, which must outlive it.
class Solution {
 public:
  const Circuit& circuit() const { return *circuit_; }
  /// The storage element of a circuit with exactly one, else kNone (none, or several: see
  /// storage_elements()).
  ElementId storage() const { return storage_; }
  /// Every storage element, in state order (file order).
  const std::vector<ElementId>& storage_elements() const { return storages_; }
  /// True with two or more storage elements.
  bool several_states() const { return storages_.size() > 1; }
  /// True where segments carry modes and a modal response (no Thevenin view of one storage
  /// element): with several storage elements, and with state-dependent events (diodes,
  /// contacts that act at a zero), whose configurations change while solving.
  bool modal_path() const { return storages_.size() > 1 || event_driven_; }
  /// True with diodes or contacts that act at a current or voltage zero.
  bool event_driven() const { return event_driven_; }
  /// Several storage elements: each state at t = 0−, where each came from, and why the
  /// undetermined ones are (empty strings for the others).
  const std::vector<double>& initial_states() const { return initial_states_; }
  const std::vector<InitialStateSource>& initial_sources() const { return initial_sources_; }
  const std::vector<std::string>& initial_notes() const { return initial_notes_; }
  const std::vector<Segment>& segments() const { return segments_; }
  /// The analysis span (declared, or the default rule of the format).
  const Window& window() const { return window_; }
  bool window_is_default() const { return window_default_; }
  /// CSV sample spacing.
  double resolution() const { return resolution_; }
  /// State at t = 0− and where it came from.
  double initial_state() const { return initial_state_; }
  InitialStateSource initial_source() const { return initial_source_; }
  /// Why the initial state is undetermined (empty otherwise).
  const std::string& initial_note() const { return initial_note_; }
  /// Observables reported: the watch list, or the storage element's v and i.
  const std::vector<Observable>& observables() const { return observables_; }
  /// Notes and warnings for the report (cautions included), in order.
  const std::vector<std::string>& warnings() const { return warnings_; }
  /// The segment that holds t (an event time belongs to the segment it starts).
  const Segment& segment_at(double t) const;
  /// The closed form of an observable, one piece per segment. Throws InputError when the
  /// observable is undefined in some segment (a floating node).
  std::vector<Piece> pieces(const Observable& observable) const;
  /// The closed form of an observable in one segment (throws as pieces() does).
  Piece piece(const Observable& observable, const Segment& segment) const;
  /// Value at time t (right-continuous at events).
  double value(const Observable& observable, double t) const;
  /// The independent sources, in input order.
  const std::vector<ElementId>& sources() const { return sources_; }
  /// The options the solution was computed with.
  const SolveOptions& options() const { return options_; }
  /// The circuit's inputs under the options' scenario (effective waveforms and events).
  const AppliedScenario& applied() const { return applied_; }
  /// The events and segments the solution was computed on.
  const Schedule& schedule() const { return schedule_; }
  /// The reduced network of a segment (its coefficients give any quantity).
  const ReducedNetwork& network(const Segment& segment) const;
  /// Drive of an input combination c (c[j] per input; c[0] ignored) in a segment.
  Drive drive_of(const std::vector<double>& c, const Segment& segment) const;

 private:
  friend Solution solve(const Circuit&, const SolveOptions&, std::shared_ptr<NetworkCache>);
  friend class StateSolver;
  friend class SolveSteps;
  const Circuit* circuit_ = nullptr;
  std::shared_ptr<NetworkCache> cache_;
  SolveOptions options_;
  AppliedScenario applied_;
  Schedule schedule_;
  ElementId storage_ = kNone;
  std::vector<ElementId> storages_;
  bool event_driven_ = false;
  std::vector<double> initial_states_;
  std::vector<InitialStateSource> initial_sources_;
  std::vector<std::string> initial_notes_;
  std::vector<ElementId> sources_;
  std::vector<Segment> segments_;
  Window window_;
  bool window_default_ = true;
  double resolution_ = 0.0;
  double initial_state_ = 0.0;
  InitialStateSource initial_source_ = InitialStateSource::none;
  std::string initial_note_;
  std::vector<Observable> observables_;
  std::vector<std::string> warnings_;

  Wave observable_wave(const LinearForm& form, const Segment& segment) const;
  Piece observable_piece(const ObservableForm& form, const Segment& segment) const;
  ObservableForm engine_form(const Observable& obs, const NodalSystem& sys) const;
  std::string undefined_observable_text(const Observable& obs, const NodalSystem& sys, const Segment& seg) const;
};

/// Solves the circuit over its window. Throws InputError for a circuit the method cannot
/// solve (two storage elements, an impulsive configuration, a singular network), naming the
/// element at fault and the fix. `cache` may be shared between solves of the same circuit.
Solution solve(const Circuit& circuit, const SolveOptions& options = {},
               std::shared_ptr<NetworkCache> cache = nullptr);

/// Key figures of one observable over the window.
struct Figures {
  double peak = 0.0, t_peak = 0.0;  ///< largest |y| and when
  double max = 0.0, t_max = 0.0;
  double min = 0.0, t_min = 0.0;
  double final_value = 0.0;         ///< y at the window's end
  std::optional<Drive> steady;      ///< steady state of the last segment (none when it has none)
  std::optional<double> amplitude;  ///< of the fundamental (lowest frequency); none for powers
  std::optional<double> phase;      ///< rad, against a cosine; none for powers
  std::optional<double> dc;         ///< DC part of the steady state; none for powers
  std::optional<double> settling_time;  ///< s after the last event; none when it never settles
  std::optional<double> steady_peak;    ///< largest |y_ss| over a fundamental period; none for powers
};

/// Largest |y| of an observable over the window, and when (a cheaper part of Figures).
struct Peak {
  double value = 0.0;  ///< peak |y|
  double time = 0.0;   ///< s
};
Peak find_peak(const Solution& solution, const Observable& observable);

/// Figures of an observable, from its closed form.
Figures compute_figures(const Solution& solution, const Observable& observable);

/// Energy absorbed by element `id` over the window, ∫v·i dt (J), exact. `scale`, when
/// given, receives Σ|∫v·i| over the segments: the size of the numbers that were summed, below
/// which a total is rounding noise (an inductor that gives back all it took nets 0 J).
double element_energy(const Solution& solution, ElementId id, double* scale = nullptr);
/// ∫i² dt through element `id` over the window (A²s), exact.
double element_i2t(const Solution& solution, ElementId id);
/// Sustained power of element `id` (W), the figure a resistor's `rated P` is judged by (spec
/// v2, "Ratings"): the largest steady-state mean power over the segments, whatever the window.
/// A segment's figure is DC·DC + ½·Σ Re(V·I*) over the phasors of equal frequency of its
/// steady-state voltage and current (the mean over one fundamental period where the
/// frequencies are harmonics of the fundamental; the DC power where there is no sinusoid). A
/// segment with no steady state (a ramp, an unstable response) counts with its mean over its
/// part of the window. `segment`, when given, receives the number of the segment of the figure
/// (0 when no segment has one).
double element_mean_power(const Solution& solution, ElementId id, int* segment = nullptr);

/// The caution printed on every report of a circuit above 50 V AC (rms) or 120 V DC.
extern const char* const kHazardCaution;

}  // namespace netfold
