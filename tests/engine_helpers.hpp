#pragma once
// Test helpers for the engine stages: circuits from .nf text, solved, kept alive together
// (a Solution refers to its Circuit), and relative-tolerance checks that print both values.
#include <cmath>
#include <memory>
#include <string>

#include <catch2/catch.hpp>

#include "netfold/parse.hpp"
#include "netfold/solve.hpp"

namespace netfold::testing {

struct Solved {
  std::unique_ptr<Circuit> circuit;
  std::unique_ptr<Solution> solution;
  const Solution& operator*() const { return *solution; }
  const Solution* operator->() const { return solution.get(); }
};

inline Solved solve_text(const std::string& text, const SolveOptions& options = {}) {
  Solved s;
  s.circuit = std::make_unique<Circuit>(parse_netlist(text, "test.nf"));
  s.solution = std::make_unique<Solution>(solve(*s.circuit, options));
  return s;
}

/// An observable of the solved circuit by its text: "C1.v", "@a", "@a - @b".
inline Observable observable(const Solved& s, const std::string& text) {
  return parse_observable_argument(*s.circuit, text, "test");
}

inline Figures figures(const Solved& s, const std::string& text) { return compute_figures(*s, observable(s, text)); }

/// |actual − expected| ≤ rel·|expected| (or ≤ rel when expected is 0), printing both.
#define CHECK_REL(actual, expected, rel)                                                            \
  do {                                                                                              \
    const double a_ = (actual), e_ = (expected);                                                    \
    INFO("actual " << a_ << ", expected " << e_ << ", rel tol " << (rel));                          \
    CHECK(std::fabs(a_ - e_) <= (rel) * (e_ == 0.0 ? 1.0 : std::fabs(e_)));                         \
  } while (0)

}  // namespace netfold::testing
