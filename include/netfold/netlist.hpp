#pragma once
/// \file netlist.hpp
/// The circuit model: what a `.nf` file says, typed and checked, with the source position
/// of every item. Built once by the parser (or a CircuitBuilder) and immutable afterwards;
/// every later stage takes it by const reference.

#include <cstdint>
#include <limits>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <unordered_map>
#include <vector>

#include "netfold/diagnostics.hpp"
#include "netfold/units.hpp"

namespace netfold {

/// Index of a node in Circuit::nodes().
using NodeId = std::uint32_t;
/// Index of an element in Circuit::elements().
using ElementId = std::uint32_t;
/// "No node" / "no element".
inline constexpr std::uint32_t kNone = std::numeric_limits<std::uint32_t>::max();
/// Positive infinity, used for "open circuit" resistances and infinite time constants.
inline constexpr double kInfinity = std::numeric_limits<double>::infinity();

/// The element kinds of the format.
enum class ElementKind : std::uint8_t {
  resistor,
  capacitor,
  inductor,
  voltage_source,
  current_source,
  switch_,  ///< an ideal contact with optional on/off resistances
  vcvs,     ///< voltage-controlled voltage source, gain in V/V
  vccs,     ///< voltage-controlled current source, gain in S
  ccvs,     ///< current-controlled voltage source, gain in ohm
  cccs,     ///< current-controlled current source, gain in A/A
  diode,    ///< (v2) a two-state element: conducts forward, blocks, optionally breaks down
};

/// The keyword of a kind as written in the format: "resistor", "voltage-source", ...
std::string_view kind_keyword(ElementKind kind);
/// True for capacitors and inductors, the elements that store energy.
bool is_storage(ElementKind kind);
/// True for independent voltage and current sources.
bool is_independent_source(ElementKind kind);

/// One sinusoidal term, always as a cosine: amplitude·cos(2π·frequency·t + phase).
/// `sine A f phase p` is stored as phase p − π/2.
struct Sinusoid {
  double amplitude = 0.0;  ///< peak value, V or A (rms inputs already × √2)
  double frequency = 0.0;  ///< Hz, > 0
  double phase = 0.0;      ///< rad, against a cosine
  SourceLoc loc;           ///< where the term starts
};

/// A step term: 0 before `time`, `level` from `time` on (right-continuous).
struct Step {
  double level = 0.0;  ///< V or A
  double time = 0.0;   ///< s
  SourceLoc loc;
};

/// A source waveform: a DC part, sinusoids and steps, superposed. It holds for all t,
/// including t < 0.
struct Waveform {
  double dc = 0.0;                  ///< sum of the `dc` terms
  std::vector<Sinusoid> sinusoids;  ///< in the order written
  std::vector<Step> steps;          ///< in the order written

