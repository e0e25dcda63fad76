#pragma once
/// \file scenario.hpp
/// Stage "events", part 1: what a sweep or a what-if run changes in the circuit, in the terms
/// the user wrote, and the circuit's inputs with those changes applied once.
///
/// A Scenario holds values as a `.nf` file would write them: a source's phase is the value of
/// the `phase` attribute of its first sinusoid as written (a `sine` source's 0° is the sine's
/// zero crossing), a residual state is a capacitor voltage or an inductor current, a closing
/// time is a time. apply_scenario() turns it into what every later step reads (the effective
/// waveform of each source, the effective events of each switch, the state at t = 0−), so no
/// later step interprets a sweep setting again.
///
/// Example:
/// \code
///   // supply: voltage-source l -> n, sine 325 V 50 Hz         (line 1)
///   netfold::Scenario s;
///   s.source_phases.push_back({supply, 30.0 * std::numbers::pi / 180.0});   // "phase 30 deg"
///   netfold::AppliedScenario a = netfold::apply_scenario(circuit, s);
///   // a.waveform(supply).sinusoids[0].phase == (30° − 90°) in rad: 325·sin(ωt + 30°)
/// \endcode
///
/// Tolerances (v2) are entries of the same kind: an element's value and a source's factor.
/// They change what the network stage reads (element values), so they are made once, by
/// circuit_with_values(), on a copy of the circuit that is then solved under the rest of the
/// scenario; apply_scenario() refuses a scenario whose values were not made that way.

#include <optional>
#include <utility>
#include <vector>

#include "netfold/netlist.hpp"

namespace netfold {

/// A source's phase set to the value of its first sinusoid's `phase` attribute as written.
struct SourcePhase {
  ElementId source = kNone;  ///< an independent source with at least one sinusoid
  double phase = 0.0;        ///< rad, in the reference the source is written in (sine or cosine)
};

/// A storage element's state at t = 0−, replacing its `initial` or the steady state.
struct ResidualState {
  ElementId element = kNone;  ///< a capacitor or an inductor
  double value = 0.0;         ///< V (capacitor) or A (inductor)
};

/// A switch's first `closes` event moved to another time; its other events keep theirs.
struct FirstClosing {
  ElementId element = kNone;  ///< a switch with a `closes at` event
  double time = 0.0;          ///< s
};

/// (v2) A resistor's, capacitor's or inductor's value set within its tolerance.
struct ElementValue {
  ElementId element = kNone;  ///< a resistor, capacitor or inductor
  double value = 0.0;         ///< ohm, F or H
};

/// (v2) A factor on an independent source's whole waveform (its tolerance).
struct SourceFactor {
  ElementId source = kNone;  ///< an independent source
  double factor = 1.0;       ///< dimensionless: every DC, sinusoid and step term is multiplied by it
};

/// Everything a run changes in the circuit as declared, in the user's terms. Each element
/// appears at most once in each list (a later entry for the same element replaces an earlier).
struct Scenario {
  std::vector<SourcePhase> source_phases;
  std::vector<ResidualState> residual_states;
  std::vector<FirstClosing> first_closings;
  std::vector<ElementValue> element_values;  ///< (v2) made by circuit_with_values()
  std::vector<SourceFactor> source_factors;  ///< (v2) made by circuit_with_values()
  /// True when the scenario changes nothing.
  bool empty() const {
    return source_phases.empty() && residual_states.empty() && first_closings.empty() && element_values.empty() &&
           source_factors.empty();
  }
  /// True when the scenario changes an element value or a source factor (a tolerance).
  bool changes_values() const { return !element_values.empty() || !source_factors.empty(); }
};

/// Sets `sweep`'s target to `x` (in the sweep's SI unit: rad, V, A or s) in `scenario`.
void set_sweep_target(Scenario& scenario, const Sweep& sweep, double x);
/// The scenario of one sweep at argument `x`.
Scenario scenario_at(const Sweep& sweep, double x);

/// The circuit's inputs with a scenario applied: the waveform of every source, the events of
/// every switch and the state at t = 0− where the scenario sets it. Only what the scenario
/// changes is stored; everything else is read from the circuit, which must outlive this.
class AppliedScenario {
 public:
  /// The circuit as declared.
  const Circuit& circuit() const { return *circuit_; }
  /// The scenario as given (the user's terms, for reports).
  const Scenario& scenario() const { return scenario_; }
  /// The waveform of independent source `id` under the scenario.
  const Waveform& waveform(ElementId id) const;
  /// The events of switch `id` under the scenario, in time order.
  const std::vector<SwitchEvent>& events(ElementId id) const;
  /// The scenario's state at t = 0− for storage element `id`, if it sets one.
  std::optional<double> initial_state(ElementId id) const;
  /// The time shift (s) of a source's origin under the scenario: a phase Δ of its first
  /// sinusoid at f₁ is a shift of Δ/(2π·f₁); 0 for a source the scenario does not move.
  double time_shift(ElementId id) const;

 private:
  friend AppliedScenario apply_scenario(const Circuit&, const Scenario&);
  const Circuit* circuit_ = nullptr;
  Scenario scenario_;
  std::vector<std::pair<ElementId, Waveform>> waveforms_;
  std::vector<std::pair<ElementId, double>> shifts_;
  std::vector<std::pair<ElementId, std::vector<SwitchEvent>>> events_;
};

/// (v2) The circuit with the scenario's element values and source factors made: a copy, with
/// every element, node, watch, sweep, claim and setting of `circuit` and the same source text,
/// in which each listed element has its new value and each listed source's waveform (DC,
/// sinusoid amplitudes, step levels) is multiplied by its factor. This is the one place a
/// tolerance changes the circuit: solve, the ratings and the cross-check all read the copy.
/// Throws InputError, at the element's line, for a value on an element that has none (a
/// switch, a source) or a factor on an element that is not an independent source.
Circuit circuit_with_values(const Circuit& circuit, const Scenario& scenario);

/// Applies `scenario` to `circuit`, once.
///
/// A phase p of source S (spec v2, "Sweep arguments are in the user's terms") is a shift of
/// S's time origin: with p₀ the written phase of S's first sinusoid (frequency f₁),
/// Δ = p − p₀, and every sinusoid of S at frequency f moves by Δ·f/f₁ (a harmonic k by k·Δ),
/// so the waveform keeps its shape. S's DC part and steps do not move.
///
/// Throws InputError, at the element's line, for a target the element cannot take (a phase
/// of a source without a sinusoid, the state of an element that stores none, the closing of
/// a switch that never closes). Element values and source factors are not applied here (the
/// network stage reads values from the circuit): `circuit` must be circuit_with_values() of
/// the declared circuit, and an element value that `circuit` does not hold is a logic_error.
AppliedScenario apply_scenario(const Circuit& circuit, const Scenario& scenario);

/// The value of the `phase` attribute of source `id`'s first sinusoid, as written (rad): a
/// `sine ... phase 30 deg` gives 30°, although the circuit stores it against a cosine.
double written_phase(const Circuit& circuit, ElementId id);

}  // namespace netfold
