// State-dependent events (spec v2): diodes that change state and contacts that act at a zero of
// their current or voltage. Each segment is solved in closed form as before; the next event is
// the first root of one of the segment's own closed-form expressions (a conducting diode's
// current falling through zero, a blocking diode's voltage reaching its drop or its breakdown, a
// parting contact's current passing through zero), found by bracketing and refined to the last
// bit of t (response/terms_roots.cpp). After an event, and at t = 0, the diodes take the
// consistent configuration: every conducting diode's current ≥ 0 and every blocking diode's
// voltage within its blocking range, found by flipping the diodes that violate their state and,
// where that cycles, by trying every configuration of up to kMaxEnumerated diodes.
//
// Before t = 0 a circuit with diodes and only DC sources starts from the DC steady state of its
// consistent configuration; with sinusoids, from its periodic steady state: the state x₀ that one
// period of the fundamental (with its diode events) brings back to itself, found by Newton's
// method on x₀ − Φ(x₀) with a difference Jacobian (the monodromy matrix of the piecewise-linear
// march), to 1e-12 relative.

#include <algorithm>
#include <cmath>
#include <functional>
#include <limits>
#include <numbers>
#include <set>

#include <fmt/format.h>

#include "netfold/units.hpp"
#include "response/solve_states.hpp"
#include "response/solve_support.hpp"
#include "response/terms.hpp"