  /// The value at time t (s); a step at exactly t counts as taken.
  double value_at(double t) const;
  /// dc plus the steps taken by time t (inclusive): the non-sinusoidal part at t.
  double level_at(double t) const;
  /// True when the waveform has at least one sinusoid.
  bool has_sinusoid() const { return !sinusoids.empty(); }
};

/// What sets off a switch event (v2: events that act on the circuit's own state).
enum class EventTrigger : std::uint8_t {
  time,          ///< `closes at T` / `opens at T`: at T exactly
  current_zero,  ///< `opens at current zero after T`: the first current zero at or after T
  voltage_zero,  ///< `closes at voltage zero after T`: the first zero of the voltage across it at or after T
};

/// One event of a switch: it closes or opens at `time` (or, with a state trigger, at the first
/// instant ≥ `time` at which its current or voltage passes through zero).
struct SwitchEvent {
  double time = 0.0;   ///< s, ≥ 0
  bool closes = true;  ///< true for `closes at`, false for `opens at`
  SourceLoc loc;
  EventTrigger trigger = EventTrigger::time;
};

/// A component tolerance (v2): the value ranges over value·(1 + lower) .. value·(1 + upper);
/// on a source, the factor applied to its whole waveform ranges over 1 + lower .. 1 + upper.
struct Tolerance {
  double lower = 0.0;  ///< fraction, ≤ 0 (−5 % is −0.05)
  double upper = 0.0;  ///< fraction, ≥ 0
  SourceLoc loc;
};

/// What a rating limits.
enum class RatingKind : std::uint8_t {
  peak_voltage,  ///< capacitor `rated V`: peak |v|
  peak_current,  ///< inductor, switch, voltage-source `rated A`: peak |i|
  mean_power,    ///< resistor `rated P W`: mean power over a fundamental period of the steady state
  energy,        ///< resistor `pulse-rated E J`: energy over the window
  i2t,           ///< `rated-i2t X A2s` (any element, v2): ∫i²dt over the window
  dvdt,          ///< (v2) capacitor `rated-dvdt`: largest |dv/dt|, V/s
  didt,          ///< (v2) inductor or switch `rated-didt`: largest |di/dt|, A/s
  rms_current,   ///< (v2) capacitor `rated-rms`: largest rms current over one fundamental period
  peak_reverse_voltage,  ///< (v2) diode `rated X V`: peak reverse voltage
  peak_forward_current,  ///< (v2) diode `rated X A`: peak forward current
};

/// A rating attribute of an element.
struct Rating {
  RatingKind kind = RatingKind::peak_current;
  double limit = 0.0;  ///< in SI units of the quantity
  SourceLoc loc;
};

/// One element line.
struct Element {
  std::string name;                         ///< as written, unique among elements
  ElementKind kind = ElementKind::resistor;
  NodeId pos = kNone;                       ///< first node of the arrow
  NodeId neg = kNone;                       ///< second node of the arrow
  /// R (ohm) for resistors, C (F), L (H), and the gain of a controlled source
  /// (V/V, S, ohm or A/A); 0 for sources and switches.
  double value = 0.0;
  Waveform waveform;                        ///< independent sources only
  std::optional<double> initial;            ///< storage elements: V or A at t = 0−
  std::vector<Rating> ratings;              ///< rating attributes, in the order written
  std::vector<SwitchEvent> events;          ///< switches: in time order, alternating
  double r_on = 0.0;                        ///< switches: closed resistance, 0 = ideal
  double r_off = kInfinity;                 ///< switches: open resistance, ∞ = open circuit
                                            ///< (diodes: `on` and `off` resistances likewise)
  double forward = 0.0;                     ///< diodes: forward drop while conducting, V
  std::optional<double> breakdown;          ///< diodes: reverse conduction at −breakdown, V
  std::optional<Tolerance> tolerance;       ///< (v2) resistors, capacitors, inductors, sources
  NodeId sense_pos = kNone;                 ///< vcvs/vccs: controlling voltage is v(sense_pos) − v(sense_neg)
  NodeId sense_neg = kNone;
  ElementId sense_element = kNone;          ///< ccvs/cccs: controlling current is this element's current
  SourceLoc loc;                            ///< position of the name
  SourceLoc value_loc;                      ///< position of the value (or of the kind for switches)

