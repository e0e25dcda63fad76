#include "response/test_seams.hpp"

namespace netfold::seams {

namespace {
thread_local EngineFaults active_faults;
}  // namespace

const EngineFaults& engine_faults() { return active_faults; }

ScopedFaults::ScopedFaults(const EngineFaults& faults) : saved_(active_faults) { active_faults = faults; }

ScopedFaults::~ScopedFaults() { active_faults = saved_; }

void apply_observable_faults(const Observable& observable, const NodalSystem& system, bool current_factor,
                             LinearForm& form) {
  const EngineFaults& f = active_faults;
  if (f.difference_drops_node_b && observable.kind == ObservableKind::node_difference) {
    const bool defined = form.defined;
    form = system.node_voltage(observable.node_a);
    form.defined = defined;
  }
  const bool current = observable.kind == ObservableKind::element_current ||
                       (observable.kind == ObservableKind::element_power && current_factor);
  if (f.current_sign_flip && current) {
    for (auto& term : form.unknowns) term.second = -term.second;
    for (auto& term : form.inputs) term.second = -term.second;
  }
}

Scenario faulty_scenario(Scenario scenario) {
  for (SourcePhase& p : scenario.source_phases) p.phase += active_faults.sweep_phase_offset;
  return scenario;
}

}  // namespace netfold::seams