namespace netfold {

using namespace detail;
using response::ModalResponse;
using response::Response;

namespace {

// A quantity within this share of its own size of a threshold is at the threshold: rounding of
// the closed form, not a side of it.
constexpr double kEdge = 1e-9;
// Diodes whose configurations the search may try one by one (2^12 = 4096 configurations).
constexpr std::size_t kMaxEnumerated = 12;
// Diodes whose configurations are all tried at t = 0 to prove the chosen one unique (2^8).
constexpr std::size_t kMaxUniqueChecked = 8;
// Events in a row that do not advance time before the march calls it chattering.
constexpr int kMaxStalledEvents = 64;
// Events in a row, each advancing less than kRapidShare of the span, before the march calls it
// chattering: the diodes would switch back and forth millions of times (a sliding mode).
constexpr int kMaxRapidEvents = 1000;
constexpr double kRapidShare = 1e-7;
// Events in one march before it gives up (a bridge on 50 Hz makes about 200 per second).
constexpr long kMaxEvents = 100'000;
// Events within one period of the steady-state search before it gives up.
constexpr int kMaxPeriodEvents = 10'000;
// Newton iterations of the periodic steady state.
constexpr int kMaxNewton = 40;
// Relative accuracy of the periodic steady state (the spec's 1e-12).
constexpr double kPeriodicTolerance = 1e-12;

std::vector<ElementId> diode_ids(const Circuit& c) {
  std::vector<ElementId> out;
  for (ElementId i = 0; i < c.elements().size(); ++i)
    if (c.element(i).kind == ElementKind::diode) out.push_back(i);
  return out;
}

std::size_t switch_slot(const Circuit& c, ElementId id) {
  std::size_t slot = 0;
  for (ElementId i = 0; i < id; ++i)
    if (c.element(i).kind == ElementKind::switch_) ++slot;
  return slot;
}

// The inputs' values and slopes at t.
struct InputsAt {
  Eigen::VectorXd value, slope;
};

InputsAt inputs_at(const std::vector<Drive>& u, double t, bool dc_only) {
  InputsAt out{Eigen::VectorXd::Zero(static_cast<Eigen::Index>(u.size())),
               Eigen::VectorXd::Zero(static_cast<Eigen::Index>(u.size()))};
  for (std::size_t j = 0; j < u.size(); ++j) {
    const auto k = static_cast<Eigen::Index>(j);
    out.value(k) = u[j].dc;
    if (dc_only) continue;
    for (const auto& p : u[j].phasors) {
      const std::complex<double> w(0.0, 2.0 * std::numbers::pi * p.frequency);
      const std::complex<double> e = p.value * std::exp(w * t);
      out.value(k) += e.real();
      out.slope(k) += (w * e).real();
    }
  }
  return out;
}

// A linear form's value and slope at one instant, with the sizes of their sums (for rounding).
struct Quantity {
  double value = 0.0, slope = 0.0, size = 0.0, slope_size = 0.0;
  bool defined = true;
};

Quantity evaluate(const ReducedNetwork& net, const StateSpace& ss, const LinearForm& form, const Eigen::VectorXd& x,
                  const InputsAt& u) {
  Quantity q;
  if (!form.defined) {
    q.defined = false;
    return q;
  }
  const std::vector<double> coef = net.coefficients(form);
  const Eigen::Index n = x.size();
  const auto first = static_cast<Eigen::Index>(net.system().first_source_input());
  const Eigen::VectorXd xdot = n > 0 ? Eigen::VectorXd(ss.a * x + ss.b * u.value) : Eigen::VectorXd();
  for (Eigen::Index i = 0; i < n; ++i) {
    const double c = coef[static_cast<std::size_t>(i)];
    q.value += c * x(i);
    q.size += std::fabs(c * x(i));
    q.slope += c * xdot(i);
    q.slope_size += std::fabs(c * xdot(i));
  }
  for (Eigen::Index j = 0; j < u.value.size(); ++j) {
    const double c = coef[static_cast<std::size_t>(first + j)];
    q.value += c * u.value(j);
    q.size += std::fabs(c * u.value(j));
    q.slope += c * u.slope(j);
    q.slope_size += std::fabs(c * u.slope(j));
  }
  return q;
}

// What a diode in a state must keep: margin = sign·y − level ≥ 0, y its current or voltage;
// where the margin fails, the state it goes to.
struct Condition {
  bool current = true;
  double sign = 1.0;
  double level = 0.0;
  DiodeState fails_to = DiodeState::blocking;
};

std::vector<Condition> conditions_of(const Element& d, DiodeState state) {
  switch (state) {
    case DiodeState::forward: return {{true, 1.0, 0.0, DiodeState::blocking}};
    case DiodeState::reverse: return {{true, -1.0, 0.0, DiodeState::blocking}};
    case DiodeState::blocking: {
      std::vector<Condition> out{{false, -1.0, -d.forward, DiodeState::forward}};
      if (d.breakdown) out.push_back({false, 1.0, -*d.breakdown, DiodeState::reverse});
      return out;
    }
  }
  return {};
}

EventKind event_kind(DiodeState to) {
  switch (to) {
    case DiodeState::forward: return EventKind::diode_conducts;
    case DiodeState::blocking: return EventKind::diode_blocks;
    case DiodeState::reverse: return EventKind::diode_breaks_down;
  }
  return EventKind::diode_blocks;
}

// The size of a response's parts (for the band that counts as rounding about a level).
double magnitude(const Response& r) {
  double m = std::fabs(r.periodic.dc);
  for (const auto& p : r.periodic.phasors) m += std::abs(p.value);
  for (const auto& t : r.terms) m += std::abs(t.c);
  return m;
}

// The response of sign·form over a segment solved as `modal` in network `net`.
Response form_response(const ReducedNetwork& net, const ModalResponse& modal, const LinearForm& form, double sign) {
  const NodalSystem& sys = net.system();
  const auto n = static_cast<Eigen::Index>(sys.state_count());
  const auto first = sys.first_source_input();
  const auto inputs = sys.input_count() - (sys.test_port_input() == kNone ? 0u : 1u);
  const auto m = static_cast<Eigen::Index>(inputs - first);
  const std::vector<double> coef = net.coefficients(form);
  Eigen::RowVectorXd cx = Eigen::RowVectorXd::Zero(n), du = Eigen::RowVectorXd::Zero(m);
  for (Eigen::Index i = 0; i < n; ++i) cx(i) = sign * coef[static_cast<std::size_t>(i)];
  for (Eigen::Index j = 0; j < m; ++j) du(j) = sign * coef[first + static_cast<std::size_t>(j)];
  return modal.output(cx, du);
}

// The first time in (from, to) at which a diode leaves its state.
std::optional<FoundEvent> first_diode_event(const Circuit& c, const ReducedNetwork& net, const ModalResponse& modal,
                                            const SwitchPositions& p, double from, double to) {
  std::optional<FoundEvent> best;
  const std::vector<ElementId> ids = diode_ids(c);
  const NodalSystem& sys = net.system();
  for (std::size_t slot = 0; slot < ids.size(); ++slot) {
    const Element& d = c.element(ids[slot]);
    for (const Condition& cond : conditions_of(d, p.diodes[slot])) {
      const LinearForm form = cond.current ? sys.element_current(ids[slot]) : sys.element_voltage(ids[slot]);
      if (!form.defined) continue;  // judged when the configuration was chosen
      const Response r = form_response(net, modal, form, cond.sign);
      const double tolerance = kEdge * (magnitude(r) + std::fabs(cond.level));
      const double limit = best ? best->event.time : to;
      const auto t = response::first_fall(r, cond.level, from, limit, tolerance);
      if (!t || *t >= limit) continue;
      FoundEvent found;
      found.event = ScheduledEvent{*t, ids[slot], event_kind(cond.fails_to), 0.0};
      found.diode_slot = slot;
      found.diode_after = cond.fails_to;
      best = found;
    }
  }
  return best;
}

// The network of a configuration for judging it: inductors whose only path is open held at
// 0 A where they carry none; nullptr when it has any other structural problem or is singular.
const ReducedNetwork* judged_network(NetworkCache& cache, const std::vector<ElementId>& states,
                                     const SwitchPositions& p, const Eigen::VectorXd& x, double scale) {
  std::vector<PortMode> modes(states.size(), PortMode::port);
  const ReducedNetwork* net = &cache.get(p, modes);
  bool held = false;
  if (x.size() > 0) scale = std::max(scale, x.cwiseAbs().maxCoeff());
  for (const auto& problem : net->system().problems()) {
    if (problem.kind != TopologyProblem::Kind::inductor_open || problem.elements.size() != 1) return nullptr;
    const auto i = static_cast<std::size_t>(std::find(states.begin(), states.end(), problem.elements.front()) -
                                            states.begin());
    if (std::fabs(x(static_cast<Eigen::Index>(i))) > 1e-12 * scale) return nullptr;
    modes[i] = PortMode::held_at_zero;
    held = true;
  }
  if (held) {
    net = &cache.get(p, modes);
    if (!net->system().problems().empty()) return nullptr;
  }
  if (net->rcond() < kSingularRcond) return nullptr;
  return net;
}

// Whether the floating part of the circuit at one of a diode's ends holds nothing that could
// drive a current: no source, controlled source or storage element touches it.
bool inert_floating_part(const NodalSystem& sys, const Element& diode) {
  const Circuit& c = sys.circuit();
  const NodeId node = sys.node_floating(diode.pos) ? diode.pos : diode.neg;
  const auto part = sys.component_of(node);
  for (const Element& e : c.elements()) {
    const bool touches = (e.pos != c.ground() && sys.component_of(e.pos) == part && sys.node_floating(e.pos)) ||
                         (e.neg != c.ground() && sys.component_of(e.neg) == part && sys.node_floating(e.neg));
    if (!touches) continue;
    switch (e.kind) {
      case ElementKind::resistor:
      case ElementKind::switch_:
      case ElementKind::diode: break;
      case ElementKind::capacitor:
      case ElementKind::inductor:
      case ElementKind::voltage_source:
      case ElementKind::current_source:
      case ElementKind::vcvs:
      case ElementKind::vccs:
      case ElementKind::ccvs:
      case ElementKind::cccs: return false;
    }
  }
  return true;
}

// How a configuration fares at one instant.
struct Verdict {
  bool valid = true;                   // its network has no structural problem
  std::vector<std::size_t> violated;   // diodes (slots) out of their state
  std::vector<DiodeState> to;          // where each goes
  std::vector<std::size_t> floating;   // blocking diodes whose voltage the network leaves undefined
  bool strict = true;                  // every margin clear of its threshold (none decided by a slope)
};

// A candidate's states: the fixed state at an event, or the steady state of the candidate
// before t = 0 (nothing when it has none).
using StatesOf = std::function<std::optional<Eigen::VectorXd>(const ReducedNetwork&, const StateSpace&)>;

class ConfigurationSearch {
 public:
  // `scale`: the largest state so far, below whose 1e-12 share an inductor counts as carrying
  // nothing (it may then be held at zero where its path is open).
  ConfigurationSearch(const Solution& s, NetworkCache& cache, double t, bool before_zero, bool dc_only,
                      StatesOf states_of, double scale = 0.0)
      : s_(s), cache_(cache), t_(t), dc_only_(dc_only), states_of_(std::move(states_of)), scale_(scale),
        ids_(diode_ids(s.circuit())), drives_(input_drives(s, before_zero, t)) {}

