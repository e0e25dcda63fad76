#pragma once
// The solve stage for circuits with several storage elements (spec v2, "Several storage
// elements"): per segment the state equation dx/dt = A·x + B·u from the reduced network
// (reduce/state_space.hpp), its exact modal response (modal.hpp), and every observable as a sum
// of the response's terms. One storage element keeps the first edition's path (solve.cpp), whose
// figures the figures baseline holds. Private to src/response/.

#include <optional>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "netfold/solve.hpp"
#include "reduce/state_space.hpp"
#include "response/modal.hpp"

namespace netfold {

namespace detail {

/// Each input's waveform under the scenario as a Drive from `from` on (before t = 0: the level
/// "for all t < 0"): the sources in input order, then the diodes' unit input (the constant 1).
std::vector<Drive> input_drives(const Solution& s, bool before_zero, double from);
/// Whether the circuit has a diode (then the inputs end with the unit input).
bool has_diodes(const Circuit& c);
/// Whether the circuit has events found while solving (diodes, contacts that act at a zero).
bool has_state_events(const Circuit& c);
/// A natural mode as reported.
NaturalMode natural_mode(const response::Mode& m);
/// The slowest decay: the largest positive time constant; +∞ with a mode at Re λ = 0; the
/// fastest growth (negative τ) when a mode grows.
double slowest_tau(const std::vector<NaturalMode>& modes);

/// The steady state before t = 0 of dx/dt = A·x + B·u at t = 0 (solve_states.cpp).
struct SteadyStart {
  Eigen::VectorXd x;
  std::vector<bool> undetermined;
  std::string why;     ///< empty when every state is determined
  bool exists = true;  ///< false when the network has no steady state at all
};
SteadyStart steady_start(const StateSpace& ss, const std::vector<Drive>& u, const std::vector<NaturalMode>& modes);

}  // namespace detail

/// A contact that acts at a zero of its current (opens) or voltage (closes) after a time, until
/// the solver finds that zero (spec v2, "State-dependent events").
struct ArmedEvent {
  ElementId element = kNone;
  double after = 0.0;  ///< s: the contact parts (or is told to close) at this time
  bool closes = false;
  bool done = false;   ///< found (or dropped)
};

/// The first state-dependent event of a segment.
struct FoundEvent {
  ScheduledEvent event;
  std::size_t switch_slot = kNone;  ///< a contact's index in SwitchPositions::closed, or kNone
  std::size_t armed = kNone;        ///< its index in the armed list, or kNone
  std::size_t diode_slot = kNone;   ///< a diode's index in SwitchPositions::diodes, or kNone
  DiodeState diode_after = DiodeState::blocking;  ///< the state the crossing points the diode to
};

/// Counts events that do not advance time; fails naming the elements past a limit (chattering).
/// Also fails when events come in a long run each advancing less than a tiny share of the span
/// (a sliding mode: the diodes switch back and forth faster than the circuit can be resolved),
/// and past a total number of events in the span.
class Chatter {
 public:
  explicit Chatter(double span) : span_(span) {}
  void count(const Circuit& c, const ScheduledEvent& event, double from);

 private:
  double span_;
  int rapid_ = 0;
  long total_ = 0;
  std::vector<ElementId> elements_;
  std::vector<ElementId> rapid_elements_;
};

/// The diodes' states and the storage elements' states at t = 0−.
struct DiodeStart {
  std::vector<DiodeState> diodes;
  detail::SteadyStart steady;
};

/// Fills a solution's states and segments (friend of Solution).
class StateSolver {
 public:
  /// The states at t = 0− (given, or the steady state before t = 0), then every segment,
  /// splitting the schedule at every state-dependent event.
  static void solve_segments(Solution& s);
  /// The closed form of an observable form in one segment.
  static Piece piece(const Solution& s, const ObservableForm& form, const Segment& segment);
  /// The slowest decay time constant of the network after the last event (for the default
  /// window), or 0 when it has no decaying mode.
  static double last_slowest_tau(const AppliedScenario& applied, NetworkCache& cache, double last_event);

 private:
  static std::vector<DiodeState> initial_states(Solution& s);
  static void solve_segment(Solution& s, Segment& seg, Eigen::VectorXd& x, double scale);
  // State-dependent events (state_events.cpp).
  static std::vector<ArmedEvent> armed_events(const AppliedScenario& applied);
  static DiodeStart diode_start(Solution& s, bool all_given);
  static void settle_diodes(Solution& s, Segment& seg, const Eigen::VectorXd& x, double scale);
  static std::optional<FoundEvent> next_state_event(const Solution& s, const Segment& seg,
                                                    const std::vector<ArmedEvent>& armed);
  static ElementId anchor_element(const Solution& s);
};


/// Largest |y| a term response can reach over its segment (a cheap bound; range.cpp).
double terms_bound(const Piece& piece);

}  // namespace netfold
