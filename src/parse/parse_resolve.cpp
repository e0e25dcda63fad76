// References to elements and nodes, observables and sweeps, resolved once every element is
// known (or against a finished circuit, for command-line arguments).
#include <algorithm>
#include <cmath>
#include <limits>

#include <fmt/format.h>

#include "parse/parser.hpp"

namespace netfold::parser {

ElementId resolve_element(const Scope& scope, NameRef ref) {
  Lookup found = scope.element(ref.name);
  if (found.id != kNone) return found.id;
  if (found.broken) throw Silenced{};
  std::string message = fmt::format("unknown element '{}'", ref.name);
  if (Lookup n = scope.node(ref.name); n.id != kNone || n.broken)
    message += fmt::format("; '{}' is a node, and a node is written '@{}'", ref.name, ref.name);
  fail(ref.loc, std::move(message));
}

NodeId resolve_node(const Scope& scope, NameRef ref) {
  Lookup found = scope.node(ref.name);
  if (found.id != kNone) return found.id;
  if (found.broken) throw Silenced{};
  std::string message = fmt::format("unknown node '{}'", ref.name);
  if (Lookup e = scope.element(ref.name); e.id != kNone || e.broken)
    message += fmt::format("; '{}' is an element, not a node (its voltage is '{}.v')", ref.name, ref.name);
  else if (ref.name == "gnd")
    message += fmt::format("; the reference node of this file is '{}'", scope.reference());
  fail(ref.loc, std::move(message));
}

Observable resolve_observable(const Scope& scope, const PendingObservable& p) {
  Observable o;
  o.kind = p.kind;
  o.loc = p.loc;
  if (p.bare) {
    Lookup e = scope.element(p.a.name), n = scope.node(p.a.name);
    if (e.broken || n.broken) throw Silenced{};
    if (n.id != kNone)
      fail(p.a.loc, fmt::format("'{}' is a node; a node is written '@{}'", p.a.name, p.a.name));
    if (e.id != kNone)
      fail(p.a.loc, fmt::format("'{0}' is an element; write '{0}.v', '{0}.i' or '{0}.p'", p.a.name));
    fail(p.a.loc, fmt::format("unknown element or node '{}'; an observable is X.v, X.i, X.p, @n or @a - @b", p.a.name));
  }
  switch (p.kind) {
    case ObservableKind::element_voltage:
    case ObservableKind::element_current:
    case ObservableKind::element_power: {
      o.element = resolve_element(scope, p.a);
      std::string_view suffix = p.kind == ObservableKind::element_voltage   ? ".v"
                                : p.kind == ObservableKind::element_current ? ".i"
                                                                            : ".p";
      o.text = fmt::format("{}{}", p.a.name, suffix);
      break;
    }
    case ObservableKind::node_voltage:
      o.node_a = resolve_node(scope, p.a);
      o.text = fmt::format("@{}", p.a.name);
      break;
    case ObservableKind::node_difference:
      o.node_a = resolve_node(scope, p.a);
      o.node_b = resolve_node(scope, p.b);
      if (o.node_a == o.node_b)
        fail(p.b.loc, fmt::format("'@{0} - @{0}' is always zero; name two different nodes", p.a.name));
      o.text = fmt::format("@{} - @{}", p.a.name, p.b.name);
      break;
  }
  return o;
}

// A value of a sweep in the user's terms: angles in degrees, as they are written.
std::string sweep_value_text(double x, Dimension dim) {
  if (dim == Dimension::angle) return format_si(x / kDegree, "°");
  return format_si(x, dimension_symbol(dim));
}

// The grid of a sweep with a step has ceil((TO − FROM) / S) intervals (worst.cpp's sweep_grid);
// more than kMaxSweepIntervals would be cut short and leave the end of the range unswept.
void check_sweep_step(const Sweep& s, const PendingSweep& p, Dimension dim) {
  const double range = s.to - s.from;
  const double intervals = std::ceil(range / *s.step - 1e-9);
  if (intervals <= kMaxSweepIntervals) return;
  // The finest step allowed, rounded up to three digits so that the step suggested is accepted.
  double finest = range / kMaxSweepIntervals;
  if (dim == Dimension::angle) finest /= kDegree;
  const double digit = std::pow(10.0, std::floor(std::log10(finest)) - 2);
  finest = std::ceil(finest / digit - 1e-9) * digit;
  if (dim == Dimension::angle) finest *= kDegree;
  fail(p.step->loc, fmt::format("a step of '{}' cuts the range of '{}' into {:.3g} intervals, more than the {:g} a "
                                "sweep computes; give a step of at least {}",
                                p.step->quote(), s.text, intervals, kMaxSweepIntervals,
                                sweep_value_text(finest, dim)));
}

// A closing-time sweep moves the switch's first `closes` event; it must stay after the event
// before it and before the event after it, or the events would change order (the rule of
// worst.cpp's validate_sweep, in the user's words).
void check_closes_slot(const Element& e, const Sweep& s, const PendingSweep& p) {
  auto first = std::find_if(e.events.begin(), e.events.end(), [](const SwitchEvent& ev) { return ev.closes; });
  if (first != e.events.begin()) {
    const SwitchEvent& before = *std::prev(first);
    if (s.from <= before.time)
      fail(p.from.loc, fmt::format("'{}' moves {}'s first 'closes' from {}, but it must stay after the switch's "
                                   "previous event, 'opens at {}' (line {}); narrow the range",
                                   s.text, e.name, p.from.quote(), format_si(before.time, "s"), before.loc.line));
  }
  if (std::next(first) != e.events.end()) {
    const SwitchEvent& after = *std::next(first);
    if (s.to >= after.time)
      fail(p.to.loc, fmt::format("'{}' moves {}'s first 'closes' up to {}, but it must stay before the switch's next "
                                 "event, 'opens at {}' (line {}); narrow the range",
                                 s.text, e.name, p.to.quote(), format_si(after.time, "s"), after.loc.line));
  }
}

Sweep resolve_sweep(const Scope& scope, const PendingSweep& p) {
  Sweep s;
  s.loc = p.loc;
  s.element = resolve_element(scope, p.element);
  s.text = fmt::format("{}.{}", p.element.name, p.member_text);
  const Element& e = scope.element_at(s.element);
  const KindInfo& info = kind_info(e.kind);
  Dimension dim = Dimension::time;
  switch (p.member) {
    case SweepMember::phase:
      s.target = SweepTarget::source_phase;
      dim = Dimension::angle;
      if (!is_independent_source(e.kind))
        fail(p.element.loc, fmt::format("'{}' sweeps the phase of an independent source, but '{}' is {}", s.text,
                                        e.name, info.noun));
      if (!e.waveform.has_sinusoid())
        fail(p.element.loc, fmt::format("'{}' has no cosine or sine term whose phase '{}' could shift", e.name, s.text));
      break;
    case SweepMember::initial:
      s.target = SweepTarget::storage_initial;
      if (!is_storage(e.kind))
        fail(p.element.loc, fmt::format("'{}' sweeps the initial state of a capacitor or inductor, but '{}' is {}",
                                        s.text, e.name, info.noun));
      dim = e.kind == ElementKind::capacitor ? Dimension::voltage : Dimension::current;
      break;
    case SweepMember::closes:
      s.target = SweepTarget::switch_closes;
      if (e.kind != ElementKind::switch_)
        fail(p.element.loc, fmt::format("'{}' sweeps the closing time of a switch, but '{}' is {}", s.text, e.name,
                                        info.noun));
      if (std::none_of(e.events.begin(), e.events.end(), [](const SwitchEvent& ev) { return ev.closes; }))
        fail(p.element.loc, fmt::format("switch {} has no 'closes at' event for '{}' to move", e.name, s.text));
      break;
  }
  std::string place = fmt::format("'{}'", s.text);
  s.from = to_si(p.from, dim, place);
  s.to = to_si(p.to, dim, place);
  if (p.step) s.step = to_si(*p.step, dim, place);
  if (p.member == SweepMember::closes) {
    for (const RawValue* v : {&p.from, &p.to})
      if (std::string fault = time_limit_fault(*v, v == &p.from ? s.from : s.to); !fault.empty()) fail(v->loc, fault);
    if (s.from < 0)
      fail(p.from.loc, fmt::format("a switch event cannot happen before t = 0, found '{}'", p.from.quote()));
  }
  if (!(s.from < s.to))
    fail(p.to.loc, fmt::format("a sweep range must rise: '{}' is not above '{}'", p.to.quote(), p.from.quote()));
  if (!std::isfinite(s.to - s.from))
    fail(p.to.loc, fmt::format("the range '{}' .. '{}' is wider than double precision carries; narrow it",
                               p.from.quote(), p.to.quote()));
  if (s.step && !(*s.step > 0))
    fail(p.step->loc, fmt::format("a sweep step must be positive, found '{}'", p.step->quote()));
  if (s.step) check_sweep_step(s, p, dim);
  return s;
}

}  // namespace netfold::parser