  /// A switch's state before t = 0: the opposite of its first event.
  bool closed_before_zero() const { return !events.empty() && !events.front().closes; }
};

/// What an observable measures.
enum class ObservableKind : std::uint8_t {
  element_voltage,  ///< `X.v`: v(first) − v(second)
  element_current,  ///< `X.i`: through X from first to second node
  element_power,    ///< `X.p`: v·i, power absorbed by X
  node_voltage,     ///< `@n` against the reference
  node_difference,  ///< `@a - @b`
};

/// A readable name of an observable kind, "" for a value that is no kind.
std::string_view observable_kind_name(ObservableKind kind);

/// A quantity that can be watched, claimed or plotted.
struct Observable {
  ObservableKind kind = ObservableKind::node_voltage;
  ElementId element = kNone;  ///< for element_* kinds
  NodeId node_a = kNone;      ///< for node kinds
  NodeId node_b = kNone;      ///< for node_difference
  std::string text;           ///< canonical spelling: `coil_l.i`, `@a`, `@a - @b` (CSV column name)
  SourceLoc loc;
  /// V, A or W.
  Dimension dimension() const;
};

/// The quantity a claim states.
enum class ClaimQuantity : std::uint8_t {
  tau, rth, vth,              ///< of segment `segment` (1-based)
  peak, max, min, final_value,
  at_time,                    ///< `OBS at TIME`
  amplitude, phase,           ///< of the steady-state fundamental
  energy, i2t,                ///< of element `element` over the window
  worst_peak,                 ///< over every declared sweep and the window
  frequency, damping,         ///< (v2) of segment `segment`'s slowest-decaying oscillatory mode
  share_peak,                 ///< (v2) % of the sweeps' range where peak |observable| > level
  time_below,                 ///< (v2) time from `after` on which |observable| stays below level
  dvdt, didt,                 ///< (v2) largest |dv/dt| of capacitor / |di/dt| of `element`
  rms,                        ///< (v2) largest rms current of `element` over a fundamental period
  power,                      ///< (v2) the sustained power `rated P` is judged by, of `element`
};

/// Comparison of a claim.
enum class CompareOp : std::uint8_t { eq, lt, le, gt, ge };

/// One `expect` line.
struct Claim {
  ClaimQuantity quantity = ClaimQuantity::tau;
  int segment = 1;               ///< tau/rth/vth: segment number, from 1
  Observable observable;         ///< peak/max/min/final/at/amplitude/phase/worst_peak
  ElementId element = kNone;     ///< energy/i2t
  double time = 0.0;             ///< at_time: s
  double level = 0.0;            ///< share_peak, time_below: the level in SI units
  std::optional<double> after;   ///< time_below: from when (default: the last event), s
  CompareOp op = CompareOp::eq;
  double value = 0.0;            ///< in SI units of the quantity (phase in rad)
  double tolerance = 0.0;        ///< absolute (SI) or percent, `eq` only
  bool tolerance_is_percent = false;
  Dimension dimension = Dimension::ratio;  ///< of the quantity
  std::string text;              ///< the claim as written after `expect`
  SourceLoc loc;                 ///< position of `expect`
};

/// What a sweep varies.
enum class SweepTarget : std::uint8_t {
  source_phase,     ///< `SOURCE.phase`: every sinusoid of the source shifted by the same angle (rad)
  storage_initial,  ///< `STORAGE.initial`: the state at t = 0− (V or A)
  switch_closes,    ///< `SWITCH.closes`: the time of the first `closes` event (s)
};

/// One `sweep` line (or `--sweep` argument).
struct Sweep {
  SweepTarget target = SweepTarget::source_phase;
  ElementId element = kNone;
  double from = 0.0;          ///< SI units (rad, V, A or s)
  double to = 0.0;
  std::optional<double> step; ///< grid spacing of the search and of `worst --csv`
  std::string text;           ///< `supply.phase`
  SourceLoc loc;
  /// (v2) Index of the `sweep` line among the circuit's sweep lines: targets written on one
  /// line share it and vary jointly; a first-edition file has one target per line.
  std::uint32_t line = 0;
};

/// The analysis span.
struct Window {
  double from = 0.0;  ///< s
  double to = 0.0;    ///< s
  SourceLoc loc;
};

/// A flat open-addressing index from names to ids. Each slot holds an id and 32 bits of its
/// name's hash; the names themselves are read from the owning table only when the hash bits
/// match, so a probe past another name costs no visit to that table (a cache miss each at a
/// million names) and a million names cost 16 bytes each and no allocation.
class NameIndex {
 public:
  /// The id whose name (per `name_of`) equals `name`, or kNone.
  template <typename NameOf>
  std::uint32_t find(std::string_view name, NameOf&& name_of) const {
    if (slots_.empty()) return kNone;
    const std::size_t h = hash(name);
    const auto tag = static_cast<std::uint32_t>(h >> 32);
    for (std::size_t i = h & mask_;; i = (i + 1) & mask_) {
      const Slot& slot = slots_[i];
      if (slot.id == kNone) return kNone;
      if (slot.tag == tag && name_of(slot.id) == name) return slot.id;
    }
  }
  /// Adds `id` under `name` (the caller made sure the name is new).
  template <typename NameOf>
  void insert(std::string_view name, std::uint32_t id, NameOf&& name_of) {
    if (2 * (count_ + 1) > slots_.size()) grow(name_of);
    place(hash(name), id);
    ++count_;
  }
  /// Makes room for `n` names.
  template <typename NameOf>
  void reserve(std::size_t n, NameOf&& name_of) {
    while (slots_.size() < 2 * n) grow(name_of);
  }