  // The consistent configuration nearest to `guess` (see the file comment), and its states.
  /// Makes find() prove its answer unique (at t = 0: see require_unique).
  void check_unique() { check_unique_ = true; }

  std::pair<SwitchPositions, Eigen::VectorXd> find(SwitchPositions guess, const std::string& where) {
    where_ = where;
    std::set<std::vector<DiodeState>> seen;
    const SwitchPositions start = guess;
    SwitchPositions p = std::move(guess);
    for (std::size_t step = 0; step < 2 * ids_.size() + 4; ++step) {
      Eigen::VectorXd x;
      Verdict v = judge(p, x);
      if (v.valid && v.violated.empty()) {
        if (v.strict && check_unique_) require_unique(p, where);
        return {p, x};
      }
      remember(v);
      if (!v.valid || !seen.insert(p.diodes).second) break;
      for (std::size_t k = 0; k < v.violated.size(); ++k) p.diodes[v.violated[k]] = v.to[k];
    }
    if (auto found = enumerate(p)) return *found;
    // Every candidate failed for a reason of its own structure (a loop of capacitors and
    // sources, a singular network) that does not depend on the diodes: the segment's own
    // checks name it in circuit terms.
    if (!any_valid_) return {start, Eigen::VectorXd()};
    fail_inconsistent(where);
  }

