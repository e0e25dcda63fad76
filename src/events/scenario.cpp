#include "netfold/scenario.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <numbers>
#include <stdexcept>

#include <fmt/format.h>

namespace netfold {

namespace {

[[noreturn]] void fail(const Circuit& c, SourceLoc loc, std::string message) {
  throw InputError(c.diagnostic(loc, std::move(message)));
}

// Whether a sinusoid was written `sine`. The circuit keeps only its phase against a cosine
// (p − 90° for `sine ... phase p`), so the keyword is read back from the file's text at the
// term's position; a circuit built in code has no text there and its sinusoids are cosines.
// (A flag set by the parser would say the same without the text.)
bool written_as_sine(const Circuit& c, const Sinusoid& s) {
  if (s.loc.line == 0 || s.loc.col == 0) return false;
  std::string_view line = c.source().line(s.loc.line);
  std::size_t i = 0;
  // Columns count characters, not bytes: skip col − 1 UTF-8 sequences.
  for (std::uint32_t k = 1; k < s.loc.col && i < line.size(); ++k) {
    ++i;
    while (i < line.size() && (static_cast<unsigned char>(line[i]) & 0xC0) == 0x80) ++i;
  }
  std::string_view word = line.substr(i);
  return word.starts_with("sine") && (word.size() == 4 || !(std::isalnum(static_cast<unsigned char>(word[4])) ||
                                                            word[4] == '_' || word[4] == '-'));
}

template <typename T>
void put(std::vector<T>& list, const T& item, ElementId T::*id) {
  auto it = std::find_if(list.begin(), list.end(), [&](const T& x) { return x.*id == item.*id; });
  if (it != list.end()) *it = item;
  else list.push_back(item);
}

template <typename V>
const V* find_in(const std::vector<std::pair<ElementId, V>>& list, ElementId id) {
  for (const auto& [k, v] : list)
    if (k == id) return &v;
  return nullptr;
}

}  // namespace

double written_phase(const Circuit& c, ElementId id) {
  const Element& e = c.element(id);
  if (e.waveform.sinusoids.empty()) return 0.0;
  const Sinusoid& s = e.waveform.sinusoids.front();
  return written_as_sine(c, s) ? s.phase + std::numbers::pi / 2 : s.phase;
}

void set_sweep_target(Scenario& scenario, const Sweep& sweep, double x) {
  switch (sweep.target) {
    case SweepTarget::source_phase: put(scenario.source_phases, SourcePhase{sweep.element, x}, &SourcePhase::source); return;
    case SweepTarget::storage_initial:
      put(scenario.residual_states, ResidualState{sweep.element, x}, &ResidualState::element);
      return;
    case SweepTarget::switch_closes:
      put(scenario.first_closings, FirstClosing{sweep.element, x}, &FirstClosing::element);
      return;
  }
}

Scenario scenario_at(const Sweep& sweep, double x) {
  Scenario s;
  set_sweep_target(s, sweep, x);
  return s;
}

const Waveform& AppliedScenario::waveform(ElementId id) const {
  if (const Waveform* w = find_in(waveforms_, id)) return *w;
  return circuit_->element(id).waveform;
}

const std::vector<SwitchEvent>& AppliedScenario::events(ElementId id) const {
  if (const auto* ev = find_in(events_, id)) return *ev;
  return circuit_->element(id).events;
}

std::optional<double> AppliedScenario::initial_state(ElementId id) const {
  // A later entry for the same element replaces an earlier one.
  for (auto it = scenario_.residual_states.rbegin(); it != scenario_.residual_states.rend(); ++it)
    if (it->element == id) return it->value;
  return std::nullopt;
}

double AppliedScenario::time_shift(ElementId id) const {
  if (const double* t = find_in(shifts_, id)) return *t;
  return 0.0;
}

Circuit circuit_with_values(const Circuit& c, const Scenario& scenario) {
  std::vector<Element> elements = c.elements();
  for (const ElementValue& ev : scenario.element_values) {
    Element& e = elements.at(ev.element);
    if (e.kind != ElementKind::resistor && !is_storage(e.kind))
      fail(c, e.loc, fmt::format("'{}' is not a resistor, capacitor or inductor: it has no value to set", e.name));
    e.value = ev.value;
  }
  for (const SourceFactor& sf : scenario.source_factors) {
    Element& e = elements.at(sf.source);
    if (!is_independent_source(e.kind))
      fail(c, e.loc, fmt::format("'{}' is not an independent source: it has no waveform to scale", e.name));
    e.waveform.dc *= sf.factor;
    for (Sinusoid& s : e.waveform.sinusoids) s.amplitude *= sf.factor;
    for (Step& st : e.waveform.steps) st.level *= sf.factor;
  }
  CircuitBuilder b(c.source_ptr());
  for (const auto& n : c.nodes()) b.node(n);
  b.set_ground(c.nodes().at(c.ground()), c.ground_loc());
  for (auto& e : elements) b.add_element(std::move(e));
  b.set_title(c.title());
  for (const auto& o : c.watches()) b.add_watch(o);
  for (std::size_t k = 0; k < c.sweeps().size(); ++k)
    b.add_sweep(c.sweeps()[k], k > 0 && c.sweeps()[k].line == c.sweeps()[k - 1].line);
  for (const auto& cl : c.claims()) b.add_claim(cl);
  if (c.window()) b.set_window(*c.window());
  if (c.resolution()) b.set_resolution(*c.resolution(), c.resolution_loc());
  if (c.golden_tolerance()) b.set_golden_tolerance(*c.golden_tolerance());
  return std::move(b).build();
}

AppliedScenario apply_scenario(const Circuit& c, const Scenario& scenario) {
  // Values are made by circuit_with_values (the network stage reads them from the circuit);
  // a scenario whose values the circuit does not hold was solved on the declared circuit.
  for (const ElementValue& ev : scenario.element_values)
    if (c.element(ev.element).value != ev.value)
      throw std::logic_error(fmt::format("apply_scenario: {}'s value was not set by circuit_with_values",
                                         c.element(ev.element).name));
  AppliedScenario a;
  a.circuit_ = &c;
  a.scenario_ = scenario;
  for (const SourcePhase& sp : scenario.source_phases) {
    const Element& e = c.element(sp.source);
    if (!is_independent_source(e.kind) || e.waveform.sinusoids.empty())
      fail(c, e.loc, fmt::format("'{}' has no cosine or sine term whose phase could be set", e.name));
    Waveform w = e.waveform;
    Sinusoid& first = w.sinusoids.front();
    // The first sinusoid's new phase is computed as the parser computes a written one (the
    // same operations), so that the declared phase gives back exactly the nominal waveform.
    double phase = sp.phase;
    if (written_as_sine(c, e.waveform.sinusoids.front())) phase -= std::numbers::pi / 2;
    const double delta = phase - first.phase;
    const double f1 = first.frequency;
    first.phase = phase;
    for (std::size_t k = 1; k < w.sinusoids.size(); ++k) {
      Sinusoid& s = w.sinusoids[k];
      s.phase += s.frequency == f1 ? delta : delta * (s.frequency / f1);
    }
    std::erase_if(a.waveforms_, [&](const auto& p) { return p.first == sp.source; });
    std::erase_if(a.shifts_, [&](const auto& p) { return p.first == sp.source; });
    a.waveforms_.emplace_back(sp.source, std::move(w));
    // The shift of the time origin: the waveform at t equals the declared one at t + shift.
    a.shifts_.emplace_back(sp.source, delta / (2.0 * std::numbers::pi * f1));
  }
  for (const ResidualState& is : scenario.residual_states) {
    const Element& e = c.element(is.element);
    if (!is_storage(e.kind))
      fail(c, e.loc, fmt::format("'{}' is not a capacitor or inductor: it has no initial state to set", e.name));
  }
  for (const FirstClosing& fc : scenario.first_closings) {
    const Element& e = c.element(fc.element);
    auto first = std::find_if(e.events.begin(), e.events.end(), [](const SwitchEvent& ev) { return ev.closes; });
    if (e.kind != ElementKind::switch_ || first == e.events.end())
      fail(c, e.loc, fmt::format("'{}' has no 'closes at' event whose time could be set", e.name));
    std::vector<SwitchEvent> events = e.events;
    events[static_cast<std::size_t>(first - e.events.begin())].time = fc.time;
    std::erase_if(a.events_, [&](const auto& p) { return p.first == fc.element; });
    a.events_.emplace_back(fc.element, std::move(events));
  }
  return a;
}

}  // namespace netfold