 private:
  struct Slot {
    std::uint32_t id = kNone;
    std::uint32_t tag = 0;  ///< the high 32 bits of the name's hash
  };
  std::vector<Slot> slots_;
  std::size_t mask_ = 0;
  std::size_t count_ = 0;
  static std::size_t hash(std::string_view s) {
    // Mixed so that the high bits (the tag) and the low bits (the slot) are independent even
    // where std::hash is weak in one half.
    std::uint64_t x = std::hash<std::string_view>{}(s);
    x ^= x >> 33;
    x *= 0xff51afd7ed558ccdULL;
    x ^= x >> 33;
    return static_cast<std::size_t>(x);
  }
  void place(std::size_t h, std::uint32_t id) {
    std::size_t i = h & mask_;
    while (slots_[i].id != kNone) i = (i + 1) & mask_;
    slots_[i] = Slot{id, static_cast<std::uint32_t>(static_cast<std::uint64_t>(h) >> 32)};
  }
  template <typename NameOf>
  void grow(NameOf&& name_of) {
    std::vector<Slot> old = std::move(slots_);
    slots_.assign(old.empty() ? 64 : 2 * old.size(), Slot{});
    mask_ = slots_.size() - 1;
    for (const Slot& slot : old)
      if (slot.id != kNone) place(hash(name_of(slot.id)), slot.id);
  }
};

class Circuit;

/// Element `id`'s voltage, current or power as an observable (`X.v`, `X.i`, `X.p`), positioned
/// at the element's line.
Observable element_observable(const Circuit& circuit, ElementId id, ObservableKind kind);

/// A checked, immutable circuit. Nodes and elements are addressed by index.
class Circuit {
 public:
  /// The file the circuit came from (its text is kept for diagnostics).
  const SourceText& source() const { return *source_; }
  std::shared_ptr<const SourceText> source_ptr() const { return source_; }
  /// `title` text, or "" when none.
  const std::string& title() const { return title_; }
  /// Node names; index = NodeId.
  const std::vector<std::string>& nodes() const { return nodes_; }
  /// The reference node (`gnd` or the `ground` statement's node).
  NodeId ground() const { return ground_; }
  /// Elements in file order; index = ElementId.
  const std::vector<Element>& elements() const { return elements_; }
  /// `watch` list in order; empty when the file has no `watch`.
  const std::vector<Observable>& watches() const { return watches_; }
  const std::vector<Sweep>& sweeps() const { return sweeps_; }
  const std::vector<Claim>& claims() const { return claims_; }
  const std::optional<Window>& window() const { return window_; }
  const std::optional<double>& resolution() const { return resolution_; }
  /// Position of the `resolution` statement ({0,0} when there is none).
  SourceLoc resolution_loc() const { return resolution_loc_; }
  /// Extension `golden-tolerance X`: relative tolerance for golden waveform comparison.
  const std::optional<double>& golden_tolerance() const { return golden_tolerance_; }
  /// Position of the `ground` statement ({0,0} when implicit).
  SourceLoc ground_loc() const { return ground_loc_; }