 private:
  const Solution& s_;
  NetworkCache& cache_;
  double t_;
  bool dc_only_;
  StatesOf states_of_;
  double scale_ = 0.0;
  std::vector<ElementId> ids_;
  std::vector<Drive> drives_;
  std::set<std::size_t> ever_violated_, ever_floating_;
  bool any_valid_ = false;
  bool check_unique_ = false;
  std::string where_;

  void remember(const Verdict& v) {
    any_valid_ |= v.valid;
    ever_violated_.insert(v.violated.begin(), v.violated.end());
    ever_floating_.insert(v.floating.begin(), v.floating.end());
  }

  Verdict judge(const SwitchPositions& p, Eigen::VectorXd& x) {
    Verdict v;
    const std::vector<ElementId>& states = s_.storage_elements();
    Eigen::VectorXd x_probe = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(states.size()));
    const ReducedNetwork* net = judged_network(cache_, states, p, x_probe, scale_);
    if (!net) {
      v.valid = false;
      return v;
    }
    const StateSpace ss = state_space(s_.circuit(), *net);
    auto xs = states_of_(*net, ss);
    if (!xs) {
      v.valid = false;
      return v;
    }
    x = *xs;
    if (judged_network(cache_, states, p, x, scale_) != net) {
      v.valid = false;  // an inductor held at zero here carries current: not this configuration
      return v;
    }
    const InputsAt u = inputs_at(drives_, t_, dc_only_);
    const NodalSystem& sys = net->system();
    for (std::size_t slot = 0; slot < ids_.size(); ++slot) {
      const Element& d = s_.circuit().element(ids_[slot]);
      for (const Condition& cond : conditions_of(d, p.diodes[slot])) {
        const LinearForm form = cond.current ? sys.element_current(ids_[slot]) : sys.element_voltage(ids_[slot]);
        const Quantity q = evaluate(*net, ss, form, x, u);
        if (!q.defined) {
          // A blocking diode with an open `off` on a floating part: harmless where that part holds
          // nothing that could drive a current through the diode (only resistors and open
          // contacts: the diode cannot conduct); otherwise the spec's error, at once.
          if (inert_floating_part(sys, d)) break;
          v.floating.push_back(slot);
          ever_floating_.insert(slot);
          fail_inconsistent(where_);
        }
        const double margin = cond.sign * q.value - cond.level;
        const double tolerance = kEdge * (q.size + std::fabs(cond.level));
        const double slope = dc_only_ ? 0.0 : cond.sign * q.slope;
        const bool holds = margin > tolerance || (margin >= -tolerance && slope >= -kEdge * q.slope_size);
        v.strict = v.strict && margin > tolerance;
        if (!holds) {
          v.violated.push_back(slot);
          v.to.push_back(cond.fails_to);
          break;
        }
      }
    }
    return v;
  }

