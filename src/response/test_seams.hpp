#pragma once
// Test seams of the engine: faults injected on purpose into the closed form, so that tests can
// prove that the numerical cross-check sees a wrong closed form (issue 12, "Done when"). The
// numerical path (src/verify/) never reads them. Private to the library and its tests: this
// header is not under include/netfold/ and no public option sets a fault.
//
// Every fault is off unless a test turns it on with ScopedFaults, for its own thread only, so
// that tests running in parallel threads and every run outside tests are unaffected.

#include "netfold/mna.hpp"
#include "netfold/netlist.hpp"
#include "netfold/scenario.hpp"

namespace netfold::seams {

// The faults the engine can be made to commit. Adding a seam is one member here, read where the
// engine computes what it falsifies.
struct EngineFaults {
  double tau_scale = 1.0;                // every segment's time constant × this (solve.cpp, solve_states.cpp: A / this)
  bool difference_drops_node_b = false;  // `@a - @b` evaluated as `@a` (observable form)
  bool current_sign_flip = false;        // `X.i` evaluated from the second node to the first
  double sweep_phase_offset = 0.0;       // rad added to every swept source phase (solve.cpp)
};

// The faults active on the calling thread (all off by default).
const EngineFaults& engine_faults();

// Turns `faults` on for the calling thread for the lifetime of the object; restores the
// previous ones after.
class ScopedFaults {
 public:
  explicit ScopedFaults(const EngineFaults& faults);
  ~ScopedFaults();
  ScopedFaults(const ScopedFaults&) = delete;
  ScopedFaults& operator=(const ScopedFaults&) = delete;

 private:
  EngineFaults saved_;
};

// The closed form's observable form with the active observable faults applied: `form` is the
// form of `observable` (or, for a power, of one of its factors: `current_factor` tells which) in
// `system`. Unchanged when no fault is active.
void apply_observable_faults(const Observable& observable, const NodalSystem& system, bool current_factor,
                             LinearForm& form);

// The scenario as the engine applies it: with the sweep-phase fault active, every swept
// source phase moved by its offset (the first edition read a sine's phase 90° off).
Scenario faulty_scenario(Scenario scenario);

}  // namespace netfold::seams
