#pragma once
// A Piece whose factors are sums of modal terms (a segment with several storage elements): the
// dispatch from the public Piece to the term library (terms.hpp). Private to the library.

#include "netfold/closed_form.hpp"

namespace netfold {

/// Extremes of a term piece over [from, to] (response::find_extremes, of the product for powers).
Extremes terms_extremes(const Piece& piece, double from, double to);

}  // namespace netfold