  // At t = 0 (where no earlier configuration guides the choice) a second configuration that is
  // consistent with every margin clear of its threshold is an ambiguity the spec makes an error;
  // configurations that are consistent only at a threshold (a circuit with nothing driving its
  // diodes) do not count. Checked for up to kMaxUniqueChecked diodes.
  void require_unique(const SwitchPositions& chosen, const std::string& where) {
    if (ids_.size() > kMaxUniqueChecked) return;
    for (const auto& states : all_configurations()) {
      if (states == chosen.diodes) continue;
      SwitchPositions q = chosen;
      q.diodes = states;
      Eigen::VectorXd x;
      const Verdict v = judge(q, x);
      if (!(v.valid && v.violated.empty() && v.strict)) continue;
      std::vector<ElementId> differ;
      for (std::size_t k = 0; k < ids_.size(); ++k)
        if (states[k] != chosen.diodes[k]) differ.push_back(ids_[k]);
      const Circuit& c = s_.circuit();
      fail(c, c.element(differ.front()).loc,
           fmt::format("two states of the diodes are consistent {}: {} may conduct or block, and nothing in the "
                       "circuit decides which; give the diodes their 'on' resistance and forward drop, or the "
                       "resistance that is really in series with them",
                       where, names_of(c, differ)));
    }
  }

  // Every configuration of the diodes (each blocking or conducting, and in breakdown where it
  // has one), or none past 2^14 of them.
  std::vector<std::vector<DiodeState>> all_configurations() const {
    const std::size_t d = ids_.size();
    std::vector<std::vector<DiodeState>> choices(d);
    std::size_t total = 1;
    for (std::size_t k = 0; k < d; ++k) {
      choices[k] = {DiodeState::blocking, DiodeState::forward};
      if (s_.circuit().element(ids_[k]).breakdown) choices[k].push_back(DiodeState::reverse);
      total *= choices[k].size();
      if (total > (std::size_t{1} << 14)) return {};
    }
    std::vector<std::vector<DiodeState>> all;
    all.reserve(total);
    for (std::size_t code = 0; code < total; ++code) {
      std::vector<DiodeState> states(d);
      std::size_t rest = code;
      for (std::size_t k = 0; k < d; ++k) {
        states[k] = choices[k][rest % choices[k].size()];
        rest /= choices[k].size();
      }
      all.push_back(std::move(states));
    }
    return all;
  }

  // Every configuration of up to kMaxEnumerated diodes, fewest conducting first.
  std::optional<std::pair<SwitchPositions, Eigen::VectorXd>> enumerate(SwitchPositions p) {
    if (ids_.size() > kMaxEnumerated) return std::nullopt;
    std::vector<std::vector<DiodeState>> all = all_configurations();
    auto conducting = [](const std::vector<DiodeState>& v) {
      return std::count_if(v.begin(), v.end(), [](DiodeState s) { return s != DiodeState::blocking; });
    };
    std::stable_sort(all.begin(), all.end(),
                     [&](const auto& a, const auto& b) { return conducting(a) < conducting(b); });
    for (auto& states : all) {
      p.diodes = std::move(states);
      Eigen::VectorXd x;
      Verdict v = judge(p, x);
      if (v.valid && v.violated.empty()) {
        if (v.strict && check_unique_) require_unique(p, where_);
        return std::make_pair(p, x);
      }
      remember(v);
    }
    return std::nullopt;
  }

