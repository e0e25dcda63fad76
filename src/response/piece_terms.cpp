#include "response/piece_terms.hpp"

#include "response/terms.hpp"

namespace netfold {

double Piece::value(double t) const {
  if (terms_f) return terms_g ? terms_f->value(t) * terms_g->value(t) : terms_f->value(t);
  return g ? f.value(t) * g->value(t) : f.value(t);
}

double Piece::derivative(double t) const {
  if (terms_f)
    return terms_g ? terms_f->derivative(t) * terms_g->value(t) + terms_f->value(t) * terms_g->derivative(t)
                   : terms_f->derivative(t);
  return g ? f.derivative(t) * g->value(t) + f.value(t) * g->derivative(t) : f.derivative(t);
}

std::optional<Drive> steady_state_of(const Piece& piece) {
  return piece.terms_f ? piece.terms_f->steady_state() : piece.f.steady_state();
}

double integral_of_product(const Piece& a, const Piece& b, double from, double to) {
  if (a.terms_f && b.terms_f) return response::integral_of_product(*a.terms_f, *b.terms_f, from, to);
  if (a.terms_f || b.terms_f) {
    // Mixed forms do not occur (both come from the same segment); convert the Wave exactly.
    const response::Response ra = a.terms_f ? *a.terms_f : response::response_of_wave(a.f);
    const response::Response rb = b.terms_f ? *b.terms_f : response::response_of_wave(b.f);
    return response::integral_of_product(ra, rb, from, to);
  }
  return integral_of_product(a.f, b.f, from, to);
}

Extremes terms_extremes(const Piece& piece, double from, double to) {
  return piece.terms_g ? response::find_extremes_of_product(*piece.terms_f, *piece.terms_g, from, to)
                       : response::find_extremes(*piece.terms_f, from, to);
}

}  // namespace netfold
