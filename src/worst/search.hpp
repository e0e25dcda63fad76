#pragma once
// Pieces shared by the one-target search (worst.cpp) and the box search (box_search.cpp).
#include <cmath>
#include <memory>
#include <string>
#include <vector>

#include "netfold/worst.hpp"

namespace netfold::detail {

/// Throws InputError at `loc` of the circuit's file.
[[noreturn]] void worst_fail(const Circuit& c, SourceLoc loc, std::string message);

/// Refuses a sweep range the circuit cannot take, at the sweep's line.
void validate_sweep(const Circuit& c, const Sweep& sw, const Solution& nominal);

/// The window every point of a line's search is solved over: the nominal one, lengthened by
/// how far a `closes` target can move the first closing when the window is the default one.
Window search_window(const Circuit& c, const std::vector<Sweep>& targets, const Solution& nominal);


/// Golden-section search for a local maximum of f in [a, b] (J. Kiefer, 1953), to `tol`.
template <typename F>
std::pair<double, double> golden_maximum(F&& f, double a, double b, double tol) {
  const double inv_phi = (std::sqrt(5.0) - 1.0) / 2.0;
  double c = b - inv_phi * (b - a), d = a + inv_phi * (b - a);
  double fc = f(c), fd = f(d);
  while (b - a > tol) {
    if (fc >= fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - inv_phi * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + inv_phi * (b - a);
      fd = f(d);
    }
  }
  return fc >= fd ? std::make_pair(c, fc) : std::make_pair(d, fd);
}

/// The toleranced values of a circuit (nominal value or factor 1) and their ranges.
std::vector<CornerValue> toleranced_values(const Circuit& c, std::vector<std::pair<double, double>>* bounds);

/// Searches one sweep line over its targets' ranges times the tolerance box.
SweepResult search_box(const Circuit& c, const std::vector<Sweep>& targets, const Solution& nominal,
                       const std::vector<Observable>& observables, const std::vector<RatingCheck>& ratings,
                       const std::shared_ptr<NetworkCache>& cache, const WorstOptions& options);

/// Fills the Monte Carlo statistics of a result from per-metric samples (metric m < observables:
/// an observable's peak; then the ratings).
void sample_statistics(SweepResult& result, const std::vector<std::vector<double>>& samples,
                       const std::vector<RatingCheck>& ratings, const WorstOptions& options);

}  // namespace netfold::detail