  [[noreturn]] void fail_inconsistent(const std::string& where) {
    const Circuit& c = s_.circuit();
    std::vector<ElementId> named;
    const auto& which = ever_floating_.empty() ? ever_violated_ : ever_floating_;
    for (std::size_t slot : which) named.push_back(ids_[slot]);
    if (named.empty()) named = ids_;
    if (!ever_floating_.empty())
      fail(c, c.element(named.front()).loc,
           fmt::format("{} block with no 'off' resistance {} and leave part of the circuit floating, so whether {} "
                       "should conduct cannot be judged; give {} an 'off' resistance (the leakage, for example "
                       "off 10 Mohm)",
                       names_of(c, named), where, named.size() > 1 ? "they" : "it",
                       named.size() > 1 ? "them" : "it"));
    if (ids_.size() > kMaxEnumerated)
      fail(c, c.element(named.front()).loc,
           fmt::format("no consistent state of the diodes was found {} by flipping {} (a circuit with more than {} "
                       "diodes is not searched exhaustively); check the diodes' orientation, or give them 'on' "
                       "and 'off' resistances",
                       where, names_of(c, named), kMaxEnumerated));
    fail(c, c.element(named.front()).loc,
         fmt::format("no state of the diodes is consistent {}: with every choice of which of {} conduct, a conducting "
                     "diode's current would be negative or a blocking diode's voltage beyond its drop or "
                     "breakdown; check their orientation and drops, or give them 'on' and 'off' resistances",
                     where, names_of(c, named)));
  }
};

// Is every sinusoid a whole multiple of the lowest frequency? Returns that period (0 for DC).
double fundamental_period(const Solution& s, const std::vector<Drive>& u) {
  double f0 = 0.0;
  for (const auto& d : u)
    for (const auto& p : d.phasors)
      if (std::abs(p.value) > 0.0 && (f0 == 0.0 || p.frequency < f0)) f0 = p.frequency;
  if (f0 == 0.0) return 0.0;
  for (const auto& d : u)
    for (const auto& p : d.phasors) {
      const double ratio = p.frequency / f0;
      if (std::abs(p.value) > 0.0 && std::fabs(ratio - std::round(ratio)) > 1e-9 * ratio)
        fail(s.circuit(), s.circuit().element(s.sources().front()).loc,
             fmt::format("the sources' frequencies {} and {} are not whole multiples of one fundamental, so a circuit "
                         "with diodes has no periodic steady state before t = 0; give every storage element an "
                         "'initial' value",
                         format_si(f0, "Hz"), format_si(p.frequency, "Hz")));
    }
  return 1.0 / f0;
}

}  // namespace

void Chatter::count(const Circuit& c, const ScheduledEvent& event, double from) {
  auto unique_ids = [](std::vector<ElementId> ids) {
    std::sort(ids.begin(), ids.end());
    ids.erase(std::unique(ids.begin(), ids.end()), ids.end());
    return ids;
  };
  if (++total_ > kMaxEvents)
    fail(c, c.element(event.element).loc,
         fmt::format("the diodes and contacts change state more than {} times in {} (the last at {}); netfold does "
                     "not follow so many events: shorten the window",
                     kMaxEvents, format_si(span_, "s"), format_si(event.time, "s")));
  const double advance = event.time - from;
  if (advance < kRapidShare * span_) {
    rapid_elements_.push_back(event.element);
    if (++rapid_ >= kMaxRapidEvents) {
      const std::vector<ElementId> ids = unique_ids(rapid_elements_);
      fail(c, c.element(ids.front()).loc,
           fmt::format("{} change state {} times in a row before {}, each time after less than {} (chattering): "
                       "the circuit switches them back and forth faster than it can be followed; give the diodes an "
                       "'on' resistance or a forward drop, or add the resistance that is really in series with them",
                       names_of(c, ids), kMaxRapidEvents, format_si(event.time, "s"),
                       format_si(kRapidShare * span_, "s")));
    }
  } else {
    rapid_ = 0;
    rapid_elements_.clear();
  }
  // A segment shorter than this share of its time is no advance (a few roundings of t).
  const double slack = 1e-12 * std::max(std::fabs(event.time), 1e-9);
  if (advance > slack) {
    elements_.clear();
    return;
  }
  elements_.push_back(event.element);
  if (static_cast<int>(elements_.size()) < kMaxStalledEvents) return;
  const std::vector<ElementId> ids = unique_ids(elements_);
  fail(c, c.element(ids.front()).loc,
       fmt::format("{} change state {} times at {} without time advancing (chattering): the circuit switches them "
                   "back and forth at one instant; give the diodes an 'on' resistance or a forward drop, or add the "
                   "resistance that is really in series with them",
                   names_of(c, ids), kMaxStalledEvents, format_si(event.time, "s")));
}

ElementId StateSolver::anchor_element(const Solution& s) {
  if (!s.storage_elements().empty()) return s.storage_elements().front();
  const auto ids = diode_ids(s.circuit());
  return ids.empty() ? 0 : ids.front();
}

std::vector<ArmedEvent> StateSolver::armed_events(const AppliedScenario& applied) {
  std::vector<ArmedEvent> out;
  const Circuit& c = applied.circuit();
  for (ElementId i = 0; i < c.elements().size(); ++i)
    if (c.element(i).kind == ElementKind::switch_)
      for (const auto& ev : applied.events(i))
        if (ev.trigger != EventTrigger::time) out.push_back({i, ev.time, ev.closes, false});
  std::stable_sort(out.begin(), out.end(), [](const ArmedEvent& a, const ArmedEvent& b) { return a.after < b.after; });
  return out;
}

