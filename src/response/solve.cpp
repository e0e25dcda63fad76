#include "netfold/solve.hpp"

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

namespace netfold {

const char* const kHazardCaution =
    "CAUTION: this circuit works above 50 V AC or 120 V DC, where contact can kill. These results are "
    "design estimates: follow local electrical codes and the component datasheets; work on such circuits "
    "is for qualified persons.";

namespace {

std::string positions_text(const Circuit& c, const SwitchPositions& p) {
  std::string out;
  std::size_t k = 0;
  for (const auto& e : c.elements()) {
    if (e.kind != ElementKind::switch_) continue;
    if (!out.empty()) out += ", ";
    out += fmt::format("{} {}", e.name, p.closed[k++] ? "closed" : "open");
  }
  return out;
}

std::string segment_text(const Circuit& c, const Segment& s) {
  std::string pos = positions_text(c, s.positions);
  return fmt::format("segment {} ({} .. {}{}{})", s.number, format_si(s.from, "s"), format_si(s.to, "s"),
                     pos.empty() ? "" : ", ", pos);
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
constexpr double kMaxResistanceSpan = 1e13;  // the message says "1e13": change both together
// Below 1e-18 s a time constant means an impulsive circuit (a near-zero resistance in series
// with the capacitor): its response is a step and the currents near-infinite impulses.
constexpr double kShortestTau = 1e-18;
// More samples than this would be a CSV of gigabytes: a resolution mistake.
constexpr double kMaxSamples = 1e7;
// Longest default window: beyond it a time constant or a period is almost surely a typing
// mistake (common practice, no source), and the numerical check could not cover it anyway.
constexpr double kMaxDefaultWindow = 1e9;

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
                      std::vector<std::string>& warnings) {
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

}  // namespace

const ReducedNetwork& Solution::network(const Segment& segment) const {
  return segment.network ? *segment.network : cache_->get(segment.positions, segment.mode);
}

Drive Solution::drive_of(const std::vector<double>& c, const Segment& segment) const {
  Drive d;
  for (std::size_t k = 0; k < sources_.size(); ++k) {
    double coef = c.at(k + 1);
    if (coef == 0.0) continue;
    // The waveform under the scenario: a swept phase is already in it (apply_scenario).
    const Waveform& w = applied_.waveform(sources_[k]);
    d.dc += coef * (segment.number == 0 ? level_before_zero(w) : w.level_at(segment.from));
    for (const auto& s : w.sinusoids) d.add_phasor(s.frequency, coef * std::polar(s.amplitude, s.phase));
  }
  return d;
}

const Segment& Solution::segment_at(double t) const {
  auto it = std::upper_bound(segments_.begin(), segments_.end(), t,
                             [](double x, const Segment& s) { return x < s.from; });
  if (it == segments_.begin()) return segments_.front();
  return *(it - 1);
}

Wave Solution::observable_wave(const LinearForm& form, const Segment& segment) const {
  std::vector<double> c = network(segment).coefficients(form);
  return affine_wave(segment.state, c[0], drive_of(c, segment));
}

// Says why an observable has no value in a segment, naming the floating part of the
// circuit and, where an open switch isolates it, that switch.
std::string Solution::undefined_observable_text(const Observable& obs, const NodalSystem& sys,
                                                const Segment& seg) const {
  const Circuit& c = *circuit_;
  const auto& el = c.elements();
  NodeId node = obs.node_a;
  if (obs.kind != ObservableKind::node_voltage && obs.kind != ObservableKind::node_difference) {
    const Element& e = el[obs.element];
    node = sys.node_floating(e.pos) || e.neg == c.ground() ? e.pos : e.neg;
  }
  if (obs.kind == ObservableKind::node_difference && !sys.node_floating(node)) node = obs.node_b;
  const auto part = sys.component_of(node);
  std::vector<ElementId> members, open_switches;
  std::size_t k = 0;
  for (ElementId i = 0; i < el.size(); ++i) {
    const bool touches = (el[i].pos != c.ground() && sys.component_of(el[i].pos) == part) ||
                         (el[i].neg != c.ground() && sys.component_of(el[i].neg) == part);
    if (el[i].kind == ElementKind::switch_) {
      if (touches && !seg.positions.closed[k]) open_switches.push_back(i);
      ++k;
    } else if (touches && members.size() < 6) {
      members.push_back(i);
    }
  }
  std::string what = obs.kind == ObservableKind::node_voltage
                         ? fmt::format("node {} is on a part of the circuit", c.nodes()[node])
                         : fmt::format("its ends are not connected to each other; node {} is on a part of the circuit",
                                       c.nodes()[node]);
  std::string fix = open_switches.empty()
                        ? "connect that part to the rest of the circuit (a misspelt node name does this) or "
                          "give it a resistance to the reference"
                        : fmt::format("give {} an 'off' resistance, or give that part a resistance to the reference",
                                      names_of(c, open_switches));
  return fmt::format("'{}' is not defined in {}: {} ({}) with no path to the reference there; {}", obs.text,
                     segment_text(c, seg), what, names_of(c, members), fix);
}

std::vector<Piece> Solution::pieces(const Observable& obs) const {
  std::vector<Piece> out;
  out.reserve(segments_.size());
  for (const auto& seg : segments_) out.push_back(piece(obs, seg));
  return out;
}

Piece Solution::piece(const Observable& obs, const Segment& seg) const {
  const NodalSystem& sys = network(seg).system();
  const ObservableForm form = engine_form(obs, sys);
  if (!form.defined()) {
    SourceLoc loc = obs.loc.line > 0 ? obs.loc : (storage_ != kNone ? circuit_->element(storage_).loc : SourceLoc{});
    throw InputError(circuit_->diagnostic(loc, undefined_observable_text(obs, sys, seg)));
  }
  return observable_piece(form, seg);
}

Piece Solution::observable_piece(const ObservableForm& form, const Segment& segment) const {
  Piece p{observable_wave(form.value, segment), std::nullopt};
  if (form.current) p.g = observable_wave(*form.current, segment);
  return p;
}

double Solution::value(const Observable& obs, double t) const {
  const Segment& seg = segment_at(t);
  return observable_piece(engine_form(obs, network(seg).system()), seg).value(t);
}

// The one observable form, through the test seam that can falsify it (test_seams.hpp).
ObservableForm Solution::engine_form(const Observable& obs, const NodalSystem& sys) const {
  ObservableForm form = observable_form(sys, obs);
  seams::apply_observable_faults(obs, sys, false, form.value);
  if (form.current) seams::apply_observable_faults(obs, sys, true, *form.current);
  return form;
}

namespace {
std::vector<std::string> ideal_break_cautions(const Solution& s);
}  // namespace

Solution solve(const Circuit& c, const SolveOptions& options, std::shared_ptr<NetworkCache> cache) {
  Solution s;
  s.circuit_ = &c;
  s.cache_ = cache ? std::move(cache) : std::make_shared<NetworkCache>(c);
  s.options_ = options;
  const auto& el = c.elements();

  auto storages = c.storage_elements();
  if (storages.size() > 1) {
    const Element& first = el[storages[0]];
    const Element& second = el[storages[1]];
    std::vector<std::string> names;
    for (ElementId id : storages) names.push_back(el[id].name);
    fail(c, second.loc,
         fmt::format("{} is a second storage element ({} at line {} is the first; the circuit has {}: {}): netfold "
                     "solves circuits with one capacitor or inductor; combine them into one, or model all but one "
                     "as a source or a resistance",
                     second.name, first.name, first.loc.line, storages.size(), fmt::join(names, ", ")));
  }
  s.storage_ = storages.empty() ? kNone : storages.front();
  s.sources_ = independent_sources(c);
  check_value_span(c);
  const double storage_value = s.storage_ != kNone ? el[s.storage_].value : 1.0;

  // The scenario, applied once: every later step reads the effective waveforms and events.
  s.applied_ = apply_scenario(c, seams::faulty_scenario(options.scenario));

  // The window (declared, or the default rule, which needs the last segment's τ), then the
  // schedule over it.
  if (options.window || c.window()) {
    s.window_ = options.window ? *options.window : *c.window();
    s.window_default_ = false;
  } else {
    s.window_ = default_window(s.applied_, *s.cache_, s.storage_, seams::engine_faults().tau_scale, s.warnings_);
  }
  s.schedule_ = build_schedule(s.applied_, s.window_);
  const double t_end = s.window_.to;
  s.resolution_ = s.schedule_.resolution;
  check_resolution(c, s.window_, s.resolution_, s.warnings_);
  for (const auto& ev : s.schedule_.ignored_events())
    s.warnings_.push_back(fmt::format("{}'s event at {} is at or after the end of the window ({}); it is ignored",
                                      el[ev.element].name, format_si(ev.time, "s"), format_si(t_end, "s")));

  // The state at t = 0−.
  if (s.storage_ == kNone) {
    s.initial_source_ = InitialStateSource::none;
  } else if (auto given = s.applied_.initial_state(s.storage_)) {
    s.initial_state_ = *given;
    s.initial_source_ = InitialStateSource::option;
  } else if (el[s.storage_].initial) {
    s.initial_state_ = *el[s.storage_].initial;
    s.initial_source_ = InitialStateSource::attribute;
  } else {
    Segment pre;
    pre.number = 0;  // "before t = 0" for drive_of
    pre.positions = positions_before_zero(c);
    const ReducedNetwork& net = s.cache_->get(pre.positions);
    const Element& st = el[s.storage_];
    std::string reason;
    if (!net.system().problems().empty()) {
      reason = fmt::format("{} is isolated before t = 0", st.name);
    } else if (net.rcond() < kSingularRcond) {
      reason = "the network before t = 0 is singular";
    } else {
      Equivalent eq = storage_equivalent(c, net, s.storage_);
      if (eq.rate < 0.0) {
        std::vector<double> cp = net.coefficients(net.system().port_quantity());
        for (double& v : cp) v /= storage_value;
        Drive forcing = s.drive_of(cp, pre);
        // Steady state of dx/dt = a·x + f(t) at t = 0: −f_dc/a + Σ Re(F/(jω − a)).
        Wave w = state_wave(0.0, 0.0, eq.rate, 0.0, forcing);
        s.initial_state_ = w.steady_state()->value(0.0);
        s.initial_source_ = InitialStateSource::steady_state;
      } else if (eq.rate == 0.0) {
        reason = st.kind == ElementKind::capacitor
                     ? fmt::format("{} sees no resistance before t = 0, so its voltage there is undetermined", st.name)
                     : fmt::format("{} sees no resistance before t = 0, so its current there is undetermined", st.name);
      } else {
        reason = "the network before t = 0 is unstable (negative time constant) and has no steady state";
      }
    }
    if (s.initial_source_ != InitialStateSource::steady_state) {
      s.initial_source_ = InitialStateSource::undetermined;
      s.initial_note_ = reason;
      s.warnings_.push_back(fmt::format("{}: {} starts from 0 {}", reason, st.name,
                                        st.kind == ElementKind::capacitor ? "V" : "A"));
    }
  }

  double state = s.initial_state_;
  double state_scale = std::fabs(state);
  for (std::size_t k = 0; k < s.schedule_.segments.size(); ++k) {
    const ScheduledSegment& planned = s.schedule_.segments[k];
    Segment seg;
    seg.number = static_cast<int>(k + 1);
    seg.from = planned.from;
    seg.to = planned.to;
    seg.positions = planned.positions;
    for (const auto& ev : planned.changes) seg.changes.push_back(event_text(c, ev));
    seg.state_start = state;
    const std::string where = segment_text(c, seg);

    const ReducedNetwork* net = &s.cache_->get(seg.positions);
    for (const auto& p : net->system().problems()) {
      if (p.kind != TopologyProblem::Kind::inductor_open) report_problem(s.applied_, p, where, s.storage_, state, seg.from);
      // The current may stay at zero: then it is held there, else it would have to jump.
      if (std::fabs(state) > 1e-12 * state_scale || (state != 0.0 && state_scale == 0.0))
        report_problem(s.applied_, p, where, s.storage_, state, seg.from);
      seg.mode = PortMode::held_at_zero;
    }
    if (seg.mode == PortMode::held_at_zero) {
      state = 0.0;
      seg.state_start = 0.0;
      net = &s.cache_->get(seg.positions, seg.mode);
      for (const auto& p : net->system().problems()) report_problem(s.applied_, p, where, s.storage_, state, seg.from);
    }
    if (net->rcond() < kSingularRcond) report_singular(c, *net, where);
    seg.rcond = net->rcond();
    seg.solver = net->solver_name();

    if (s.storage_ == kNone || seg.mode == PortMode::held_at_zero) {
      seg.state = constant_wave(seg.from, seg.to, 0.0);
      seg.rate = 0.0;
      seg.tau = s.storage_ == kNone ? kInfinity : 0.0;
      seg.voc_defined = seg.isc_defined = false;
      if (seg.mode == PortMode::held_at_zero) seg.equivalent.rth = kInfinity;
    } else {
      seg.equivalent = storage_equivalent(c, *net, s.storage_);
      seg.rate = seg.equivalent.rate / seams::engine_faults().tau_scale;
      seg.tau = seg.rate == 0.0 ? kInfinity : -1.0 / seg.rate;
      if (std::fabs(seg.tau) < kShortestTau)
        fail(c, el[s.storage_].loc,
             fmt::format("the time constant of {} is {} (R_th = {} with {} = {}), far below anything that can be "
                         "resolved: the circuit is effectively impulsive; give the series path its real "
                         "resistance (wiring, the source's internal resistance, ESR)",
                         segment_text(c, seg), format_si(seg.tau, "s"), format_si(seg.equivalent.rth, "Ω"),
                         el[s.storage_].name,
                         format_si(el[s.storage_].value, el[s.storage_].kind == ElementKind::capacitor ? "F" : "H")));
      seg.voc_defined = !seg.equivalent.voc.empty();
      seg.isc_defined = !seg.equivalent.isc.empty();
      if (seg.voc_defined) seg.voc = s.drive_of(seg.equivalent.voc, seg);
      if (seg.isc_defined) seg.isc = s.drive_of(seg.equivalent.isc, seg);
      std::vector<double> cp = net->coefficients(net->system().port_quantity());
      for (double& v : cp) v /= storage_value;
      seg.state = state_wave(seg.from, seg.to, seg.rate, state, s.drive_of(cp, seg));
      if (seg.unstable())
        s.warnings_.push_back(fmt::format("{} is unstable: its time constant is negative ({}), so the response "
                                          "grows as e^(t/{}); a controlled source supplies more than the network "
                                          "absorbs",
                                          segment_text(c, seg), format_si(seg.tau, "s"), format_si(-seg.tau, "s")));
      if (seg.rcond < 1e-9)
        s.warnings_.push_back(fmt::format("the equations of {} are ill-conditioned (reciprocal condition {:.1e}); "
                                          "expect fewer correct digits than usual",
                                          segment_text(c, seg), seg.rcond));
    }
    state = seg.state.value(seg.to);
    if (!std::isfinite(state))
      fail(c, s.storage_ != kNone ? el[s.storage_].loc : SourceLoc{1, 1},
           fmt::format("the response grows beyond any representable value in {}; shorten the window",
                       segment_text(c, seg)));
    state_scale = std::max(state_scale, std::fabs(state));
    seg.network = net;
    s.segments_.push_back(std::move(seg));
  }

  {
    std::vector<const NodalSystem*> systems;
    for (const auto& seg : s.segments_) systems.push_back(&s.network(seg).system());
    for (auto& w : floating_part_warnings(c, systems, s.storage_)) s.warnings_.push_back(std::move(w));
  }

  // What is reported: the watch list, or the storage element's voltage and current.
  if (!c.watches().empty()) {
    // Each observable once, in the order first watched: a repeat adds nothing to any report,
    // and 50 000 repeats of one name cost gigabytes of identical columns.
    std::unordered_map<std::string, std::size_t> seen;
    std::size_t repeats = 0;
    for (const Observable& o : c.watches()) {
      if (seen.emplace(o.text, s.observables_.size()).second) s.observables_.push_back(o);
      else ++repeats;
    }
    if (repeats > 0)
      s.warnings_.push_back(fmt::format("{} repeated name{} in 'watch' (line {}): each observable is reported once",
                                        repeats, repeats > 1 ? "s" : "", c.watches().front().loc.line));
  } else if (s.storage_ != kNone) {
    for (auto kind : {ObservableKind::element_voltage, ObservableKind::element_current}) {
      Observable o;
      o.kind = kind;
      o.element = s.storage_;
      o.text = el[s.storage_].name + (kind == ObservableKind::element_voltage ? ".v" : ".i");
      s.observables_.push_back(o);
    }
  } else {
    for (NodeId n = 0; n < c.nodes().size() && s.observables_.size() < 8; ++n) {
      if (n == c.ground()) continue;
      Observable o;
      o.kind = ObservableKind::node_voltage;
      o.node_a = n;
      o.text = "@" + c.nodes()[n];
      s.observables_.push_back(o);
    }
  }
  if (s.storage_ == kNone)
    s.warnings_.push_back("the circuit has no capacitor or inductor: it is purely resistive, so every segment is "
                          "its DC/AC steady state and there is no time constant");
  for (auto& w : ideal_break_cautions(s)) s.warnings_.push_back(std::move(w));
  refuse_unrepresentable(s);
  return s;
}

namespace {

// An ideal contact interrupts an inductor's AC current at once, wherever it is in the cycle;
// a real AC contact's arc carries it on to the next current zero, so the voltage spike the
// ideal model gives is an upper bound that a real contact does not reach. Said once per
// opening of a switch that carries AC current through an inductor away from a zero.
std::vector<std::string> ideal_break_cautions(const Solution& s) {
  std::vector<std::string> out;
  const Circuit& c = s.circuit();
  if (s.storage() == kNone || c.element(s.storage()).kind != ElementKind::inductor) return out;
  for (std::size_t k = 1; k < s.segments().size(); ++k) {
    const Segment& before = s.segments()[k - 1];
    for (const ScheduledEvent& ev : s.schedule().segments[k].changes) {
      if (ev.kind != EventKind::switch_opens) continue;
      const Piece i = s.piece(element_observable(c, ev.element, ObservableKind::element_current), before);
      const auto steady = i.f.steady_state();
      if (!steady || steady->phasors.empty()) continue;  // DC or no steady state: not an AC break
      double amplitude = 0.0;
      for (const auto& p : steady->phasors) amplitude += std::abs(p.value);
      const double at_break = i.value(ev.time);
      if (std::fabs(at_break) <= 0.02 * amplitude) continue;  // within 2 % of a zero
      out.push_back(fmt::format(
          "{} opens at {} while carrying {} of AC current (not at a current zero): an ideal contact breaks it at "
          "once, and the inductor's voltage spike that follows is what the ideal model gives; a real AC contact's "
          "arc carries the current to its next zero, so treat that spike as an upper bound",
          c.element(ev.element).name, format_si(ev.time, "s"), format_si(at_break, "A")));
    }
  }
  return out;
}

}  // namespace

namespace {

// Extremes of a list of pieces over [from, to].
Extremes extremes_over(const std::vector<Piece>& pieces, double from, double to) {
  Extremes ex;
  bool first = true;
  for (const auto& p : pieces) {
    double a = std::max(from, p.t0()), b = std::min(to, p.t1());
    if (a > b) continue;
    Extremes e = find_extremes(p, a, b);
    if (first || e.max > ex.max) {
      ex.max = e.max;
      ex.t_max = e.t_max;
    }
    if (first || e.min < ex.min) {
      ex.min = e.min;
      ex.t_min = e.t_min;
    }
    first = false;
  }
  return ex;
}

double lowest_frequency(const Circuit& c) { return slowest_frequency(c); }

double steady_peak(const Drive& d) {
  if (d.phasors.empty()) return std::fabs(d.dc);
  Wave w;
  w.offset = d.dc;
  w.phasors = d.phasors;
  double f0 = d.phasors.front().frequency;
  w.t0 = 0.0;
  w.t1 = 1.0 / f0;
  Extremes e = find_extremes(Piece{w, std::nullopt}, 0.0, w.t1);
  return std::max(std::fabs(e.max), std::fabs(e.min));
}

}  // namespace

Peak find_peak(const Solution& solution, const Observable& obs) {
  Extremes ex = extremes_over(solution.pieces(obs), solution.window().from, solution.window().to);
  if (std::fabs(ex.max) >= std::fabs(ex.min)) return {std::fabs(ex.max), ex.t_max};
  return {std::fabs(ex.min), ex.t_min};
}

Figures compute_figures(const Solution& solution, const Observable& obs) {
  Figures f;
  const Window& win = solution.window();
  std::vector<Piece> pieces = solution.pieces(obs);
  Extremes ex = extremes_over(pieces, win.from, win.to);
  f.max = ex.max;
  f.t_max = ex.t_max;
  f.min = ex.min;
  f.t_min = ex.t_min;
  if (std::fabs(ex.max) >= std::fabs(ex.min)) {
    f.peak = std::fabs(ex.max);
    f.t_peak = ex.t_max;
  } else {
    f.peak = std::fabs(ex.min);
    f.t_peak = ex.t_min;
  }
  f.final_value = pieces.back().value(win.to);
  for (double v : {f.max, f.min, f.final_value})
    if (!std::isfinite(v)) {
      const Circuit& c = solution.circuit();
      SourceLoc loc = obs.loc.line > 0 ? obs.loc
                                       : (solution.storage() != kNone ? c.element(solution.storage()).loc : SourceLoc{1, 1});
      throw InputError(c.diagnostic(loc, fmt::format("'{}' reaches values beyond the range of double precision in "
                                                     "the window; check the element values (a near-zero or "
                                                     "near-infinite resistance, capacitance or inductance)",
                                                     obs.text)));
    }
  if (obs.kind == ObservableKind::element_power) return f;

  const Wave& last = pieces.back().f;
  f.steady = last.steady_state();
  if (f.steady) {
    f.dc = f.steady->dc;
    double f0 = lowest_frequency(solution.circuit());
    if (f0 > 0.0) {
      std::complex<double> p = 0.0;
      for (const auto& ph : f.steady->phasors)
        if (ph.frequency == f0) p = ph.value;
      f.amplitude = std::abs(p);
      if (std::abs(p) > 0.0) f.phase = std::arg(p);
    }
    // Settling: after the last event, y − y_ss = D·e^{a(t − t0)}.
    double d = last.a < 0.0 ? last.transient + last.drift / last.a : (last.a == 0.0 ? 0.0 : last.transient);
    double reference = steady_peak(*f.steady);
    f.steady_peak = reference;
    // A steady state that is zero but for rounding (a capacitor current under DC) would make
    // the 1 % criterion measure noise: such a steady state counts as zero.
    if (reference <= 1e-9 * f.peak) reference = f.peak;
    double threshold = 0.01 * reference;
    if (d == 0.0 || std::fabs(d) <= threshold) {
      f.settling_time = 0.0;
    } else if (last.a < 0.0 && threshold > 0.0) {
      f.settling_time = std::log(std::fabs(d) / threshold) / -last.a;
    }
  }
  return f;
}

namespace {


// An integral of a product overflows long before its factors do (a 1e300 V source): refuse it
// in circuit terms rather than print a number that is not one.
double finite_or_refuse(const Solution& solution, ElementId id, double value, const char* what) {
  if (std::isfinite(value)) return value;
  const Circuit& c = solution.circuit();
  throw InputError(c.diagnostic(c.element(id).loc,
                                fmt::format("the {} of {} over the window is beyond the range of double precision; "
                                            "check the element values (a source or a capacitance, inductance or "
                                            "resistance many decades from any real part)",
                                            what, c.element(id).name)));
}

}  // namespace

// The share of Σ|∫v·i| over the segments below which a net energy is rounding (each segment's
// integral is exact to a few hundred ε of its terms).
constexpr double kEnergyRounding = 1e-10;

double element_energy(const Solution& solution, ElementId id, double* scale) {
  const Circuit& c = solution.circuit();
  auto v = solution.pieces(element_observable(c, id, ObservableKind::element_voltage));
  auto i = solution.pieces(element_observable(c, id, ObservableKind::element_current));
  const Window& win = solution.window();
  double sum = 0.0, magnitude = 0.0;
  for (std::size_t k = 0; k < v.size(); ++k) {
    double a = std::max(win.from, v[k].t0()), b = std::min(win.to, v[k].t1());
    if (a >= b) continue;
    double part = integral_of_product(v[k].f, i[k].f, a, b);
    sum += part;
    magnitude += std::fabs(part);
  }
  if (scale) *scale = finite_or_refuse(solution, id, magnitude, "energy");
  // An element that gives back all it took (an inductor over a full cycle) nets zero: what is
  // left of a sum far below the integrals that made it is rounding, and every path (text, JSON,
  // claims, ratings) must show the same 0 J.
  if (std::fabs(sum) <= kEnergyRounding * magnitude) return 0.0;
  return finite_or_refuse(solution, id, sum, "energy");
}

double element_i2t(const Solution& solution, ElementId id) {
  const Circuit& c = solution.circuit();
  auto i = solution.pieces(element_observable(c, id, ObservableKind::element_current));
  const Window& win = solution.window();
  double sum = 0.0;
  for (const auto& p : i) {
    double a = std::max(win.from, p.t0()), b = std::min(win.to, p.t1());
    if (a < b) sum += integral_of_product(p.f, p.f, a, b);
  }
  return std::max(0.0, finite_or_refuse(solution, id, sum, "I²t"));
}

double element_mean_power(const Solution& solution, ElementId id, int* segment) {
  const Circuit& c = solution.circuit();
  const Window& win = solution.window();
  auto v = solution.pieces(element_observable(c, id, ObservableKind::element_voltage));
  auto i = solution.pieces(element_observable(c, id, ObservableKind::element_current));
  // Sustained dissipation (spec v2, "Ratings"): the largest over the segments of each one's
  // steady-state mean, whatever the window, so that a resistor that dissipates only while a
  // contact is closed is judged by that dissipation, not by the last segment or the window.
  std::optional<double> best;
  int best_segment = 0;
  for (std::size_t k = 0; k < v.size(); ++k) {
    double p = 0.0;
    auto vs = v[k].f.steady_state(), is = i[k].f.steady_state();
    if (vs && is) {
      // Mean of a product of sinusoids: DC·DC + ½·Σ Re(V·conj(I)) at equal frequencies.
      p = vs->dc * is->dc;
      for (const auto& pv : vs->phasors)
        for (const auto& pi : is->phasors)
          if (pv.frequency == pi.frequency) p += 0.5 * (pv.value * std::conj(pi.value)).real();
    } else {
      // No steady state (a ramp, a growing response): the mean over the segment's part of
      // the window, where there is one.
      double a = std::max(win.from, v[k].t0()), b = std::min(win.to, v[k].t1());
      if (!(a < b)) continue;
      p = integral_of_product(v[k].f, i[k].f, a, b) / (b - a);
    }
    if (!best || p > *best) {
      best = p;
      best_segment = static_cast<int>(k + 1);
    }
  }
  if (segment) *segment = best ? best_segment : 0;
  return finite_or_refuse(solution, id, best.value_or(0.0), "mean power");
}

}  // namespace netfold
