// The forced (steady) response of a segment's state, sinusoid by sinusoid, as the solution
// holds it: what the `--explain` derivation shows (internal to netfold_core).
#pragma once

#include <complex>
#include <vector>

#include "netfold/closed_form.hpp"
#include "netfold/solve.hpp"

namespace netfold::detail {

/// One sinusoid of the drive carried to the state through H(jω) = 1/(1 + jωτ).
struct ForcedPhasor {
  double frequency = 0.0;         ///< Hz
  double omega_tau = 0.0;         ///< ω·τ
  std::complex<double> gain;      ///< H(jω) = response / drive
  Phasor response;                ///< the state's phasor at that frequency (the closed form's own)
};

/// For each phasor of `drive` (the segment's v_oc for a capacitor, i_sc for an inductor): the
/// state's phasor at that frequency as the segment's closed form holds it, and the gain from
/// the drive to it. Where the drive's phasor is zero the gain is 1/(1 + jωτ) from the segment's
/// τ. For a segment with a finite τ only.
std::vector<ForcedPhasor> forced_phasors(const Segment& segment, const Drive& drive);

}  // namespace netfold::detail