  /// Element by name.
  std::optional<ElementId> find_element(std::string_view name) const;
  /// Node by name.
  std::optional<NodeId> find_node(std::string_view name) const;
  /// The element at index `id`.
  const Element& element(ElementId id) const { return elements_.at(id); }
  /// Ids of the capacitors and inductors, in file order.
  std::vector<ElementId> storage_elements() const;
  /// A diagnostic positioned at `loc` of this circuit's file.
  Diagnostic diagnostic(SourceLoc loc, std::string message) const;

 private:
  friend class CircuitBuilder;
  std::shared_ptr<const SourceText> source_;
  std::string title_;
  std::vector<std::string> nodes_;
  NameIndex node_index_;
  NodeId ground_ = kNone;
  std::vector<Element> elements_;
  NameIndex element_index_;
  std::string_view node_name(NodeId id) const { return nodes_[id]; }
  std::string_view element_name(ElementId id) const { return elements_[id].name; }
  std::vector<Observable> watches_;
  std::vector<Sweep> sweeps_;
  std::vector<Claim> claims_;
  std::optional<Window> window_;
  std::optional<double> resolution_;
  SourceLoc resolution_loc_;
  std::optional<double> golden_tolerance_;
  SourceLoc ground_loc_;
};

/// Assembles a Circuit item by item (used by the parser, by generators and by tests).
/// It does no checking beyond name uniqueness; the parser checks before it adds.
class CircuitBuilder {
 public:
  explicit CircuitBuilder(std::shared_ptr<const SourceText> source);
  /// Node id for `name`, adding it when new.
  NodeId node(std::string_view name);
  /// The existing node, if any.
  std::optional<NodeId> find_node(std::string_view name) const;
  /// Adds an element; returns its id, or nothing when the name is taken.
  std::optional<ElementId> add_element(Element element);
  std::optional<ElementId> find_element(std::string_view name) const;
  /// Mutable access while building (e.g. to resolve a forward `sense` reference).
  Element& element(ElementId id) { return circuit_.elements_.at(id); }
  const std::vector<Element>& elements() const { return circuit_.elements_; }
  void set_title(std::string title) { circuit_.title_ = std::move(title); }
  /// Names the reference node (creates it when new).
  void set_ground(std::string_view name, SourceLoc loc);
  void add_watch(Observable observable) { circuit_.watches_.push_back(std::move(observable)); }
  /// Adds a sweep target as a new sweep line, or (joins_previous, v2) as one more target of the
  /// previous line, varied jointly with it. Sets Sweep::line.
  void add_sweep(Sweep sweep, bool joins_previous = false) {
    const auto& all = circuit_.sweeps_;
    sweep.line = all.empty() ? 0 : (joins_previous ? all.back().line : all.back().line + 1);
    circuit_.sweeps_.push_back(std::move(sweep));
  }
  void add_claim(Claim claim) { circuit_.claims_.push_back(std::move(claim)); }
  void set_window(Window window) { circuit_.window_ = window; }
  void set_resolution(double dt, SourceLoc loc = {}) {
    circuit_.resolution_ = dt;
    circuit_.resolution_loc_ = loc;
  }
  void set_golden_tolerance(double rel) { circuit_.golden_tolerance_ = rel; }
  /// Makes room for about `elements` elements and `nodes` nodes, so that a large file is read
  /// without regrowing the tables (a hint only; more may be added).
  void reserve(std::size_t elements, std::size_t nodes) {
    circuit_.elements_.reserve(elements);
    circuit_.element_index_.reserve(elements, [this](ElementId id) { return circuit_.element_name(id); });
    circuit_.nodes_.reserve(nodes);
    circuit_.node_index_.reserve(nodes, [this](NodeId id) { return circuit_.node_name(id); });
  }
  /// Finishes: a ground named `gnd` is used when set_ground was not called.
  Circuit build() &&;

 private:
  Circuit circuit_;
  bool ground_set_ = false;
};

}  // namespace netfold
