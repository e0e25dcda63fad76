#include "response/solve_support.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <set>
#include <unordered_map>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "netfold/units.hpp"
#include "response/range.hpp"
#include "response/test_seams.hpp"


namespace netfold::detail {


std::string segment_text(const Circuit& c, const Segment& s) {
  std::string pos = configuration_text(c, s.positions);
  return fmt::format("segment {} ({} .. {}{}{})", s.number, format_si(s.from, "s"), format_si(s.to, "s"),
                     pos.empty() ? "" : ", ", pos);
}

Segment scheduled_segment(const Circuit& c, const ScheduledSegment& planned, std::size_t k) {
  Segment seg;
  seg.number = static_cast<int>(k + 1);
  seg.from = planned.from;
  seg.to = planned.to;
  seg.positions = planned.positions;
  for (const auto& ev : planned.changes) seg.changes.push_back(event_text(c, ev));
  seg.events = planned.changes;
  return seg;
}

std::string names_of(const Circuit& c, const std::vector<ElementId>& ids) {
  std::string out;
  for (std::size_t i = 0; i < ids.size(); ++i) {
    if (i > 0) out += i + 1 == ids.size() ? " and " : ", ";
    out += c.element(ids[i]).name;
  }
  return out;
}

std::string node_names(const Circuit& c, const std::vector<NodeId>& ids) {
  std::string out;
  for (std::size_t i = 0; i < ids.size() && i < 6; ++i) {
    if (i > 0) out += ", ";
    out += c.nodes()[ids[i]];
  }
  if (ids.size() > 6) out += fmt::format(" and {} more", ids.size() - 6);
  return out;
}

[[noreturn]] void fail(const Circuit& c, SourceLoc loc, std::string message) {
  throw InputError(c.diagnostic(loc, std::move(message)));
}

// The elements of a fault other than the storage element (the ones the message blames).
std::vector<ElementId> all_but(const std::vector<ElementId>& ids, ElementId storage) {
  std::vector<ElementId> out;
  for (ElementId id : ids)
    if (id != storage) out.push_back(id);
  return out;
}

// A switch that closes at the start of the segment and so creates the fault.
ElementId switch_closing_at(const AppliedScenario& applied, const std::vector<ElementId>& ids, double t) {
  for (ElementId id : ids) {
    const Element& e = applied.circuit().element(id);
    if (e.kind != ElementKind::switch_) continue;
    for (const auto& ev : applied.events(id))
      if (ev.closes && ev.time == t) return id;
  }
  return kNone;
}

// Turns a structural problem of a segment's network into a message in circuit terms.
[[noreturn]] void report_problem(const AppliedScenario& applied, const TopologyProblem& p, const std::string& where,
                                 ElementId storage, double state, double segment_start) {
  const Circuit& c = applied.circuit();
  using Kind = TopologyProblem::Kind;
  const auto& el = c.elements();
  switch (p.kind) {
    case Kind::capacitor_loop: {
      const std::vector<ElementId> others = all_but(p.elements, storage);
      fail(c, el[storage].loc,
           fmt::format("capacitor {} is connected straight across {} in {}: nothing limits its current, so "
                       "its voltage would have to jump (R_th = 0); add the series resistance that is really "
                       "there (the source's internal resistance, wiring, or the capacitor's ESR)",
                       el[storage].name, names_of(c, others), where));
    }
    case Kind::voltage_loop: {
      bool only_switches = std::all_of(p.elements.begin(), p.elements.end(),
                                       [&](ElementId id) { return el[id].kind == ElementKind::switch_; });
      ElementId first = p.elements.front();
      for (ElementId id : p.elements)
        if (el[id].kind != ElementKind::switch_) first = std::min(first, id);
      ElementId closing = switch_closing_at(applied, p.elements, segment_start);
      if (closing != kNone && !only_switches) {
        std::vector<ElementId> sources;
        for (ElementId id : p.elements)
          if (el[id].kind != ElementKind::switch_) sources.push_back(id);
        std::sort(sources.begin(), sources.end());  // file order reads naturally
        fail(c, el[closing].loc,
             fmt::format("{} closes at {} and connects {} straight {}: a loop of ideal voltage sources with "
                         "no resistance, so their voltages fight and the loop current is undefined; add the "
                         "resistance that is really there (the sources' internal resistance, wiring) or give {} "
                         "an 'on' resistance",
                         el[closing].name, format_si(segment_start, "s"), names_of(c, sources),
                         sources.size() == 1 ? "across itself" : "to each other", el[closing].name));
      }
      if (only_switches)
        fail(c, el[first].loc,
             fmt::format("closed switches {} form a loop with no resistance in {}: the current that circulates "
                         "in it is undefined; give one of them an 'on' resistance",
                         names_of(c, p.elements), where));
      fail(c, el[first].loc,
           fmt::format("{} form a loop of ideal voltage sources in {}: their voltages fight and the loop "
                       "current is undefined; add a series resistance (a source's internal resistance) or "
                       "remove one of them",
                       names_of(c, p.elements), where));
    }
    case Kind::current_cut_set: {
      ElementId first = p.elements.front();
      if (storage != kNone && std::find(p.elements.begin(), p.elements.end(), storage) != p.elements.end()) {
        const std::vector<ElementId> others = all_but(p.elements, storage);
        fail(c, el[storage].loc,
             fmt::format("inductor {} is in series with current source {} in {}: the source fixes the inductor's "
                         "current, which would have to jump to the source's value; add a resistance across {} or "
                         "across {}",
                         el[storage].name, names_of(c, others), where, el[storage].name, names_of(c, others)));
      }
      fail(c, el[first].loc,
           fmt::format("{} {} the only connection of node{} {} in {}: a current source cannot drive a node "
                       "that has no other path; add a resistance across {} or from {} to the reference",
                       names_of(c, p.elements), p.elements.size() > 1 ? "are" : "is",
                       p.nodes.size() > 1 ? "s" : "", node_names(c, p.nodes), where, el[first].name,
                       c.nodes()[p.nodes.front()]));
    }
    case Kind::inductor_open:
      fail(c, el[storage].loc,
           fmt::format("inductor {} carries {} at the start of {}, but then has no path for its current "
                       "(R_th = ∞): the current would have to jump to zero; add a freewheel resistor across {} "
                       "or an 'off' resistance to the switch that opens",
                       el[storage].name, format_si(state, "A"), where, el[storage].name));
    case Kind::test_port_loop: break;
  }
  throw NumericError("unhandled topology problem");
}

[[noreturn]] void report_singular(const Circuit& c, const ReducedNetwork& net, const std::string& where) {
  const auto& el = c.elements();
  std::vector<ElementId> controlled;
  for (ElementId i = 0; i < el.size(); ++i)
    if (el[i].kind == ElementKind::vcvs || el[i].kind == ElementKind::vccs || el[i].kind == ElementKind::ccvs ||
        el[i].kind == ElementKind::cccs)
      controlled.push_back(i);
  if (!controlled.empty()) {
    fail(c, el[controlled.front()].loc,
         fmt::format("the network equations are singular in {} (reciprocal condition {:.1e}): the controlled "
                     "source{} {} make{} them degenerate, as a loop gain of exactly 1 or a source that controls "
                     "itself does; check the gains and the sense connections",
                     where, net.rcond(), controlled.size() > 1 ? "s" : "", names_of(c, controlled),
                     controlled.size() > 1 ? "" : "s"));
  }
  // No controlled source: the values span too wide a range for double precision.
  ElementId smallest = kNone, largest = kNone;
  for (ElementId i = 0; i < el.size(); ++i) {
    if (el[i].kind != ElementKind::resistor) continue;
    if (smallest == kNone || el[i].value < el[smallest].value) smallest = i;
    if (largest == kNone || el[i].value > el[largest].value) largest = i;
  }
  SourceLoc loc = smallest != kNone ? el[smallest].loc : SourceLoc{1, 1};
  std::string detail;
  if (smallest != kNone && smallest != largest)
    detail = fmt::format(": resistances range from {} ({}) to {} ({})", format_si(el[smallest].value, "Ω"),
                         el[smallest].name, format_si(el[largest].value, "Ω"), el[largest].name);
  fail(c, loc,
       fmt::format("the network equations are too ill-conditioned to solve in {} (reciprocal condition "
                   "{:.1e}){}; replace a near-zero resistance by a closed switch or a near-infinite one by an "
                   "open circuit",
                   where, net.rcond(), detail));
}

// Resistances whose ratio passes 1e13 cannot both be resolved: the refined nodal solve
// (network/refine.hpp) carries a conductance 1e13 below its neighbours, but the element values
// themselves are rounded to ε, and a leak's share of a current is then within a few hundred ε
// of rounding (ReducedNetwork::negligible). Refused with the two named.
const double kMaxResistanceSpan = 1e13;  // the message says "1e13": change both together
// Below 1e-18 s a time constant means an impulsive circuit (a near-zero resistance in series
// with the capacitor): its response is a step and the currents near-infinite impulses.
const double kShortestTau = 1e-18;
// More samples than this would be a CSV of gigabytes: a resolution mistake.
const double kMaxSamples = 1e7;
// Longest default window: beyond it a time constant or a period is almost surely a typing
// mistake (common practice, no source), and the numerical check could not cover it anyway.
const double kMaxDefaultWindow = 1e9;

void check_value_span(const Circuit& c) {
  const auto& el = c.elements();
  ElementId smallest = kNone, largest = kNone;
  double r_min = 0.0, r_max = 0.0;
  auto take = [&](ElementId id, double r) {
    if (!(r > 0.0) || !std::isfinite(r)) return;
    if (smallest == kNone || r < r_min) {
      smallest = id;
      r_min = r;
    }
    if (largest == kNone || r > r_max) {
      largest = id;
      r_max = r;
    }
  };
  for (ElementId i = 0; i < el.size(); ++i) {
    if (el[i].kind == ElementKind::resistor) take(i, el[i].value);
    if (el[i].kind == ElementKind::switch_) {
      take(i, el[i].r_on);
      take(i, el[i].r_off);
    }
  }
  if (smallest == kNone || r_max / r_min <= kMaxResistanceSpan) return;
  fail(c, el[smallest].loc,
       fmt::format("resistances span more than 1e13 ({} = {} to {} = {}): double precision cannot carry both "
                   "through one network; model {} as a closed switch (a wire) or {} as an open circuit",
                   el[smallest].name, format_si(r_min, "Ω"), el[largest].name, format_si(r_max, "Ω"),
                   el[smallest].name, el[largest].name));
}

// A sub-network that floats in every segment touches nothing else: usually a typing mistake
// in a node name. One warning per such part (not holding the storage element), naming its
// nodes and the first element on it. Linear in nodes and elements: a file of 10^5 isolated
// parts must not take 10^10 steps.
std::vector<std::string> floating_part_warnings(const Circuit& c, const std::vector<const NodalSystem*>& systems,
                                                ElementId storage) {
  const auto& el = c.elements();
  const std::size_t n_nodes = c.nodes().size();
  std::vector<bool> always(n_nodes, true);
  for (const NodalSystem* sys : systems)
    for (NodeId n = 0; n < n_nodes; ++n)
      if (!sys->node_floating(n)) always[n] = false;
  const NodalSystem& first = *systems.front();
  std::vector<ElementId> first_touch(n_nodes, kNone);
  for (ElementId i = static_cast<ElementId>(el.size()); i-- > 0;) first_touch[el[i].pos] = first_touch[el[i].neg] = i;
  // The parts in order of their first node.
  std::unordered_map<std::uint32_t, std::size_t> part_index;
  std::vector<std::vector<NodeId>> parts;
  for (NodeId n = 0; n < n_nodes; ++n) {
    if (!always[n]) continue;
    auto [it, fresh] = part_index.try_emplace(first.component_of(n), parts.size());
    if (fresh) parts.emplace_back();
    parts[it->second].push_back(n);
  }
  const auto storage_part = storage != kNone ? first.component_of(el[storage].pos) : 0;
  constexpr std::size_t kMaxListed = 10;  // a file of many isolated parts gets a summary line
  std::vector<std::string> out;
  std::size_t unlisted = 0;
  for (const auto& group : parts) {
    if (storage != kNone && first.component_of(group.front()) == storage_part) continue;
    if (out.size() == kMaxListed) {
      ++unlisted;
      continue;
    }
    ElementId touching = kNone;
    for (NodeId n : group) touching = std::min(touching, first_touch[n]);
    const bool many = group.size() > 1;
    out.push_back(fmt::format(
        "node{} {} {} no path to the reference in any segment (line {}, {}): {} against the reference {} no value; "
        "connect the sub-network or remove it (a misspelt node name does this)",
        many ? "s" : "", node_names(c, group), many ? "have" : "has", touching != kNone ? el[touching].loc.line : 0,
        touching != kNone ? el[touching].name : "", many ? "their voltages" : "its voltage", many ? "have" : "has"));
  }
  if (unlisted > 0)
    out.push_back(fmt::format("{} more part{} of the circuit {} no path to the reference in any segment", unlisted,
                              unlisted > 1 ? "s" : "", unlisted > 1 ? "have" : "has"));
  return out;
}

double slowest_frequency(const Circuit& c) {
  double f = 0.0;
  for (const auto& e : c.elements())
    for (const auto& s : e.waveform.sinusoids)
      if (s.amplitude != 0.0 && (f == 0.0 || s.frequency < f)) f = s.frequency;
  return f;
}

double level_before_zero(const Waveform& w) {
  double v = w.dc;
  for (const auto& s : w.steps)
    if (s.time < 0.0) v += s.level;
  return v;
}

// The format's default window: 0 .. last event + max(8 τ of the last segment, 5 periods of the
// slowest sinusoid). The numeric part of the schedule: it needs the last segment's network.
Window default_window(const AppliedScenario& applied, NetworkCache& cache, ElementId storage, double tau_scale,
                      std::vector<std::string>& warnings, double states_tau) {
  const Circuit& c = applied.circuit();
  const auto& el = c.elements();
  const std::vector<ScheduledEvent> events = list_events(applied);
  const double last_event = events.empty() ? 0.0 : events.back().time;
  double span = 0.0;
  if (storage != kNone) {
    const ReducedNetwork& net = cache.get(positions_at(applied, last_event));
    bool held = false;
    for (const auto& p : net.system().problems()) held |= p.kind == TopologyProblem::Kind::inductor_open;
    if (!held && net.system().problems().empty() && net.rcond() >= kSingularRcond) {
      Equivalent eq = storage_equivalent(c, net, storage);
      if (eq.rate != 0.0) span = 8.0 / std::fabs(eq.rate) * tau_scale;
    }
  }
  if (states_tau > 0.0) {  // several storage elements: their slowest decay
    span = 8.0 * states_tau;
    storage = c.storage_elements().front();
  }
  const double tau_span = span;
  double f = slowest_frequency(c);
  if (f > 0.0) span = std::max(span, 5.0 / f);
  if (span > kMaxDefaultWindow) {
    // Which element set it: the storage element (8 τ) or the slowest sinusoid (5 periods).
    SourceLoc loc = storage != kNone ? el[storage].loc : SourceLoc{1, 1};
    std::string why = fmt::format("8 τ of {}", storage != kNone ? el[storage].name : "");
    if (span > tau_span)
      for (const auto& e : el)
        for (const auto& w : e.waveform.sinusoids)
          if (w.amplitude != 0.0 && w.frequency == f) {
            loc = e.loc;
            why = fmt::format("5 periods of {} at {}", e.name, format_si(f, "Hz"));
          }
    fail(c, loc,
         fmt::format("the default window would be 0 s .. {} ({}), longer than 1e9 s (about 30 years): check the "
                     "value, or declare a 'window' for the time of interest",
                     format_si(last_event + span, "s"), why));
  }
  if (span == 0.0) {
    span = last_event > 0.0 ? last_event : 1.0;
    warnings.push_back(fmt::format("the circuit has no finite time constant and no sinusoid to size the "
                                   "window; it was set to 0 .. {}: set 'window' to choose",
                                   format_si(last_event + span, "s")));
  }
  return Window{0.0, last_event + span, {}};
}

// Refuses a resolution that gives one row or too many; warns where it aliases a sinusoid.
void check_resolution(const Circuit& c, const Window& window, double resolution, std::vector<std::string>& warnings) {
  if (c.resolution() && *c.resolution() > window.to - window.from) {
    SourceLoc loc = c.window() ? c.window()->loc : c.resolution_loc();
    fail(c, loc,
         fmt::format("the resolution {} is longer than the window {} .. {}; the CSV would hold one row: make the "
                     "window longer or the resolution shorter",
                     format_si(*c.resolution(), "s"), format_si(window.from, "s"), format_si(window.to, "s")));
  }
  const double samples = (window.to - window.from) / resolution;
  if (samples > kMaxSamples) {
    SourceLoc loc = c.resolution() ? c.resolution_loc() : (c.window() ? c.window()->loc : SourceLoc{1, 1});
    fail(c, loc,
         fmt::format("the resolution {} over the window {} .. {} asks for {:.3g} samples, more than the limit of "
                     "{:.0f}; choose a resolution of at least {}",
                     format_si(resolution, "s"), format_si(window.from, "s"), format_si(window.to, "s"), samples,
                     kMaxSamples, format_si((window.to - window.from) / kMaxSamples, "s")));
  }
  if (double f_fast = fastest_source_frequency(c); f_fast > 0.0 && resolution > 0.25 / f_fast)
    warnings.push_back(fmt::format("the resolution {} is coarser than a quarter period of the {} sinusoid: the CSV "
                                   "and the plot cannot show it (they alias it); the figures come from the closed "
                                   "form and are exact; set 'resolution' to at most {} to see the waveform",
                                   format_si(resolution, "s"), format_si(f_fast, "Hz"), format_si(0.25 / f_fast, "s")));
}


}  // namespace netfold::detail
