#pragma once
// The rating that limits a watched quantity's peak, drawn as a line by `solve --svg` and
// `worst --svg`: `rated V` of a capacitor or switch on its X.v, `rated A` of an element on its X.i.
#include <optional>
#include <string>

#include "netfold/netlist.hpp"

namespace netfold::detail {

inline std::optional<double> peak_rating_of(const Circuit& c, const std::string& observable) {
  for (const Element& e : c.elements())
    for (const Rating& r : e.ratings) {
      if (r.kind == RatingKind::peak_voltage && observable == e.name + ".v") return r.limit;
      if (r.kind == RatingKind::peak_current && observable == e.name + ".i") return r.limit;
    }
  return std::nullopt;
}

}  // namespace netfold::detail
