// Which figures double precision can carry, checked once per solution for everything a command
// can print of this file: the watched observables and those of the claims (figures, CSV, plots,
// the cross-check), and the voltage, current, power, energy and I²t of every element they name,
// every rated element and every element of an energy or I²t claim. Other quantities of the
// circuit are never printed, and checking them would cost every point of a sweep.
//
// Each piece of an observable is bounded cheaply from its closed form over its segment,
//
//     |y(t)| ≤ |offset| + |drift|·φ(a, T) + |transient|·max(1, e^{a·T}) + Σ_k |P_k|,
//
// (T the segment's length; φ(a, s) = (e^{a·s} − 1)/a is non-negative and grows with s), a power
// by the product of its factors' bounds. An element's voltage and current are bounded per
// segment without building their waves: Σ_j m_j·U_j, with m_j the magnitude of the form's
// coefficient of input j (ReducedNetwork::magnitudes), U_0 the bound of the state's wave and
// U_{1+k} = |dc| + Σ|steps| + Σ|amplitudes| of source k; its energy and I²t by Σ V·I·T and Σ I²·T.
// Only where a bound overflows is the figure itself computed, by the function that every
// command uses for it (compute_figures, element_energy, element_i2t, element_mean_power); each
// of those refuses a value that is not finite, naming the observable or element. So the check
// costs a few multiplications per piece unless a value is near 1e308 (a 3600-point sweep of a
// 99-element ladder takes as long as without it), and never refuses a figure that is in fact
// representable.
#include "response/range.hpp"

#include "response/modal.hpp"
#include "response/solve_states.hpp"

#include <algorithm>
#include <cmath>
#include <complex>

