#pragma once
// The engine's last step: a solution some figure of which double precision cannot carry is
// refused here, once, so that every command (solve, equiv, worst, verify, check) gives a file
// the same verdict.

#include "netfold/solve.hpp"

namespace netfold {

// Throws InputError, at the line of the observable or element at fault, when a watched
// observable, or any element's voltage, current, power, energy or I²t over the window, is
// beyond the range of double precision (see range.cpp). Returns normally otherwise.
void refuse_unrepresentable(const Solution& solution);

}  // namespace netfold
