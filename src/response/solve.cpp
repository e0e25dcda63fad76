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
#include "response/solve_states.hpp"
#include "response/solve_support.hpp"
#include "response/test_seams.hpp"


namespace netfold {

using namespace detail;

const char* const kHazardCaution =
    "CAUTION: this circuit works above 50 V AC or 120 V DC, where contact can kill. These results are "
    "design estimates: follow local electrical codes and the component datasheets; work on such circuits "
    "is for qualified persons.";


const ReducedNetwork& Solution::network(const Segment& segment) const {
  return segment.network ? *segment.network : cache_->get(segment.positions, segment.mode);
}

Drive Solution::drive_of(const std::vector<double>& c, const Segment& segment) const {
  Drive d;
  const std::uint32_t first = network(segment).system().first_source_input();
  for (std::size_t k = 0; k < sources_.size(); ++k) {
    double coef = c.at(first + k);
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
  if (modal_path()) return StateSolver::piece(*this, form, segment);
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

// The steps of a solve that need the Solution's members (a friend).
class SolveSteps {
 public:
  static void one_state(Solution& s);
  static void finish(Solution& s);
};

Solution solve(const Circuit& c, const SolveOptions& options, std::shared_ptr<NetworkCache> cache) {
  Solution s;
  s.circuit_ = &c;
  s.cache_ = cache ? std::move(cache) : std::make_shared<NetworkCache>(c);
  s.options_ = options;
  const auto& el = c.elements();
  s.storages_ = c.storage_elements();
  s.event_driven_ = has_state_events(c);
  s.storage_ = s.storages_.size() == 1 && !s.event_driven_ ? s.storages_.front() : kNone;
  s.sources_ = independent_sources(c);
  check_value_span(c);

  // The scenario, applied once: every later step reads the effective waveforms and events.
  s.applied_ = apply_scenario(c, seams::faulty_scenario(options.scenario));

  // The window (declared, or the default rule, which needs the last segment's τ), then the
  // schedule over it.
  if (options.window || c.window()) {
    s.window_ = options.window ? *options.window : *c.window();
    s.window_default_ = false;
  } else {
    const std::vector<ScheduledEvent> events = list_events(s.applied_);
    const double last_event = events.empty() ? 0.0 : events.back().time;
    const double states_tau =
        s.modal_path() ? StateSolver::last_slowest_tau(s.applied_, *s.cache_, last_event) : 0.0;
    s.window_ = default_window(s.applied_, *s.cache_, s.storage_, seams::engine_faults().tau_scale, s.warnings_,
                               states_tau);
  }
  s.schedule_ = build_schedule(s.applied_, s.window_);
  const double t_end = s.window_.to;
  s.resolution_ = s.schedule_.resolution;
  check_resolution(c, s.window_, s.resolution_, s.warnings_);
  for (const auto& ev : s.schedule_.ignored_events())
    s.warnings_.push_back(fmt::format("{}'s event at {} is at or after the end of the window ({}); it is ignored",
                                      el[ev.element].name, format_si(ev.time, "s"), format_si(t_end, "s")));

  // The state at t = 0−, then the segments.
  if (s.modal_path()) {
    StateSolver::solve_segments(s);
  } else {
    SolveSteps::one_state(s);
  }
  SolveSteps::finish(s);
  return s;
}

// The first edition's path: one storage element (or none), a Wave per segment.
void SolveSteps::one_state(Solution& s) {
  const Circuit& c = s.circuit();
  const auto& el = c.elements();
  const double storage_value = s.storage_ != kNone ? el[s.storage_].value : 1.0;
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
    Segment seg = scheduled_segment(c, s.schedule_.segments[k], k);
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
}

// Warnings, what is reported, and the range check: the same for one or several states.
void SolveSteps::finish(Solution& s) {
  const Circuit& c = s.circuit();
  const auto& el = c.elements();
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
  } else if (!s.storages_.empty()) {
    for (ElementId id : s.storages_)
      for (auto kind : {ObservableKind::element_voltage, ObservableKind::element_current}) {
        Observable o;
        o.kind = kind;
        o.element = id;
        o.text = el[id].name + (kind == ObservableKind::element_voltage ? ".v" : ".i");
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
  if (s.storages_.empty())
    s.warnings_.push_back("the circuit has no capacitor or inductor: it is purely resistive, so every segment is "
                          "its DC/AC steady state and there is no time constant");
  for (auto& w : ideal_break_cautions(s)) s.warnings_.push_back(std::move(w));
  refuse_unrepresentable(s);
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

}  // namespace netfold