namespace netfold {

namespace {

double bound(const Wave& w) {
  const double span = w.t1 - w.t0;
  const double as = w.a * span;
  const double phi = w.a == 0.0 ? span : std::expm1(as) / w.a;
  double b = std::fabs(w.offset) + std::fabs(w.drift) * phi + std::fabs(w.transient) * std::max(1.0, std::exp(as));
  for (const auto& p : w.phasors) b += std::abs(p.value);
  return b;
}

double bound(const Piece& p) {
  if (p.has_terms()) return terms_bound(p);
  return p.g ? bound(p.f) * bound(*p.g) : bound(p.f);
}

bool bounded(const std::vector<Piece>& pieces) {
  return std::all_of(pieces.begin(), pieces.end(), [](const Piece& p) { return std::isfinite(bound(p)); });
}


// True when the element's voltage and current have a value in every segment (not on a
// floating part of the circuit): only then can any command print a figure of it.
bool defined_throughout(const Solution& s, ElementId id) {
  return std::all_of(s.segments().begin(), s.segments().end(), [&](const Segment& seg) {
    const NodalSystem& sys = s.network(seg).system();
    return sys.element_voltage(id).defined && sys.element_current(id).defined;
  });
}

// The same for a claim's observable (a claim on an undefined one fails as a claim, in `check`).
bool defined_throughout(const Solution& s, const Observable& obs) {
  if (obs.element != kNone) return defined_throughout(s, obs.element);
  return std::all_of(s.segments().begin(), s.segments().end(), [&](const Segment& seg) {
    const NodalSystem& sys = s.network(seg).system();
    if (!sys.node_voltage(obs.node_a).defined) return false;
    return obs.kind != ObservableKind::node_difference ||
           (sys.node_voltage(obs.node_b).defined && sys.component_of(obs.node_a) == sys.component_of(obs.node_b));
  });
}

// Bound on |y| over a segment for a form y of the segment's network, from the magnitudes of its
// coefficients: Σ_j m_j·U_j, U_0 the bound of the state's wave, U_{1+k} = `sources`[k].
double form_bound(const Solution& s, const Segment& seg, const LinearForm& form, const std::vector<double>& sources) {
  const std::vector<double> m = s.network(seg).magnitudes(form);
  if (s.modal_path()) {
    // Several states: each state's own bound over the segment, then the sources from input n.
    const std::size_t n = s.storage_elements().size();
    double b = 0.0;
    for (std::size_t j = 0; j < n; ++j) {
      if (m.at(j) == 0.0) continue;
      Piece state;
      state.terms_f = std::make_shared<const response::Response>(seg.modal->state(static_cast<int>(j)));
      b += m[j] * terms_bound(state);
    }
    for (std::size_t k = 0; k < sources.size() && k + n < m.size(); ++k) b += m[k + n] * sources[k];
    return b;
  }
  double b = m.at(0) * bound(seg.state);
  for (std::size_t k = 0; k < sources.size() && k + 1 < m.size(); ++k) b += m[k + 1] * sources[k];
  return b;
}

// |dc| + Σ|steps| + Σ|amplitudes| of every source: the largest value it can take.
std::vector<double> source_magnitudes(const Solution& s) {
  std::vector<double> out;
  for (ElementId id : s.sources()) {
    const Waveform& w = s.circuit().element(id).waveform;
    double m = std::fabs(w.dc);
    for (const auto& st : w.steps) m += std::fabs(st.level);
    for (const auto& sin : w.sinusoids) m += std::fabs(sin.amplitude);
    out.push_back(m);
  }
  return out;
}

void refuse_unrepresentable_element(const Solution& s, ElementId id, const std::vector<double>& sources) {
  if (!defined_throughout(s, id)) return;
  double v_max = 0.0, i_max = 0.0, vi = 0.0, ii = 0.0;
  for (const auto& seg : s.segments()) {
    const NodalSystem& sys = s.network(seg).system();
    const double v = form_bound(s, seg, sys.element_voltage(id), sources);
    const double i = form_bound(s, seg, sys.element_current(id), sources);
    v_max = std::max(v_max, v);
    i_max = std::max(i_max, i);
    vi += v * i * (seg.to - seg.from);
    ii += i * i * (seg.to - seg.from);
  }
  if (std::isfinite(v_max * i_max) && std::isfinite(vi) && std::isfinite(ii)) return;
  // Only now the figures themselves, in the order the solve report computes them, so that its
  // message is the one every command gives.
  const Circuit& c = s.circuit();
  element_energy(s, id);
  element_i2t(s, id);
  compute_figures(s, element_observable(c, id, ObservableKind::element_voltage));
  compute_figures(s, element_observable(c, id, ObservableKind::element_current));
  compute_figures(s, element_observable(c, id, ObservableKind::element_power));
  element_mean_power(s, id);
}

}  // namespace

void refuse_unrepresentable(const Solution& s) {
  const Circuit& c = s.circuit();
  std::vector<Observable> observables = s.observables();
  for (const auto& claim : c.claims()) {
    const Observable& obs = claim.observable;
    const bool has_one = obs.element != kNone || obs.node_a != kNone;
    if (has_one && defined_throughout(s, obs)) observables.push_back(obs);
  }
  for (const auto& obs : observables)
    if (!bounded(s.pieces(obs))) compute_figures(s, obs);
  // Elements named by a watched observable first, in the order the solve report computes their
  // energy and I²t, so that its message is the one every command gives.
  std::vector<ElementId> order;
  std::vector<bool> listed(c.elements().size(), false);
  auto list = [&](ElementId id) {
    if (id == kNone || listed[id]) return;
    listed[id] = true;
    order.push_back(id);
  };
  for (const auto& obs : observables) list(obs.element);
  for (ElementId id = 0; id < c.elements().size(); ++id)
    if (!c.element(id).ratings.empty()) list(id);
  for (const auto& claim : c.claims()) list(claim.element);
  const std::vector<double> sources = source_magnitudes(s);
  for (ElementId id : order) refuse_unrepresentable_element(s, id, sources);
}

}  // namespace netfold