void StateSolver::settle_diodes(Solution& s, Segment& seg, const Eigen::VectorXd& x, double scale) {
  const Circuit& c = s.circuit();
  const std::vector<DiodeState> before = seg.positions.diodes;
  ConfigurationSearch search(s, *s.cache_, seg.from, seg.number == 0, false,
                             [&](const ReducedNetwork&, const StateSpace&) { return std::optional(x); }, scale);
  if (seg.from == 0.0) search.check_unique();
  seg.positions = search.find(seg.positions, fmt::format("at {}", format_si(seg.from, "s"))).first;
  const std::vector<ElementId> ids = diode_ids(c);
  for (std::size_t k = 0; k < ids.size(); ++k) {
    if (seg.positions.diodes[k] == before[k]) continue;
    const ScheduledEvent event{seg.from, ids[k], event_kind(seg.positions.diodes[k]), 0.0};
    const std::string text = event_text(c, event);
    if (std::find(seg.changes.begin(), seg.changes.end(), text) != seg.changes.end()) continue;
    seg.changes.push_back(text);
    seg.events.push_back(event);
  }
}

std::optional<FoundEvent> StateSolver::next_state_event(const Solution& s, const Segment& seg,
                                                        const std::vector<ArmedEvent>& armed) {
  const Circuit& c = s.circuit();
  const ReducedNetwork& net = *seg.network;
  std::optional<FoundEvent> best = first_diode_event(c, net, *seg.modal, seg.positions, seg.from, seg.to);
  for (std::size_t k = 0; k < armed.size(); ++k) {
    const ArmedEvent& a = armed[k];
    if (a.done || !(a.after < seg.to)) continue;
    const std::size_t slot = switch_slot(c, a.element);
    if (seg.positions.closed[slot] == a.closes) continue;  // already where it would go
    const double from = std::max(a.after, seg.from);
    const LinearForm form =
        a.closes ? net.system().element_voltage(a.element) : net.system().element_current(a.element);
    const Response r = form_response(net, *seg.modal, form, 1.0);
    const double tolerance = kEdge * magnitude(r);
    const double now = r.value(from);
    std::optional<double> t;
    if (std::fabs(now) <= tolerance) {
      t = from;
    } else {
      const Response toward = form_response(net, *seg.modal, form, now > 0.0 ? 1.0 : -1.0);
      t = response::first_fall(toward, 0.0, from, seg.to, tolerance);
    }
    if (!t || *t >= seg.to || (best && *t >= best->event.time)) continue;
    FoundEvent found;
    found.event = ScheduledEvent{*t, a.element, a.closes ? EventKind::switch_closes : EventKind::switch_opens, 0.0};
    found.switch_slot = slot;
    found.armed = k;
    best = found;
  }
  return best;
}

