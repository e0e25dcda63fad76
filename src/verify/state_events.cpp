// State-dependent events on the numerical path (state_events.hpp).
//
// Root functions, per configuration (each g must stay ≥ 0; CVODE watches its falls through 0):
//   a conducting diode: its current i;  in reverse breakdown: −i;
//   a blocking diode: forward − v, and with a breakdown B also v + B;
//   an armed contact (after its time T, not yet where it goes): its current (opening) or its
//   voltage (closing), watched for a zero either way.
// At a root the fired diodes take the state they fail to, a fired contact its new position, and
// the configuration search (settle) makes the rest consistent: it judges each diode's margin in
// the candidate configuration at the event's states — a margin within a rounding band of zero
// holds when its slope (from the states' rates and the sinusoids' slopes, by the same nodal
// solve) does not fall — flips every diode that violates, and where that cycles tries the
// configurations one by one, fewest conducting first (up to kMaxEnumerated diodes). Events that
// do not advance time, kMaxStalled in a row, are chattering: the run fails naming the elements.
#include "verify/state_events.hpp"

#include <algorithm>
#include <cmath>
#include <set>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "netfold/units.hpp"

namespace netfold::integration {

namespace {

// A margin within this share of the size of its terms is at its threshold.
constexpr double kEdge = 1e-9;
constexpr std::size_t kMaxEnumerated = 12;
// ... and at most this many configurations of them (2^14).
constexpr std::size_t kMaxConfigurations = std::size_t{1} << 14;
constexpr int kMaxStalled = 64;

struct Condition {
  bool current = true;
  double sign = 1.0;
  double level = 0.0;  // volts, unscaled
  DiodeState to = DiodeState::blocking;
};

// What diode d in `state` must keep: sign·y − level ≥ 0.
std::vector<Condition> conditions(const Element& d, DiodeState state) {
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

EventKind kind_of(DiodeState to) {
  switch (to) {
    case DiodeState::forward: return EventKind::diode_conducts;
    case DiodeState::blocking: return EventKind::diode_blocks;
    case DiodeState::reverse: return EventKind::diode_breaks_down;
  }
  return EventKind::diode_blocks;
}

// Σ|terms| of a form at (x, u): the size its rounding is relative to.
double size_of(const LinearForm& form, const Eigen::VectorXd& x, const Eigen::VectorXd& u) {
  double s = 0.0;
  for (auto [i, c] : form.unknowns) s += std::fabs(c * x[static_cast<Eigen::Index>(i)]);
  for (auto [j, c] : form.inputs) s += std::fabs(c * u[static_cast<Eigen::Index>(j)]);
  return s;
}

std::string names(const Circuit& c, const std::vector<ElementId>& ids) {
  std::vector<std::string> n;
  for (ElementId id : ids) n.push_back(c.element(id).name);
  return fmt::format("{}", fmt::join(n, ", "));
}

}  // namespace

std::vector<ElementId> diode_elements(const Circuit& circuit) {
  std::vector<ElementId> out;
  for (ElementId i = 0; i < circuit.elements().size(); ++i)
    if (circuit.element(i).kind == ElementKind::diode) out.push_back(i);
  return out;
}

bool has_state_events(const AppliedScenario& applied) {
  const Circuit& c = applied.circuit();
  for (ElementId i = 0; i < c.elements().size(); ++i) {
    if (c.element(i).kind == ElementKind::diode) return true;
    if (c.element(i).kind == ElementKind::switch_)
      for (const auto& ev : applied.events(i))
        if (ev.trigger != EventTrigger::time) return true;
  }
  return false;
}

EventMarch::EventMarch(const AppliedScenario& applied, Configurations& configs,
                       const std::vector<SourceSignal>& signals, double unit, Integrator& cv, double rtol,
                       Eigen::VectorXd atol, double hmax)
    : applied_(applied),
      circuit_(applied.circuit()),
      configs_(configs),
      signals_(signals),
      unit_(unit),
      cv_(cv),
      rtol_(rtol),
      atol_(std::move(atol)),
      hmax_(hmax),
      diodes_(diode_elements(applied.circuit())) {
  std::size_t slot = 0;
  for (ElementId i = 0; i < circuit_.elements().size(); ++i) {
    if (circuit_.element(i).kind != ElementKind::switch_) continue;
    for (const auto& ev : applied.events(i))
      if (ev.trigger != EventTrigger::time) contacts_.push_back({i, slot, ev.time, ev.closes});
    ++slot;
  }
  carried_.assign(slot, -1);
}

const Configuration& EventMarch::configuration(const SwitchPositions& p, const std::string& where) {
  std::string why;
  const auto modes = configs_.modes_for(p, why);
  if (!modes) throw MarchError(fmt::format("{} in {}", why, where));
  const Configuration& cfg = configs_.get(p, *modes, where);
  if (std::find(used.begin(), used.end(), &cfg) == used.end()) used.push_back(&cfg);
  return cfg;
}

void EventMarch::carry_contacts(const ScheduledSegment& seg, SwitchPositions& p) {
  // A timed event of a contact ends what its action at a zero left it in (the schedule's
  // position holds from then on).
  for (const auto& ev : seg.changes)
    if (ev.kind == EventKind::switch_closes || ev.kind == EventKind::switch_opens)
      for (const auto& a : contacts_)
        if (a.element == ev.element) carried_[a.slot] = -1;
  p.closed = seg.positions.closed;
  for (std::size_t slot = 0; slot < carried_.size(); ++slot)
    if (carried_[slot] >= 0) p.closed[slot] = carried_[slot] == 1;
}

std::optional<EventMarch::Violations> EventMarch::judge(const SwitchPositions& q, const Judging& how,
                                                        Eigen::VectorXd& z) {
  std::string why;
  const auto modes = configs_.modes_for(q, why);
  const Configuration* cfg = modes ? configs_.find(q, *modes, why) : nullptr;
  if (!cfg) return std::nullopt;
  const auto xs0 = how.states_of(*cfg);
  if (!xs0) return std::nullopt;
  z = *xs0;
  for (std::size_t k = 0; k < cfg->modes.size(); ++k)
    if (cfg->modes[k] == PortMode::held_at_zero) {
      // Held at zero only where it carries (next to) nothing — nothing beside the states' own
      // scale, as at the root of a diode's current in series with it: else this is not its
      // configuration.
      const double own = k < scale_.size() ? scale_[k] : 0.0;
      const double size = std::max({z.cwiseAbs().maxCoeff(), own, 1e-300});
      if (std::fabs(z[static_cast<Eigen::Index>(k)]) > 1e-9 * size) return std::nullopt;
      z[static_cast<Eigen::Index>(k)] = 0.0;
    }
  StateEquation eq(*cfg, signals_, Forcing{*how.levels, !how.dc, {}, unit_});
  const Eigen::VectorXd u = eq.inputs(how.t, z.data());
  const Eigen::VectorXd xs = cfg->unknowns(u);
  Eigen::VectorXd du, dxs;
  if (!how.dc) {
    du = eq.input_slopes(how.t, z.data());
    dxs = cfg->unknowns(du);
  }
  Violations bad;
  for (std::size_t slot = 0; slot < diodes_.size(); ++slot) {
    const Element& d = circuit_.element(diodes_[slot]);
    for (const Condition& cond : conditions(d, q.diodes[slot])) {
      const LinearForm form =
          cond.current ? cfg->system.element_current(diodes_[slot]) : cfg->system.element_voltage(diodes_[slot]);
      if (!form.defined) {  // a part left floating by blocking diodes: try it conducting
        bad.emplace_back(slot, DiodeState::forward);
        break;
      }
      const double level = cond.level * unit_;
      const double margin = cond.sign * evaluate(form, xs, u) - level;
      const double tol = kEdge * (size_of(form, xs, u) + std::fabs(level));
      bool holds = margin > tol;
      if (!holds && margin >= -tol)
        holds = how.dc || cond.sign * evaluate(form, dxs, du) >= -kEdge * size_of(form, dxs, du);
      if (!holds) {
        bad.emplace_back(slot, cond.to);
        break;
      }
    }
  }
  return bad;
}

std::vector<std::vector<DiodeState>> EventMarch::every_configuration() const {
  std::vector<std::vector<DiodeState>> all{{}};
  if (diodes_.size() > kMaxEnumerated) return {};
  for (ElementId id : diodes_) {
    std::vector<std::vector<DiodeState>> next;
    for (const auto& a : all)
      for (DiodeState s : {DiodeState::blocking, DiodeState::forward, DiodeState::reverse}) {
        if (s == DiodeState::reverse && !circuit_.element(id).breakdown) continue;
        next.push_back(a);
        next.back().push_back(s);
      }
    if (next.size() > kMaxConfigurations) return {};
    all = std::move(next);
  }
  auto blocking = [](const std::vector<DiodeState>& v) { return std::count(v.begin(), v.end(), DiodeState::blocking); };
  std::stable_sort(all.begin(), all.end(), [&](const auto& a, const auto& b) { return blocking(a) > blocking(b); });
  return all;
}

std::pair<SwitchPositions, Eigen::VectorXd> EventMarch::settle(SwitchPositions p, double t,
                                                               const std::vector<double>& levels, bool dc,
                                                               const StatesOf& states_of, const std::string& where) {
  const Judging how{t, &levels, dc, states_of};
  std::set<ElementId> violators;
  std::set<std::vector<DiodeState>> seen;
  for (std::size_t step = 0; step < 2 * diodes_.size() + 4; ++step) {
    Eigen::VectorXd z;
    const auto bad = judge(p, how, z);
    if (bad && bad->empty()) return {p, z};
    if (!bad || !seen.insert(p.diodes).second) break;
    for (const auto& [slot, to] : *bad) {
      violators.insert(diodes_[slot]);
      p.diodes[slot] = to;
    }
  }
  for (auto& states : every_configuration()) {
    p.diodes = std::move(states);
    Eigen::VectorXd z;
    const auto bad = judge(p, how, z);
    if (bad && bad->empty()) return {p, z};
  }
  const std::vector<ElementId> named =
      violators.empty() ? diodes_ : std::vector<ElementId>(violators.begin(), violators.end());
  throw MarchError(fmt::format("no consistent state of the diodes {} was found {}{}", names(circuit_, named), where,
                               diodes_.size() > kMaxEnumerated
                                   ? fmt::format(" (more than {} diodes are not searched one configuration at a time)",
                                                 kMaxEnumerated)
                                   : ""));
}

std::vector<Watch> EventMarch::watches(const Configuration& cfg, const SwitchPositions& p, double t,
                                       std::vector<WatchOf>& of) const {
  std::vector<Watch> out;
  of.clear();
  for (std::size_t slot = 0; slot < diodes_.size(); ++slot) {
    const Element& d = circuit_.element(diodes_[slot]);
    for (const Condition& cond : conditions(d, p.diodes[slot])) {
      LinearForm form =
          cond.current ? cfg.system.element_current(diodes_[slot]) : cfg.system.element_voltage(diodes_[slot]);
      if (!form.defined) continue;
      out.push_back({std::move(form), cond.sign, cond.level * unit_, -1});
      of.push_back({true, slot, cond.to});
    }
  }
  for (std::size_t k = 0; k < contacts_.size(); ++k) {
    const ArmedContact& a = contacts_[k];
    if (a.done || a.after > t || p.closed[a.slot] == a.closes) continue;
    LinearForm form = a.closes ? cfg.system.element_voltage(a.element) : cfg.system.element_current(a.element);
    if (!form.defined) continue;
    out.push_back({std::move(form), 1.0, 0.0, 0});
    of.push_back({false, k, DiodeState::blocking});
  }
  return out;
}

bool EventMarch::contact_zero_now(StateEquation& eq, const ArmedContact& a, double t, const Eigen::VectorXd& z) const {
  const Configuration& cfg = eq.config();
  const LinearForm form = a.closes ? cfg.system.element_voltage(a.element) : cfg.system.element_current(a.element);
  if (!form.defined) return false;
  const Eigen::VectorXd u = eq.inputs(t, z.data());
  const Eigen::VectorXd xs = cfg.unknowns(u);
  return std::fabs(evaluate(form, xs, u)) <= kEdge * size_of(form, xs, u);
}

void EventMarch::count_stall(double t, const std::vector<ElementId>& elements) {
  const double slack = 1e-12 * std::max(std::fabs(t), 1e-9);
  if (t - last_event_ > slack) {
    stalled_ = 0;
    stalled_elements_.clear();
  }
  last_event_ = t;
  ++stalled_;
  stalled_elements_.insert(stalled_elements_.end(), elements.begin(), elements.end());
  if (stalled_ < kMaxStalled) return;
  std::vector<ElementId> ids = stalled_elements_;
  std::sort(ids.begin(), ids.end());
  ids.erase(std::unique(ids.begin(), ids.end()), ids.end());
  throw MarchError(fmt::format("{} change state {} times at t = {} without time advancing (chattering)",
                               names(circuit_, ids), kMaxStalled, format_si(t, "s")));
}

void EventMarch::take_event(double t, const std::vector<int>& fired, const std::vector<WatchOf>& of, Eigen::VectorXd& z,
                            SwitchPositions& p, const std::vector<double>& levels) {
  const SwitchPositions before = p;
  std::vector<ElementId> acted;
  // Of the diodes CVODE reports at one root, only the one that crossed first (the largest time
  // since its crossing, −g/ġ, in the configuration the root was found in) is flipped here; the
  // search then flips the others only if they violate their state in the new configuration
  // (two diodes in series end their conduction picoseconds apart: the second may carry on).
  std::size_t first = fired.size();
  double since = -kInfinity;
  if (std::count_if(fired.begin(), fired.end(), [](int f) { return f != 0; }) > 1) {
    const Configuration& cfg = configuration(p, "the configuration of an event");
    StateEquation eq(cfg, signals_, Forcing{levels, true, {}, unit_});
    std::vector<WatchOf> same;  // the same watches as `of`: same configuration, same instant
    eq.set_watches(watches(cfg, p, t, same));
    const Eigen::VectorXd u = eq.inputs(t, z.data());
    const Eigen::VectorXd xs = cfg.unknowns(u);
    const Eigen::VectorXd du = eq.input_slopes(t, z.data());
    const Eigen::VectorXd dxs = cfg.unknowns(du);
    for (std::size_t i = 0; i < fired.size() && i < eq.watches().size(); ++i) {
      if (fired[i] == 0 || !of[i].diode) continue;
      const Watch& w = eq.watches()[i];
      const double g = w.sign * evaluate(w.form, xs, u) - w.level, slope = w.sign * evaluate(w.form, dxs, du);
      const double s = slope < 0.0 ? g / slope : -g;
      if (s > since) {
        since = s;
        first = i;
      }
    }
  }
  for (std::size_t i = 0; i < fired.size(); ++i) {
    if (fired[i] == 0) continue;
    if (of[i].diode) {
      if (first < fired.size() && i != first) continue;
      p.diodes[of[i].index] = of[i].to;
      acted.push_back(diodes_[of[i].index]);
    } else {
      ArmedContact& a = contacts_[of[i].index];
      p.closed[a.slot] = a.closes;
      carried_[a.slot] = a.closes ? 1 : 0;
      a.done = true;
      acted.push_back(a.element);
      if (record) events.push_back({t, a.element, a.closes ? EventKind::switch_closes : EventKind::switch_opens, 0.0});
    }
  }
  count_stall(t, acted);
  const Eigen::VectorXd fixed = z;
  std::tie(p, z) = settle(
      p, t, levels, false, [&](const Configuration&) { return std::optional(fixed); },
      fmt::format("at t = {}", format_si(t, "s")));
  if (!record) return;
  for (std::size_t slot = 0; slot < diodes_.size(); ++slot)
    if (p.diodes[slot] != before.diodes[slot]) events.push_back({t, diodes_[slot], kind_of(p.diodes[slot]), 0.0});
}

// The march over [t0, t1] (about 80 lines: the samples, the arming instants of the contacts and
// the roots interleave in one loop, each restart rebuilding the equation and its watches).
bool EventMarch::run(double t0, double t1, const std::vector<double>& samples, Eigen::VectorXd& z, SwitchPositions& p,
                     const std::vector<double>& levels, const Sampler& sample) {
  double t = t0;
  std::size_t next = 0;
  std::vector<int> fired;
  std::vector<WatchOf> of;
  for (;;) {
    const Configuration& cfg = configuration(p, fmt::format("the configuration at t = {}", format_si(t, "s")));
    StateEquation eq(cfg, signals_, Forcing{levels, true, {}, unit_});
    for (std::size_t k = 0; k < cfg.modes.size(); ++k)
      if (cfg.modes[k] == PortMode::held_at_zero) z[static_cast<Eigen::Index>(k)] = 0.0;
    // A contact armed now whose quantity is already zero acts at once.
    bool acted = false;
    for (auto& a : contacts_) {
      if (a.done || a.checked || a.after > t) continue;
      a.checked = true;
      if (p.closed[a.slot] == a.closes || !contact_zero_now(eq, a, t, z)) continue;
      std::vector<int> one(1, 1);
      std::vector<WatchOf> which{{false, static_cast<std::size_t>(&a - contacts_.data()), DiodeState::blocking}};
      take_event(t, one, which, z, p, levels);
      acted = true;
      break;
    }
    if (acted) continue;
    // The next instant a contact is armed ends this run of the integrator.
    double stop = t1;
    for (const auto& a : contacts_)
      if (!a.done && a.after > t && a.after < stop) stop = a.after;
    eq.set_watches(watches(cfg, p, t, of));
    const bool ode = std::find(cfg.modes.begin(), cfg.modes.end(), PortMode::port) != cfg.modes.end();
    if (ode) {
      cv_.start(eq, t, z, stop, rtol_, atol_, hmax_);
      cv_.watch_roots();
    }
    bool restarted = false;
    while (!restarted) {
      const bool to_sample = next < samples.size() && samples[next] <= stop;
      const double target = to_sample ? samples[next] : stop;
      Eigen::VectorXd zt = z;
      double at = target;
      Integrator::Reached reached = Integrator::Reached::target;
      if (ode) reached = cv_.advance_until(target, zt, at, fired);
      if (reached == Integrator::Reached::stopped) {
        cv_.finish();
        return false;
      }
      if (reached == Integrator::Reached::root) {
        cv_.finish();
        z = zt;
        t = at;
        take_event(t, fired, of, z, p, levels);
        restarted = true;
        break;
      }
      if (to_sample) {
        if (!sample(eq, target, zt)) {
          if (ode) cv_.finish();
          return false;
        }
        ++next;
        continue;
      }
      if (ode) cv_.finish();
      z = zt;
      t = stop;
      if (stop >= t1) return true;
      restarted = true;  // a contact is armed at `stop`
    }
  }
}

}  // namespace netfold::integration
