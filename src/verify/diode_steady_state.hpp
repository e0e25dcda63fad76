#pragma once
// The numerical path's states and diode configuration at t = 0− for a circuit with diodes
// (diode_steady_state.cpp); private to src/verify/.

#include "verify/initial_state.hpp"
#include "verify/state_events.hpp"

namespace netfold::integration {

// The states at t = 0− (units of S) and, into `at_zero`, the consistent configuration there:
// given states kept, else the DC steady state (DC sources) or the periodic steady state by
// shooting with `march` (sinusoids). A status other than ok says why none was found.
InitialState diode_initial_state(const AppliedScenario& applied, const std::vector<SourceSignal>& signals, double scale,
                                 EventMarch& march, SwitchPositions& at_zero);

}  // namespace netfold::integration
