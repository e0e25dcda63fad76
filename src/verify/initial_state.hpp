#pragma once
// The numerical path's states at t = 0−, found from the circuit alone (see initial_state.cpp);
// private to src/verify/.

#include <string>
#include <vector>

#include <Eigen/Dense>

#include "netfold/integrate.hpp"
#include "verify/cvode_integrator.hpp"
#include "verify/state_equation.hpp"

namespace netfold::integration {

// Result of the search for the states at t = 0−.
struct InitialState {
  Eigen::VectorXd values;  // per state, in units of the input scale S
  InitialStateMethod method = InitialStateMethod::none;
  std::string note;        // how they were found, for the report
  // ok: found; else the integrator stopped (budget, CVODE error) with this status and message.
  IntegrationStatus status = IntegrationStatus::ok;
  std::string message;
  IntegrationStats stats;  // CVODE's work for the shooting runs
  int shooting_iterations = 0;  // Newton corrections of the largest shooting (0 without)
};

// The states at t = 0−: each one given (the scenario's residual state, else its `initial`)
// keeps that value; the others come from the steady state of the network before t = 0, or 0
// where that is undetermined. `signals` carry the input scale S = `scale`; `rtol` is the run's
// CVODE tolerance.
InitialState find_initial_state(const AppliedScenario& applied, Configurations& configs,
                                const std::vector<SourceSignal>& signals, double scale, StepBudget& budget,
                                double rtol);

// The distinct frequencies (ascending) in groups that each share a period: a group is its lowest
// frequency f₀ and every other one that is a whole multiple of f₀ up to kMaxShootingPeriods·f₀.
std::vector<std::vector<double>> harmonic_groups(const std::vector<double>& frequencies);

// Most periods of its fastest sinusoid one shooting run integrates over (its cost).
inline constexpr double kMaxShootingPeriods = 1000.0;
// The shooting's Newton iteration stops when a correction is below this share of the state.
inline constexpr double kShootingTolerance = 1e-12;
// ... or after this many corrections (the integrator's own error then sets the floor).
inline constexpr int kMaxShootingIterations = 5;

}  // namespace netfold::integration
