// JSON fields shared by the solve, worst and verify reports (internal to netfold_core).
#pragma once

#include <cmath>
#include <optional>
#include <vector>

#include <nlohmann/json.hpp>

#include "netfold/netlist.hpp"
#include "netfold/ratings.hpp"

namespace netfold::detail {

/// A number, or null where it is not finite (JSON has no NaN or infinity; R_th = ∞ is null).
inline nlohmann::json json_number(double v) {
  return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr);
}

inline nlohmann::json json_number(const std::optional<double>& v) {
  return v ? json_number(*v) : nlohmann::json(nullptr);
}

/// The `ratings` array: one object per rating checked.
inline nlohmann::json json_ratings(const Circuit& c, const std::vector<RatingCheck>& ratings) {
  auto out = nlohmann::json::array();
  for (const auto& r : ratings)
    out.push_back({{"element", c.element(r.element).name},
                   {"quantity", r.quantity},
                   {"rated", json_number(r.rated)},
                   {"actual", json_number(r.actual)},
                   {"used_percent", json_number(r.used_percent)},
                   {"exceeded", r.exceeded},
                   {"worst_case", r.worst_case},
                   {"where", r.where},
                   {"worst_at", r.worst_at ? nlohmann::json{{"target", r.worst_target},
                                                            {"at", json_number(*r.worst_at)},
                                                            {"at_unit", r.worst_at_unit}}
                                           : nlohmann::json(nullptr)}});
  return out;
}

}  // namespace netfold::detail
