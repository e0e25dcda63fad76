#include "netfold/schedule.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include <fmt/format.h>
#include <fmt/ranges.h>

#include "netfold/diagnostics.hpp"
#include "netfold/units.hpp"

namespace netfold {

namespace {

std::vector<ElementId> switches_of(const Circuit& c) {
  std::vector<ElementId> out;
  for (ElementId i = 0; i < c.elements().size(); ++i)
    if (c.element(i).kind == ElementKind::switch_) out.push_back(i);
  return out;
}

// Index of each element in SwitchPositions::closed (kNone for elements that are not switches).
std::vector<std::uint32_t> switch_slots(const Circuit& c) {
  std::vector<std::uint32_t> slot(c.elements().size(), kNone);
  std::uint32_t k = 0;
  for (ElementId i = 0; i < c.elements().size(); ++i)
    if (c.element(i).kind == ElementKind::switch_) slot[i] = k++;
  return slot;
}

// Takes every event of `events` from index `next` on whose time is at or before t.
void take_events_until(const std::vector<ScheduledEvent>& events, std::size_t& next, double t,
                       const std::vector<std::uint32_t>& slot, SwitchPositions& p) {
  for (; next < events.size() && events[next].time <= t; ++next) {
    const ScheduledEvent& ev = events[next];
    if (ev.kind != EventKind::switch_closes && ev.kind != EventKind::switch_opens) continue;
    p.closed[slot[ev.element]] = ev.kind == EventKind::switch_closes;
  }
}

}  // namespace

std::vector<ScheduledEvent> list_events(const AppliedScenario& applied) {
  const Circuit& c = applied.circuit();
  std::vector<ScheduledEvent> events;
  for (ElementId i = 0; i < c.elements().size(); ++i) {
    const Element& e = c.element(i);
    if (e.kind == ElementKind::switch_)
      for (const auto& ev : applied.events(i))
        if (ev.trigger == EventTrigger::time)
          events.push_back({ev.time, i, ev.closes ? EventKind::switch_closes : EventKind::switch_opens, 0.0});
    if (is_independent_source(e.kind))
      for (const auto& st : applied.waveform(i).steps)
        if (st.time > 0.0) events.push_back({st.time, i, EventKind::source_steps, st.level});
  }
  // Stable: equal times keep element order, and a switch's own events keep theirs.
  std::stable_sort(events.begin(), events.end(),
                   [](const ScheduledEvent& a, const ScheduledEvent& b) { return a.time < b.time; });
  return events;
}

SwitchPositions positions_at(const AppliedScenario& applied, double t) {
  // The same march as build_schedule's, so that both agree even on events out of order.
  const Circuit& c = applied.circuit();
  SwitchPositions p = positions_before_zero(c);
  std::size_t next = 0;
  take_events_until(list_events(applied), next, t, switch_slots(c), p);
  return p;
}

Schedule build_schedule(const AppliedScenario& applied, const Window& window) {
  const Circuit& c = applied.circuit();
  Schedule s;
  s.window = window;
  s.resolution = c.resolution().value_or((window.to - window.from) / 4000.0);
  s.events = list_events(applied);
  s.switches = switches_of(c);
  const std::vector<std::uint32_t> slot = switch_slots(c);
  const double t_end = window.to;

  std::vector<double> bounds{0.0};
  for (const auto& ev : s.events)
    if (ev.time > 0.0 && ev.time < t_end && ev.time != bounds.back()) bounds.push_back(ev.time);
  bounds.push_back(t_end);

  // One march through the sorted events: linear in events + segments.
  SwitchPositions positions = positions_before_zero(c);
  std::size_t taken = 0, listed = 0;
  for (std::size_t k = 0; k + 1 < bounds.size(); ++k) {
    ScheduledSegment seg;
    seg.from = bounds[k];
    seg.to = bounds[k + 1];
    take_events_until(s.events, taken, seg.from, slot, positions);
    seg.positions = positions;
    // The changes at `from`; the first segment also takes the events at or before 0.
    for (; listed < s.events.size() && s.events[listed].time <= seg.from; ++listed)
      if (s.events[listed].time == seg.from || k == 0) seg.changes.push_back(s.events[listed]);
    s.segments.push_back(std::move(seg));
  }
  return s;
}

std::vector<ScheduledEvent> Schedule::ignored_events() const {
  std::vector<ScheduledEvent> out;
  for (const auto& ev : events)
    if (ev.time >= window.to) out.push_back(ev);
  return out;
}

std::size_t Schedule::segment_index_at(double t) const {
  auto it = std::upper_bound(segments.begin(), segments.end(), t,
                             [](double x, const ScheduledSegment& s) { return x < s.from; });
  return it == segments.begin() ? 0 : static_cast<std::size_t>(it - segments.begin()) - 1;
}

void Schedule::split_segment(std::size_t k, const ScheduledEvent& event, const SwitchPositions& after) {
  if (k >= segments.size() || !(event.time > segments[k].from && event.time < segments[k].to))
    throw std::invalid_argument("split_segment: the event is not strictly inside the segment");
  ScheduledSegment next;
  next.from = event.time;
  next.to = segments[k].to;
  next.positions = segments[k].positions;
  segments[k].to = event.time;
  segments.insert(segments.begin() + static_cast<std::ptrdiff_t>(k) + 1, std::move(next));
  change_at_start(k + 1, event, after);
}

void Schedule::change_at_start(std::size_t k, const ScheduledEvent& event, const SwitchPositions& after) {
  const SwitchPositions before = segments.at(k).positions;
  segments[k].positions = after;
  segments[k].changes.push_back(event);
  auto at = std::upper_bound(events.begin(), events.end(), event.time,
                             [](double t, const ScheduledEvent& e) { return t < e.time; });
  events.insert(at, event);
  // The configuration the event set carries on, switch by switch, until a later segment's own
  // change of that switch.
  for (std::size_t slot = 0; slot < after.closed.size() && slot < before.closed.size(); ++slot) {
    if (after.closed[slot] == before.closed[slot]) continue;
    for (std::size_t j = k + 1; j < segments.size(); ++j) {
      bool own = std::any_of(segments[j].changes.begin(), segments[j].changes.end(), [&](const ScheduledEvent& e) {
        return slot < switches.size() && e.element == switches[slot] &&
               (e.kind == EventKind::switch_closes || e.kind == EventKind::switch_opens);
      });
      if (own) break;
      segments[j].positions.closed[slot] = after.closed[slot];
    }
  }
}

std::vector<double> sample_grid(const Window& window, double resolution) {
  // Beyond this a grid is gigabytes: a resolution mistake, refused rather than allocated.
  constexpr double kMaxGridRows = 5e7;
  const double span = window.to - window.from;
  if (!(resolution > 0.0) || !std::isfinite(resolution) || !(span >= 0.0)) return {window.from};
  // The slack keeps the row at TO when span / resolution is a whole number that rounding
  // put a hair below it (0.3 / 0.1 = 2.9999999999999996).
  const double steps = std::floor(span / resolution * (1.0 + 1e-12) + 1e-9);
  if (steps + 1.0 > kMaxGridRows)
    throw NumericError(fmt::format("the sample grid of {} .. {} at a resolution of {} has {:.3g} rows, more than "
                                   "the 5e7 it may have",
                                   format_si(window.from, "s"), format_si(window.to, "s"), format_si(resolution, "s"),
                                   steps + 1.0));
  const auto n = static_cast<std::size_t>(steps) + 1;
  std::vector<double> out;
  out.reserve(n);
  for (std::size_t k = 0; k < n; ++k) {
    const double t = std::min(window.from + static_cast<double>(k) * resolution, window.to);
    if (out.empty() || t > out.back()) out.push_back(t);
  }
  return out;
}

double fastest_source_frequency(const Circuit& c) {
  double f = 0.0;
  for (const auto& e : c.elements())
    for (const auto& s : e.waveform.sinusoids)
      if (s.amplitude != 0.0) f = std::max(f, s.frequency);
  return f;
}

std::string configuration_text(const Circuit& c, const SwitchPositions& p) {
  std::vector<std::string> parts;
  std::vector<std::string> conducting, breakdown;
  std::size_t k = 0, d = 0;
  for (const auto& e : c.elements()) {
    if (e.kind == ElementKind::switch_) parts.push_back(fmt::format("{} {}", e.name, p.closed[k++] ? "closed" : "open"));
    if (e.kind != ElementKind::diode || d >= p.diodes.size()) continue;
    const DiodeState state = p.diodes[d++];
    if (state == DiodeState::forward) conducting.push_back(e.name);
    if (state == DiodeState::reverse) breakdown.push_back(e.name);
  }
  if (!conducting.empty()) parts.push_back(fmt::format("{} conducting", fmt::join(conducting, ", ")));
  if (!breakdown.empty()) parts.push_back(fmt::format("{} in breakdown", fmt::join(breakdown, ", ")));
  if (d > 0 && conducting.empty() && breakdown.empty()) parts.push_back("every diode blocking");
  return fmt::format("{}", fmt::join(parts, ", "));
}

std::string event_text(const Circuit& c, const ScheduledEvent& ev) {
  const Element& e = c.element(ev.element);
  switch (ev.kind) {
    case EventKind::switch_closes: return fmt::format("{} closes", e.name);
    case EventKind::switch_opens: return fmt::format("{} opens", e.name);
    case EventKind::source_steps:
      return fmt::format("{} steps by {}", e.name, format_si(ev.step, e.kind == ElementKind::voltage_source ? "V" : "A"));
    case EventKind::diode_conducts: return fmt::format("{} starts conducting", e.name);
    case EventKind::diode_blocks: return fmt::format("{} stops conducting (its current reaches zero)", e.name);
    case EventKind::diode_breaks_down: return fmt::format("{} breaks down (conducts in reverse)", e.name);
  }
  return e.name;
}

}  // namespace netfold
