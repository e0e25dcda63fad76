#pragma once
// Test helper: a parsed circuit with ratings and claims added through CircuitBuilder, so that
// the stages that read the second edition's ratings and claims are tested without its syntax.
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "engine_helpers.hpp"

namespace netfold::testing {

/// A claim to add: its element and observable by name (resolved against the parsed circuit).
struct ClaimAmendment {
  Claim claim;
  std::string element;     ///< sets Claim::element when not empty
  std::string observable;  ///< sets Claim::observable when not empty ("C1.v", "@a")
};

/// What to add to a parsed circuit.
struct Amendments {
  std::vector<std::pair<std::string, Rating>> ratings;  ///< element name, rating
  std::vector<ClaimAmendment> claims;
};

/// The circuit parsed from `text`, with `extra` added, solved.
inline Solved solve_amended(const std::string& text, const Amendments& extra, const SolveOptions& options = {}) {
  const Circuit parsed = parse_netlist(text, "test.nf");
  CircuitBuilder b(parsed.source_ptr());
  for (const auto& n : parsed.nodes()) b.node(n);
  b.set_ground(parsed.nodes().at(parsed.ground()), parsed.ground_loc());
  for (Element e : parsed.elements()) {
    for (const auto& [name, rating] : extra.ratings)
      if (name == e.name) e.ratings.push_back(rating);
    b.add_element(std::move(e));
  }
  b.set_title(parsed.title());
  for (const auto& o : parsed.watches()) b.add_watch(o);
  for (std::size_t k = 0; k < parsed.sweeps().size(); ++k)
    b.add_sweep(parsed.sweeps()[k], k > 0 && parsed.sweeps()[k].line == parsed.sweeps()[k - 1].line);
  for (const auto& c : parsed.claims()) b.add_claim(c);
  for (const auto& a : extra.claims) {
    Claim c = a.claim;
    if (!a.element.empty()) c.element = *parsed.find_element(a.element);
    if (!a.observable.empty()) c.observable = parse_observable_argument(parsed, a.observable, "test");
    if (c.text.empty()) c.text = "amended claim";
    if (c.loc.line == 0) c.loc = {1, 1};
    b.add_claim(std::move(c));
  }
  if (parsed.window()) b.set_window(*parsed.window());
  if (parsed.resolution()) b.set_resolution(*parsed.resolution());
  Solved s;
  s.circuit = std::make_unique<Circuit>(std::move(b).build());
  s.solution = std::make_unique<Solution>(solve(*s.circuit, options));
  return s;
}

/// A rating of `kind` at `limit` (SI).
inline Rating rating(RatingKind kind, double limit) {
  Rating r;
  r.kind = kind;
  r.limit = limit;
  r.loc = {1, 1};
  return r;
}

}  // namespace netfold::testing