DiodeStart StateSolver::diode_start(Solution& s, bool all_given) {
  const Circuit& c = s.circuit();
  const std::vector<ElementId>& states = s.storages_;
  const auto n = static_cast<Eigen::Index>(states.size());
  const SwitchPositions pre = positions_before_zero(c);
  const std::vector<Drive> drives = input_drives(s, true, 0.0);
  DiodeStart out;
  out.steady = SteadyStart{Eigen::VectorXd::Zero(n), std::vector<bool>(states.size(), false), {}, true};
  const std::string where = "before t = 0";

  if (all_given) {
    Eigen::VectorXd x(n);
    for (std::size_t k = 0; k < states.size(); ++k) {
      const ElementId id = states[k];
      x(static_cast<Eigen::Index>(k)) = s.applied_.initial_state(id).value_or(c.element(id).initial.value_or(0.0));
    }
    ConfigurationSearch search(s, *s.cache_, 0.0, true, false,
                               [&](const ReducedNetwork&, const StateSpace&) { return std::optional(x); });
    search.check_unique();
    out.diodes = search.find(pre, where).first.diodes;
    out.steady.x = x;
    return out;
  }

  // The steady state of a candidate configuration (DC and phasors at t = 0).
  auto steady_of = [&](const ReducedNetwork&, const StateSpace& ss) -> std::optional<Eigen::VectorXd> {
    std::vector<NaturalMode> modes;
    for (const auto& m : response::modes_of(ss.a)) modes.push_back(natural_mode(m));
    SteadyStart st = steady_start(ss, drives, modes);
    if (!st.exists) return std::nullopt;
    return st.x;
  };
  const double period = fundamental_period(s, drives);
  if (period == 0.0) {
    ConfigurationSearch search(s, *s.cache_, 0.0, true, true, steady_of);
    search.check_unique();
    auto [p, x] = search.find(pre, where);
    out.diodes = p.diodes;
    out.steady.x = x;
    return out;
  }

  // The march over one period [−T, 0] from x₀, with its diode events.
  SwitchPositions last = pre;
  auto march = [&](const Eigen::VectorXd& x0) {
    Eigen::VectorXd x = x0;
    double t = -period;
    const double scale = x.size() > 0 ? x.cwiseAbs().maxCoeff() : 0.0;
    ConfigurationSearch start(s, *s.cache_, t, true, false,
                              [&](const ReducedNetwork&, const StateSpace&) { return std::optional(x); }, scale);
    SwitchPositions p = start.find(last, where).first;
    Chatter chatter(period);
    for (int events = 0;; ++events) {
      if (events > kMaxPeriodEvents)
        fail(c, c.element(anchor_element(s)).loc,
             fmt::format("the diodes change state more than {} times in one period before t = 0; the periodic "
                         "steady state is not searched further; give every storage element an 'initial' value",
                         kMaxPeriodEvents));
      const ReducedNetwork* net = judged_network(*s.cache_, states, p, x, scale);
      if (!net)
        fail(c, c.element(anchor_element(s)).loc,
             "the network before t = 0 has, in one of its diode configurations, a part the states cannot settle in "
             "(an open path or a loop); give every storage element an 'initial' value");
      const StateSpace ss = state_space(c, *net);
      const ModalResponse modal = response::solve_modal(ss.a, ss.b, x, drives, t, 0.0);
      const auto found = first_diode_event(c, *net, modal, p, t, 0.0);
      if (!found) {
        last = p;
        return Eigen::VectorXd(modal.value(0.0));
      }
      chatter.count(c, found->event, t);
      x = modal.value(found->event.time);
      t = found->event.time;
      p.diodes[found->diode_slot] = found->diode_after;
      ConfigurationSearch next(s, *s.cache_, t, true, false,
                               [&](const ReducedNetwork&, const StateSpace&) { return std::optional(x); }, scale);
      p = next.find(p, fmt::format("at {} before t = 0", format_si(t, "s"))).first;
    }
  };

  // Newton on F(x₀) = Φ(x₀) − x₀ from the steady state of the first consistent configuration.
  ConfigurationSearch guess(s, *s.cache_, -period, true, true, steady_of);
  auto [p0, x0] = guess.find(pre, where);
  last = p0;
  Eigen::VectorXd x = x0;
  bool converged = false;
  for (int iter = 0; iter < kMaxNewton && !converged; ++iter) {
    const Eigen::VectorXd fx = march(x) - x;
    const double size = std::max(x.cwiseAbs().maxCoeff(), fx.cwiseAbs().maxCoeff());
    if (fx.cwiseAbs().maxCoeff() <= kPeriodicTolerance * size) {
      converged = true;
      break;
    }
    Eigen::MatrixXd jac(n, n);
    for (Eigen::Index j = 0; j < n; ++j) {
      Eigen::VectorXd xp = x;
      // A step far above the march's rounding, small against the state (Φ is smooth between
      // changes of the conduction pattern).
      const double h = 1e-7 * std::max({std::fabs(x(j)), size, std::numeric_limits<double>::min()});
      xp(j) += h;
      jac.col(j) = (march(xp) - xp - fx) / h;
    }
    Eigen::CompleteOrthogonalDecomposition<Eigen::MatrixXd> cod(jac);
    x -= cod.solve(fx);
  }
  if (!converged)
    fail(c, c.element(anchor_element(s)).loc,
         fmt::format("the periodic steady state before t = 0 was not found to 1e-12 in {} iterations (the diodes' "
                     "conduction does not settle to one pattern per period); give every storage element an "
                     "'initial' value",
                     kMaxNewton));
  march(x);  // the configuration at t = 0−
  out.diodes = last.diodes;
  out.steady.x = x;
  return out;
}

}  // namespace netfold
