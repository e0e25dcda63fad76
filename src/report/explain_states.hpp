#pragma once
// `solve --explain` for several storage elements: the state equation, its characteristic
// equation (two states) or its modes (more), and each observable's closed form. Private to
// src/report/.

#include <functional>
#include <ostream>
#include <string>
#include <string_view>

#include "netfold/solve.hpp"

namespace netfold::detail {

/// Writes a sum of modal terms as the solve report does.
using TermsWriter = std::function<std::string(const response::Response&, std::string_view unit)>;

/// The derivation of a solution with several storage elements (write_explanation's part).
void write_states_explanation(std::ostream& out, const Solution& sol, const TermsWriter& terms_text);
// How the segments of a circuit with diodes or contacts at a zero begin and end.
void write_event_explanation(std::ostream& out);

/// "s² + 1.2e3·s + 4e6": the characteristic polynomial s² − tr·s + det with its numbers.
std::string quadratic_text(double trace, double det);

}  // namespace netfold::detail
