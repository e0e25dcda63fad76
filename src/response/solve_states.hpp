#pragma once
// The solve stage for circuits with several storage elements (spec v2, "Several storage
// elements"): per segment the state equation dx/dt = A·x + B·u from the reduced network
// (reduce/state_space.hpp), its exact modal response (modal.hpp), and every observable as a sum
// of the response's terms. One storage element keeps the first edition's path (solve.cpp), whose
// figures the figures baseline holds. Private to src/response/.

#include "netfold/solve.hpp"

namespace netfold {

/// Fills a solution's states and segments (friend of Solution).
class StateSolver {
 public:
  /// The states at t = 0− (given, or the steady state before t = 0), then every segment.
  static void solve_segments(Solution& s);
  /// The closed form of an observable form in one segment.
  static Piece piece(const Solution& s, const ObservableForm& form, const Segment& segment);
  /// The slowest decay time constant of the network after the last event (for the default
  /// window), or 0 when it has no decaying mode.
  static double last_slowest_tau(const AppliedScenario& applied, NetworkCache& cache, double last_event);
};

/// Largest |y| a term response can reach over its segment (a cheap bound; range.cpp).
double terms_bound(const Piece& piece);

}  // namespace netfold
