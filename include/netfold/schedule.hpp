#pragma once
/// \file schedule.hpp
/// Stage "events", part 2: when the circuit changes. A Schedule lists the events (time,
/// element, what happens) and the segments between them (from, to, switch positions, the
/// changes at `from`), for a circuit under a scenario over a window. It holds no numerics:
/// nothing in it depends on element values, so it is built before any equation is solved.
///
/// The window is an input, not computed here: the format's default window (last event +
/// max(8 time constants of the last segment, 5 periods of the slowest sinusoid)) needs the
/// last segment's time constant, which only the solved network knows. The caller lists the
/// events (list_events), finds the positions after the last one (positions_at), computes the
/// window from the network of those positions, then builds the schedule (build_schedule).
///
/// Events found while solving (a diode turning off, a contact opening at a current zero — the
/// state-dependent events of the format's second edition) are not known in advance. The solver
/// marches segment by segment; when it finds such an event at t* inside segment k it calls
/// `Schedule::split_segment(k, event, positions_after)`: segment k then ends at t*, a new
/// segment k+1 = [t*, old end) starts with the event as its change, and the configuration the
/// event set carries into the later segments until one of their own events changes that
/// element again. Segment numbers after k move up by one; nothing already solved changes.
///
/// Example:
/// \code
///   // K1: switch a -> b, closes at 0 s, opens at 35 ms        window 0 .. 60 ms
///   netfold::Schedule s = netfold::build_schedule(netfold::apply_scenario(c, {}), {0.0, 0.060, {}});
///   // s.segments.size() == 2: [0, 35 ms) K1 closed (change "K1 closes"), [35 ms, 60 ms] K1 open
/// \endcode

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "netfold/mna.hpp"
#include "netfold/netlist.hpp"
#include "netfold/scenario.hpp"

namespace netfold {

/// What happens at an event.
enum class EventKind : std::uint8_t {
  switch_closes,  ///< a switch closes
  switch_opens,   ///< a switch opens
  source_steps,   ///< a `step` of a source is taken (its level changes by ScheduledEvent::step)
  diode_conducts,     ///< (v2) a diode's voltage reaches its forward drop: it starts conducting
  diode_blocks,       ///< (v2) a conducting diode's current falls to zero: it blocks
  diode_breaks_down,  ///< (v2) a blocking diode's voltage reaches −breakdown: it conducts in reverse
};

/// One event: at `time`, `element` does `kind`.
struct ScheduledEvent {
  double time = 0.0;                      ///< s
  ElementId element = kNone;
  EventKind kind = EventKind::switch_closes;
  double step = 0.0;                      ///< source_steps: the level change (V or A)
};

/// One interval between events.
struct ScheduledSegment {
  double from = 0.0, to = 0.0;            ///< s
  SwitchPositions positions;              ///< every switch's position throughout
  std::vector<ScheduledEvent> changes;    ///< what happens at `from` (at or before 0 for the first)
};

/// The events and segments of a circuit under a scenario over a window.
struct Schedule {
  Window window;                          ///< as given to build_schedule
  double resolution = 0.0;                ///< CSV sample spacing: declared, or window / 4000
  std::vector<ScheduledEvent> events;     ///< every event in time order, also those the window ignores
  std::vector<ScheduledSegment> segments; ///< from t = 0 to the window's end, in time order
  std::vector<ElementId> switches;        ///< the switch of each index of SwitchPositions::closed

  /// The events at or after the window's end (the report warns that they are ignored).
  std::vector<ScheduledEvent> ignored_events() const;
  /// Index of the segment that holds t (an event time belongs to the segment it starts).
  std::size_t segment_index_at(double t) const;
  /// Splits segment k at an event found while solving (see the file comment). `event.time`
  /// must lie strictly inside segment k; `after` is the configuration from then on.
  void split_segment(std::size_t k, const ScheduledEvent& event, const SwitchPositions& after);
  /// An event found at the very start of segment k (a contact's zero at the instant it was
  /// armed): segment k takes `after` and the change, carried on as split_segment does.
  void change_at_start(std::size_t k, const ScheduledEvent& event, const SwitchPositions& after);
};

/// Every event of the circuit under the scenario known before solving, in time order (equal
/// times in element order): each switch event at a time, and each `step` at t > 0 (a step at
/// or before 0 is part of the level that holds before t = 0). A contact that acts at a current
/// or voltage zero is not listed: the solver finds its time (Solution::schedule() then holds it).
std::vector<ScheduledEvent> list_events(const AppliedScenario& applied);

/// The switch positions at time t: before t = 0 each switch is opposite to its first event;
/// every event at or before t has been taken.
SwitchPositions positions_at(const AppliedScenario& applied, double t);

/// The schedule over `window`: segment boundaries at 0, at every event strictly inside
/// (0, window end) (simultaneous events are one boundary) and at the window's end.
Schedule build_schedule(const AppliedScenario& applied, const Window& window);

/// The sample grid of reported waveforms (CSV rows, plots): FROM + k·resolution, k = 0, 1, …
/// while ≤ TO, with a slack of 1e-12 relative and 1e-9 of a step so that rounding does not drop
/// the row at TO; a row that rounds past TO is TO itself, and a row that rounding makes equal
/// to the one before is left out (no row is repeated). A resolution that is not finite and
/// positive, or a window with TO < FROM, gives the single row FROM. Throws NumericError when
/// the grid would have more than 5e7 rows.
std::vector<double> sample_grid(const Window& window, double resolution);

/// The highest frequency (Hz) of any sinusoid of nonzero amplitude among the circuit's sources
/// as written (0 when there is none): what sets the finest time scale a grid must resolve.
double fastest_source_frequency(const Circuit& circuit);

/// "K1 closed, K2 open, d1, d4 conducting": the switches' positions and the diodes' states.
std::string configuration_text(const Circuit& circuit, const SwitchPositions& positions);

/// "K1 closes", "K1 opens", "supply steps by 5 V", "d1 starts conducting".
std::string event_text(const Circuit& circuit, const ScheduledEvent& event);

}  // namespace netfold
