#include "netfold/parse.hpp"

#include <algorithm>
#include <array>
#include <cctype>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <limits>
#include <numbers>
#include <unordered_map>
#include <unordered_set>

#include <fmt/format.h>

#include "parse/lexer.hpp"

namespace netfold {
namespace {

using detail::Token;
using detail::TokenKind;

constexpr double kDegree = std::numbers::pi / 180.0;
// Offending text is quoted up to this many code points, so that a 1 MB token does not make a
// 1 MB message.
constexpr std::size_t kQuoteLimit = 40;

// An error that ends the parsing of the current statement (or of one reference).
struct StatementError {
  SourceLoc loc;
  std::string message;
};

// A reference to a name whose own line already failed: reporting it again would only repeat
// that error.
struct Silenced {};

[[noreturn]] void fail(SourceLoc loc, std::string message) { throw StatementError{loc, std::move(message)}; }

std::string shorten(std::string_view s) {
  std::size_t chars = 0;
  for (std::size_t i = 0; i < s.size(); ++i) {
    if ((static_cast<unsigned char>(s[i]) & 0xC0) == 0x80) continue;
    if (chars++ == kQuoteLimit) return std::string(s.substr(0, i)) + "...";
  }
  return std::string(s);
}

// Message text kept as up to five pieces and joined only when a message is made, so that the
// path through a valid file allocates nothing for messages it never shows.
struct Text {
  Text(const char* a) : parts{std::string_view(a)} {}
  Text(std::string_view a) : parts{a} {}
  Text(const std::string& a) : parts{std::string_view(a)} {}
  Text(std::string_view a, std::string_view b, std::string_view c = {}, std::string_view d = {},
       std::string_view e = {})
      : parts{a, b, c, d, e} {}
  std::string str() const {
    std::string out;
    for (auto p : parts) out += p;
    return out;
  }
  std::array<std::string_view, 5> parts{};
};

// Words with a meaning of their own in the format. After a bare number, any other word is
// likely a misspelt unit (`10 kOhm`), and the message says it is not one.
constexpr auto kKeywords = std::to_array<std::string_view>({
    "resistor", "capacitor", "inductor", "voltage-source", "current-source", "switch", "vcvs", "vccs", "ccvs",
    "cccs", "rated", "pulse-rated", "initial", "closes", "opens", "on", "off", "rated-i2t", "gain", "sense", "dc",
    "cosine", "sine", "step", "at", "phase", "title", "ground", "window", "resolution", "watch", "sweep", "expect",
    "golden-tolerance", "tau", "rth", "vth", "peak", "max", "min", "final", "amplitude", "energy", "i2t", "worst"});

bool is_keyword(std::string_view word) {
  return std::find(kKeywords.begin(), kKeywords.end(), word) != kKeywords.end();
}

bool is_word_byte(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' ||
         (static_cast<unsigned char>(c) & 0x80) != 0;
}

// ---------------------------------------------------------------------------------------------
// Values

// A value as written: its number, its unit (if any), and the text to quote in messages. It is
// given a dimension only where its place is known (to_si), which for `sweep C.initial` is
// after the whole file has been read.
struct RawValue {
  UnitSuffix unit;              // no prefix and no dimension for a bare number
  std::string_view number_text; // the number as written, sign included
  std::string_view unit_text;   // "" for a bare number
  bool spaced = false;          // the unit was a separate word: `470 nF`
  SourceLoc loc;                // of the number

  std::string quote() const {
    if (unit_text.empty()) return shorten(number_text);
    if (!spaced) return shorten(std::string_view(number_text.data(), number_text.size() + unit_text.size()));
    return shorten(number_text) + " " + shorten(unit_text);
  }
};

// The value in SI units for a place that needs `want`; `place` names that place in messages
// ("a resistor", "'rated' on a resistor"). Only sinusoid amplitudes may be rms. Every value of
// a file is converted here, by convert_value (exactly; see units.hpp).
double to_si(const RawValue& v, Dimension want, const Text& place, bool rms_allowed = false) {
  Dimension dim = v.unit.dimension.value_or(want);
  if (dim != want) {
    fail(v.loc, fmt::format("'{}' is {}, but {} needs {}", v.quote(), dimension_noun(dim), place.str(),
                            dimension_noun(want)));
  }
  if (v.unit.rms && !rms_allowed) {
    fail(v.loc, fmt::format("'{}' is an rms value; rms applies only to the amplitude of a cosine or sine, not to {}",
                            v.quote(), place.str()));
  }
  Converted c = convert_value(v.number_text, v.unit, want);
  switch (c.fault) {
    case ValueFault::none: break;
    case ValueFault::not_a_number: fail(v.loc, fmt::format("'{}' is not a number", v.quote()));
    case ValueFault::overflow: fail(v.loc, fmt::format("'{}' is out of range", v.quote()));
    case ValueFault::subnormal:
      // Such a value passes the checks for zero and then breaks the circuit's arithmetic (1/R
      // overflows), so that the failure would surface far from its cause.
      fail(v.loc, fmt::format("'{}' for {} is too small to compute with: below {:.2g} {} double precision loses its "
                              "digits; give the real value{}",
                              v.quote(), place.str(), std::numeric_limits<double>::min(), dimension_symbol(want),
                              want == Dimension::resistance ? " (a connection of no resistance is a wire: join the "
                                                              "two nodes)"
                                                            : ""));
  }
  return c.value;
}

// A time on the time axis (an event, a window bound, a step, a resolution, a claim's instant,
// a closing-time sweep) lies within kMaxTime of t = 0. The message when it does not, or "".
std::string time_limit_fault(const RawValue& v, double t) {
  if (std::fabs(t) <= kMaxTime) return {};
  const double mag = std::fabs(t);
  const double gap = std::nextafter(mag, std::numeric_limits<double>::infinity()) - mag;
  static_assert(kMaxTime == 1e9, "the message says 1e9 s");
  return fmt::format("'{}' is beyond 1e9 s (about 30 years), the longest time netfold computes with: there double "
                     "precision cannot tell apart instants less than {} apart; check the value",
                     v.quote(), format_si(gap, "s"));
}

// ---------------------------------------------------------------------------------------------
// Element kinds and their attributes

enum class Attr : std::uint8_t { rated, pulse_rated, initial, closes, opens, on, off, rated_i2t, gain, sense };

constexpr std::uint32_t bit(Attr a) { return 1u << static_cast<unsigned>(a); }

struct AttrName {
  std::string_view keyword;
  Attr attr;
};

constexpr std::array<AttrName, 10> kAttrNames{{
    {"rated", Attr::rated}, {"pulse-rated", Attr::pulse_rated}, {"initial", Attr::initial},
    {"closes", Attr::closes}, {"opens", Attr::opens}, {"on", Attr::on}, {"off", Attr::off},
    {"rated-i2t", Attr::rated_i2t}, {"gain", Attr::gain}, {"sense", Attr::sense},
}};

struct KindInfo {
  ElementKind kind;
  std::string_view keyword;
  std::string_view noun;        // "a resistor"
  std::uint32_t attributes;     // bits of the Attr it takes
  std::string_view attribute_list;
};

constexpr std::array<KindInfo, 10> kKinds{{
    {ElementKind::resistor, "resistor", "a resistor", bit(Attr::rated) | bit(Attr::pulse_rated),
     "rated P W, pulse-rated E J"},
    {ElementKind::capacitor, "capacitor", "a capacitor", bit(Attr::initial) | bit(Attr::rated),
     "initial V, rated V"},
    {ElementKind::inductor, "inductor", "an inductor", bit(Attr::initial) | bit(Attr::rated), "initial A, rated A"},
    {ElementKind::voltage_source, "voltage-source", "a voltage-source", bit(Attr::rated), "rated A"},
    {ElementKind::current_source, "current-source", "a current-source", 0, ""},
    {ElementKind::switch_, "switch", "a switch",
     bit(Attr::closes) | bit(Attr::opens) | bit(Attr::on) | bit(Attr::off) | bit(Attr::rated) | bit(Attr::rated_i2t),
     "closes at T, opens at T, on R, off R, rated A, rated-i2t X A2s"},
    {ElementKind::vcvs, "vcvs", "a vcvs", bit(Attr::gain) | bit(Attr::sense), "gain K, sense NODE -> NODE"},
    {ElementKind::vccs, "vccs", "a vccs", bit(Attr::gain) | bit(Attr::sense), "gain G S, sense NODE -> NODE"},
    {ElementKind::ccvs, "ccvs", "a ccvs", bit(Attr::gain) | bit(Attr::sense), "gain R ohm, sense ELEMENT"},
    {ElementKind::cccs, "cccs", "a cccs", bit(Attr::gain) | bit(Attr::sense), "gain K, sense ELEMENT"},
}};

constexpr std::string_view kKindList =
    "resistor, capacitor, inductor, voltage-source, current-source, switch, vcvs, vccs, ccvs or cccs";

const KindInfo* find_kind(std::string_view keyword) {
  for (const auto& k : kKinds)
    if (k.keyword == keyword) return &k;
  return nullptr;
}

const KindInfo& kind_info(ElementKind kind) {
  for (const auto& k : kKinds)
    if (k.kind == kind) return k;
  return kKinds[0];
}

std::optional<Attr> find_attr(std::string_view keyword) {
  for (const auto& a : kAttrNames)
    if (a.keyword == keyword) return a.attr;
  return std::nullopt;
}

Dimension gain_dimension(ElementKind kind) {
  switch (kind) {
    case ElementKind::vccs: return Dimension::conductance;
    case ElementKind::ccvs: return Dimension::resistance;
    default: return Dimension::ratio;
  }
}

Dimension observable_dimension(ObservableKind kind) {
  Observable o;
  o.kind = kind;
  return o.dimension();
}

// ---------------------------------------------------------------------------------------------
// References, resolved once every element is known

struct NameRef {
  std::string_view name;
  SourceLoc loc;
};

// An observable as written; `bare` for a name with neither `@` nor `.x` (always an error, but
// one whose message depends on what the name turns out to be).
struct PendingObservable {
  ObservableKind kind = ObservableKind::node_voltage;
  bool bare = false;
  NameRef a, b;
  SourceLoc loc;
};

enum class SweepMember : std::uint8_t { phase, initial, closes };

struct PendingSweep {
  NameRef element;
  SweepMember member = SweepMember::phase;
  std::string_view member_text;
  RawValue from, to;
  std::optional<RawValue> step;
  SourceLoc loc;
};

// Where names are looked up: the parser's tables while a file is read, or a finished Circuit
// for command-line arguments.
struct Lookup {
  std::uint32_t id = kNone;
  bool broken = false;  // the name's own line failed to parse
};

class Scope {
 public:
  virtual ~Scope() = default;
  virtual Lookup element(std::string_view name) const = 0;
  virtual const Element& element_at(ElementId id) const = 0;
  /// Nodes that some element uses, and the reference node.
  virtual Lookup node(std::string_view name) const = 0;
  virtual std::string_view reference() const = 0;
};

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

// ---------------------------------------------------------------------------------------------
// Token-level reading, shared by the file parser and the command-line argument parsers

class Reader {
 protected:
  explicit Reader(std::string_view text) : text_(text) {}

  const Token& peek(std::size_t ahead = 0) const { return toks_[std::min(at_ + ahead, toks_.size() - 1)]; }
  const Token& take() {
    const Token& t = toks_[at_];
    if (at_ + 1 < toks_.size()) ++at_;
    return t;
  }
  bool at_word(std::string_view w) const { return peek().kind == TokenKind::word && peek().text == w; }
  bool accept(TokenKind kind) {
    if (peek().kind != kind) return false;
    take();
    return true;
  }

  // A word as written, continued over the characters a word may hold and over hyphens, so
  // that a misspelt `voltage-sourc` is quoted whole.
  std::string word_as_written(const Token& t) const {
    const char* begin = t.text.data();
    const char* end = begin + t.text.size();
    const char* limit = text_.data() + text_.size();
    while (end < limit && (is_word_byte(*end) || (*end == '-' && end + 1 < limit && is_word_byte(end[1])))) ++end;
    return shorten(std::string_view(begin, static_cast<std::size_t>(end - begin)));
  }

  // Everything up to the next blank, comma or comment, to quote a statement's first word.
  std::string text_as_written(const Token& t) const {
    const char* begin = t.text.data();
    const char* end = begin + t.text.size();
    const char* limit = text_.data() + text_.size();
    while (end < limit && !std::strchr(" \t\r\n,#", *end)) ++end;
    return shorten(std::string_view(begin, static_cast<std::size_t>(end - begin)));
  }

  std::string found(const Token& t) const {
    if (t.kind == TokenKind::end) return "found end of line";
    if (t.kind != TokenKind::word) return fmt::format("found '{}'", shorten(t.text));
    std::string word = word_as_written(t);
    // A word right after a bare number was read as its unit if it could be one.
    bool after_bare_number = &t == &toks_[at_] && at_ > 0 && toks_[at_ - 1].kind == TokenKind::number &&
                             toks_[at_ - 1].suffix().empty();
    if (after_bare_number && !is_keyword(t.text)) return fmt::format("found '{}', which is not a unit", word);
    return fmt::format("found '{}'", word);
  }

  [[noreturn]] void fail_expected(const Text& what) const {
    fail(peek().loc, fmt::format("expected {}, {}", what.str(), found(peek())));
  }
  const Token& expect(TokenKind kind, const Text& what) {
    if (peek().kind != kind) fail_expected(what);
    return take();
  }
  void expect_end(const Text& what = "end of line") const {
    if (peek().kind != TokenKind::end) fail_expected(what);
  }
  const Token& take_name(const Text& what) {
    if (peek().kind != TokenKind::word || !detail::is_name(peek().text)) fail_expected(what);
    return take();
  }

  // `NUMBER [PREFIX][UNIT]`, glued or after a space.
  RawValue take_value(const Text& what) {
    const Token& t = peek();
    if (t.kind != TokenKind::number) fail_expected(what);
    take();
    RawValue v;
    v.loc = t.loc;
    v.number_text = t.number_part();
    std::string_view suffix = t.suffix();
    if (!suffix.empty()) {
      auto unit = parse_unit_suffix(suffix);
      if (!unit) {
        SourceLoc at{t.loc.line, t.loc.col + t.number_size};  // the number part is ASCII
        fail(at, fmt::format("unknown unit '{}' in '{}'", shorten(suffix), shorten(t.text)));
      }
      v.unit = *unit;
      v.unit_text = suffix;
    } else if (const Token& u = peek(); u.kind == TokenKind::word || u.kind == TokenKind::percent) {
      if (auto unit = parse_unit_suffix(u.text)) {
        take();
        v.unit = *unit;
        v.unit_text = u.text;
        v.spaced = true;
      }
    }
    return v;
  }

  // `X.v`, `X.i`, `X.p`, `@n`, `@a - @b`.
  PendingObservable parse_observable() {
    static constexpr std::string_view kWhat = "an observable (X.v, X.i, X.p, @n or @a - @b)";
    PendingObservable p;
    const Token& t = peek();
    p.loc = t.loc;
    if (t.kind == TokenKind::at_sign) {
      take();
      const Token& a = take_name("a node name after '@'");
      p.a = {a.text, a.loc};
      p.kind = ObservableKind::node_voltage;
      if (accept(TokenKind::minus)) {
        if (peek().kind != TokenKind::at_sign) fail_expected("'@node' after '-'");
        take();
        const Token& b = take_name("a node name after '@'");
        p.b = {b.text, b.loc};
        p.kind = ObservableKind::node_difference;
      }
      return p;
    }
    if (t.kind != TokenKind::word || !detail::is_name(t.text)) fail_expected(kWhat);
    take();
    p.a = {t.text, t.loc};
    if (!accept(TokenKind::dot)) {
      p.bare = true;
      return p;
    }
    const Token& q = peek();
    if (q.kind == TokenKind::word && q.text == "v") p.kind = ObservableKind::element_voltage;
    else if (q.kind == TokenKind::word && q.text == "i") p.kind = ObservableKind::element_current;
    else if (q.kind == TokenKind::word && q.text == "p") p.kind = ObservableKind::element_power;
    else fail_expected(Text("v, i or p after '", t.text, ".'"));
    take();
    return p;
  }

  // `TARGET FROM .. TO [step S]`, or `TARGET=FROM..TO [step S]` on the command line.
  PendingSweep parse_sweep_body(bool argument) {
    PendingSweep s;
    const Token& n = take_name("a sweep target (SOURCE.phase, STORAGE.initial or SWITCH.closes)");
    s.element = {n.text, n.loc};
    s.loc = n.loc;
    if (!accept(TokenKind::dot)) fail_expected(Text("'.phase', '.initial' or '.closes' after '", n.text, "'"));
    const Token& m = peek();
    if (m.kind == TokenKind::word && m.text == "phase") s.member = SweepMember::phase;
    else if (m.kind == TokenKind::word && m.text == "initial") s.member = SweepMember::initial;
    else if (m.kind == TokenKind::word && m.text == "closes") s.member = SweepMember::closes;
    else fail_expected(Text("phase, initial or closes after '", n.text, ".'"));
    s.member_text = m.text;
    take();
    if (argument) expect(TokenKind::equal, Text("'=' after '", n.text, ".", m.text));
    s.from = take_value("the start of the sweep range");
    expect(TokenKind::range, "'..' between the two ends of the sweep range");
    s.to = take_value("the end of the sweep range");
    if (at_word("step")) {
      take();
      s.step = take_value("a step");
    }
    expect_end(s.step ? "end of line" : "'step S' or end of line");
    return s;
  }

  std::string_view text_;
  std::vector<Token> toks_;  // the current statement, ending in an `end` token
  std::size_t at_ = 0;
};

// ---------------------------------------------------------------------------------------------
// The file parser

class FileParser : Reader {
 public:
  explicit FileParser(std::shared_ptr<const SourceText> source)
      : Reader(source->text()), source_(source), builder_(source) {
    // Every element line holds a ':' (and is a line): a cheap upper estimate of the element
    // count spares a large file the regrowing of the circuit's tables.
    std::string_view t = source->text();
    auto colons = static_cast<std::size_t>(std::count(t.begin(), t.end(), ':'));
    std::size_t estimate = std::min(colons, source->line_count());
    builder_.reserve(estimate, estimate + 1);
  }

  Circuit run();

 private:
  struct SenseRef {
    bool given = false;
    bool nodes = false;  // vcvs/vccs: a -> b; ccvs/cccs: element a
    NameRef a, b;
  };
  struct PendingSense {
    ElementId id;
    SenseRef ref;
  };
  struct PendingClaim {
    Claim claim;
    std::optional<PendingObservable> observable;
    std::optional<NameRef> element;
  };

  // Lookups during resolution: the builder's tables, and the names met on lines that failed.
  class ParseScope : public Scope {
   public:
    explicit ParseScope(const FileParser& p) : p_(p) {}
    Lookup element(std::string_view name) const override {
      if (auto id = p_.builder_.find_element(name)) return {*id, false};
      return {kNone, p_.broken_elements_.count(name) > 0};
    }
    const Element& element_at(ElementId id) const override { return p_.builder_.elements().at(id); }
    Lookup node(std::string_view name) const override {
      if (auto id = p_.builder_.find_node(name)) return {*id, false};
      return {kNone, p_.broken_nodes_.count(name) > 0};
    }
    std::string_view reference() const override { return p_.ground_name_; }

   private:
    const FileParser& p_;
  };

  void report(SourceLoc loc, std::string message) { errors_.push_back({loc, std::move(message)}); }

  void parse_statement();
  bool parse_directive(const Token& keyword);
  void parse_element();
  NodeId take_node();
  Waveform parse_waveform(const KindInfo& info);
  void parse_attributes(Element& e, const KindInfo& info, std::string_view expected, SenseRef& sense, bool& gain);
  void note_broken_element();

  void once(const std::optional<std::uint32_t>& line, const Token& keyword) const {
    if (line)
      fail(keyword.loc, fmt::format("'{}' may be given only once; it is already given on line {}", keyword.text, *line));
  }
  void parse_title(const Token& keyword);
  void parse_ground(const Token& keyword);
  void parse_window(const Token& keyword);
  void parse_resolution(const Token& keyword);
  void parse_watch();
  void parse_sweep();
  void parse_expect(const Token& keyword);
  void parse_golden_tolerance(const Token& keyword);
  int take_segment();
  std::string span_text(std::size_t first, std::size_t last) const;

  void resolve_references();
  template <typename F>
  void resolving(F&& f) {
    try {
      f();
    } catch (const StatementError& e) {
      report(e.loc, e.message);
    } catch (const Silenced&) {
    }
  }

  std::shared_ptr<const SourceText> source_;
  CircuitBuilder builder_;
  std::vector<StatementError> errors_;

  // Names are looked up in the builder's own tables; only names met on lines that failed are
  // kept here (with the line, for duplicates), so that their later uses are not reported again.
  std::unordered_map<std::string_view, std::uint32_t> broken_elements_;
  std::unordered_set<std::string_view> broken_nodes_;
  std::size_t element_lines_ = 0;
  bool element_line_failed_ = false;
  bool in_element_ = false;  // the statement being read is an element line

  std::optional<std::uint32_t> title_line_, ground_line_, window_line_, resolution_line_, golden_line_;
  std::string_view ground_name_ = "gnd";
  SourceLoc ground_name_loc_, ground_loc_;

  std::vector<PendingSense> senses_;
  std::vector<PendingObservable> watches_;
  std::vector<PendingSweep> sweeps_;
  std::vector<PendingClaim> claims_;
};

Circuit FileParser::run() {
  if (auto fault = detail::find_text_fault(text_)) throw InputError(make_diagnostic(*source_, fault->loc, fault->message));

  detail::Lexer lexer(text_);
  std::optional<detail::LexError> lex_error;
  bool stopped = false;
  while (lexer.next_statement(toks_, lex_error)) {
    if (errors_.size() >= kMaxDiagnostics) {
      stopped = true;
      break;
    }
    at_ = 0;
    in_element_ = toks_.size() >= 2 && toks_[0].kind == TokenKind::word && toks_[1].kind == TokenKind::colon;
    if (lex_error) {
      if (in_element_) {
        ++element_lines_;
        note_broken_element();
      }
      report(lex_error->loc, lex_error->message);
      continue;
    }
    try {
      parse_statement();
    } catch (const StatementError& e) {
      report(e.loc, e.message);
      if (in_element_) note_broken_element();
    }
  }
  if (!stopped && errors_.size() < kMaxDiagnostics) resolve_references();

  if (errors_.empty()) {
    if (ground_line_) builder_.set_ground(ground_name_, ground_loc_);
    return std::move(builder_).build();
  }
  // File order; messages about the file as a whole ({0, 0}) come last.
  auto key = [](const StatementError& e) {
    return std::pair(e.loc.line == 0 ? std::numeric_limits<std::uint32_t>::max() : e.loc.line, e.loc.col);
  };
  std::stable_sort(errors_.begin(), errors_.end(), [&](const auto& x, const auto& y) { return key(x) < key(y); });
  std::vector<Diagnostic> diagnostics;
  std::size_t shown = std::min(errors_.size(), kMaxDiagnostics);
  for (std::size_t i = 0; i < shown; ++i) diagnostics.push_back(make_diagnostic(*source_, errors_[i].loc, errors_[i].message));
  if (stopped || errors_.size() > kMaxDiagnostics)
    diagnostics.push_back(make_diagnostic(*source_, {}, fmt::format("too many errors; stopped after {}", kMaxDiagnostics)));
  throw InputError(std::move(diagnostics));
}

void FileParser::parse_statement() {
  if (in_element_) {
    parse_element();
    return;
  }
  const Token& first = take();
  if (first.kind == TokenKind::word && parse_directive(first)) return;
  fail(first.loc, fmt::format("expected an element (NAME: kind a -> b, value) or a directive, found '{}'",
                              text_as_written(first)));
}

// Reads the directive `keyword` begins; false when the word is not a directive.
bool FileParser::parse_directive(const Token& keyword) {
  std::string_view w = keyword.text;
  if (w == "title") parse_title(keyword);
  else if (w == "ground") parse_ground(keyword);
  else if (w == "window") parse_window(keyword);
  else if (w == "resolution") parse_resolution(keyword);
  else if (w == "watch") parse_watch();
  else if (w == "sweep") parse_sweep();
  else if (w == "expect") parse_expect(keyword);
  else if (w == "golden-tolerance") parse_golden_tolerance(keyword);
  else return false;
  return true;
}

// After a failed element line, remember its name and nodes, so that later references to them
// do not repeat the failure as "unknown element" or "unknown node".
void FileParser::note_broken_element() {
  element_line_failed_ = true;
  const Token& name = toks_[0];
  if (detail::is_name(name.text) && !builder_.find_element(name.text))
    broken_elements_.try_emplace(name.text, name.loc.line);
  for (std::size_t i = 1; i + 1 < toks_.size(); ++i) {
    if (toks_[i].kind != TokenKind::arrow) continue;
    for (const Token* t : {&toks_[i - 1], &toks_[i + 1]})
      if (t->kind == TokenKind::word && detail::is_name(t->text) && !builder_.find_node(t->text))
        broken_nodes_.insert(t->text);
  }
}

NodeId FileParser::take_node() {
  const Token& t = peek();
  if (t.kind == TokenKind::at_sign)
    fail(t.loc, "an element's nodes are bare names here: write 'a', not '@a'");
  if (t.kind != TokenKind::word || !detail::is_name(t.text)) fail_expected("a node name");
  take();
  return builder_.node(t.text);
}

void FileParser::parse_element() {
  ++element_lines_;
  const Token& name = take();
  take();  // ':'
  if (!detail::is_name(name.text)) {
    fail(name.loc, fmt::format("'{}' is not a valid name: a name starts with a letter or '_' and holds only "
                               "letters, digits and '_'",
                               shorten(name.text)));
  }
  // A duplicate is found when the element is added, at the end of its line; one whose first
  // line failed is found here.
  if (!broken_elements_.empty()) {
    if (auto it = broken_elements_.find(name.text); it != broken_elements_.end()) {
      report(name.loc, fmt::format("duplicate element name '{}': the first '{}' is on line {}", name.text, name.text,
                                   it->second));
    }
  }

  const Token& kind_token = peek();
  const KindInfo* info = kind_token.kind == TokenKind::word ? find_kind(kind_token.text) : nullptr;
  if (!info) {
    if (kind_token.kind == TokenKind::word)
      fail(kind_token.loc, fmt::format("unknown element kind '{}'; the kinds are {}", word_as_written(kind_token), kKindList));
    fail_expected(fmt::format("an element kind ({})", kKindList));
  }
  take();

  Element e;
  e.name.assign(name.text);
  e.kind = info->kind;
  e.loc = name.loc;
  e.value_loc = kind_token.loc;
  const Token& first = peek();
  e.pos = take_node();
  expect(TokenKind::arrow, Text("'->' between the two nodes of ", name.text));
  const Token& second = peek();
  e.neg = take_node();
  if (first.text == second.text) {
    report(second.loc, fmt::format("both ends of {} are node '{}'; an element connects two different nodes",
                                   name.text, second.text));
  }

  SenseRef sense;
  bool gain = false;
  std::string_view expected = "',' or end of line";
  switch (info->kind) {
    case ElementKind::resistor:
    case ElementKind::capacitor:
    case ElementKind::inductor: {
      Dimension dim = info->kind == ElementKind::resistor    ? Dimension::resistance
                      : info->kind == ElementKind::capacitor ? Dimension::capacitance
                                                             : Dimension::inductance;
      expect(TokenKind::comma, Text("',' and ", dimension_noun(dim), " after the nodes"));
      RawValue v = take_value(dimension_noun(dim));
      e.value = to_si(v, dim, info->noun);
      e.value_loc = v.loc;
      if (!(e.value > 0)) {
        // dimension_noun gives "a resistance"; drop the article after "positive".
        std::string_view noun = dimension_noun(dim);
        noun.remove_prefix(noun.find(' ') + 1);
        report(v.loc, fmt::format("{} needs a positive {}, found '{}'", info->noun, noun, v.quote()));
      }
      break;
    }
    case ElementKind::voltage_source:
    case ElementKind::current_source:
      expect(TokenKind::comma, "',' and a waveform after the nodes");
      e.value_loc = peek().loc;
      e.waveform = parse_waveform(*info);
      expected = "'+', ',' or end of line";
      break;
    default: break;
  }

  parse_attributes(e, *info, expected, sense, gain);

  if (e.kind == ElementKind::switch_ && e.events.empty()) {
    report(name.loc, fmt::format("switch {} never changes state: give it a 'closes at' or 'opens at' event, "
                                 "or replace it by a resistor",
                                 name.text));
  }
  bool controlled = e.kind == ElementKind::vcvs || e.kind == ElementKind::vccs || e.kind == ElementKind::ccvs ||
                    e.kind == ElementKind::cccs;
  if (controlled && !gain) {
    std::string_view list = info->attribute_list;
    report(name.loc, fmt::format("{} {} needs '{}'", info->keyword, name.text, list.substr(0, list.find(','))));
  }
  if (controlled && !sense.given) {
    std::string_view list = info->attribute_list;
    report(name.loc, fmt::format("{} {} needs '{}'", info->keyword, name.text, list.substr(list.find(", ") + 2)));
  }

  std::optional<ElementId> id = builder_.add_element(std::move(e));
  if (!id) {
    const Element& first_one = builder_.elements().at(*builder_.find_element(name.text));
    report(name.loc, fmt::format("duplicate element name '{}': the first '{}' is on line {}", name.text, name.text,
                                 first_one.loc.line));
    return;
  }
  if (sense.given) senses_.push_back({*id, sense});
}

Waveform FileParser::parse_waveform(const KindInfo& info) {
  const Dimension level = info.kind == ElementKind::voltage_source ? Dimension::voltage : Dimension::current;
  Waveform w;
  // A loop, not recursion: `dc 1 + dc 1 + ...` may be as long as the line.
  do {
    const Token& t = peek();
    std::string_view k = t.kind == TokenKind::word ? t.text : std::string_view{};
    if (k == "dc") {
      take();
      RawValue v = take_value(dimension_noun(level));
      w.dc += to_si(v, level, Text("'dc' on ", info.noun));
    } else if (k == "cosine" || k == "sine") {
      take();
      Sinusoid s;
      s.loc = t.loc;
      RawValue a = take_value(Text("an amplitude (", dimension_noun(level), ")"));
      s.amplitude = to_si(a, level, info.noun, true);
      RawValue f = take_value(Text("a frequency after the amplitude of '", k, "'"));
      s.frequency = to_si(f, Dimension::frequency, Text("'", k, "' (after its amplitude)"));
      if (s.frequency == 0)
        report(f.loc, "zero frequency on a sinusoid: a constant is written 'dc LEVEL'");
      else if (s.frequency < 0)
        report(f.loc, fmt::format("a sinusoid needs a positive frequency, found '{}'", f.quote()));
      if (at_word("phase")) {
        take();
        s.phase = to_si(take_value("an angle"), Dimension::angle, "'phase'");
      }
      // Stored against a cosine: sin(x) = cos(x − π/2).
      if (k == "sine") s.phase -= std::numbers::pi / 2;
      w.sinusoids.push_back(s);
    } else if (k == "step") {
      take();
      Step s;
      s.loc = t.loc;
      s.level = to_si(take_value(dimension_noun(level)), level, Text("'step' on ", info.noun));
      if (!at_word("at")) fail_expected("'at TIME' after the level of 'step'");
      take();
      RawValue at = take_value("a time");
      s.time = to_si(at, Dimension::time, "'at'");
      if (std::string fault = time_limit_fault(at, s.time); !fault.empty()) report(at.loc, std::move(fault));
      w.steps.push_back(s);
    } else if (t.kind == TokenKind::number) {
      RawValue v = take_value("");
      fail(t.loc, fmt::format("expected a waveform (dc, cosine, sine or step), found '{}'; a constant is written "
                              "'dc {}'",
                              v.quote(), v.quote()));
    } else {
      fail_expected("a waveform (dc, cosine, sine or step)");
    }
  } while (accept(TokenKind::plus));
  return w;
}

void FileParser::parse_attributes(Element& e, const KindInfo& info, std::string_view expected, SenseRef& sense,
                                  bool& gain) {
  std::uint32_t seen = 0;
  RawValue last_event;  // time of the previous switch event, for messages
  while (peek().kind != TokenKind::end) {
    if (peek().kind != TokenKind::comma) fail_expected(expected);
    expected = "',' or end of line";
    take();
    const Token& keyword = peek();
    std::optional<Attr> attr = keyword.kind == TokenKind::word ? find_attr(keyword.text) : std::nullopt;
    if (!attr || !(info.attributes & bit(*attr))) {
      if (info.attributes == 0) fail(keyword.loc, fmt::format("{} takes no attributes, {}", info.noun, found(keyword)));
      if (keyword.kind == TokenKind::word)
        fail(keyword.loc, fmt::format("{} takes no attribute '{}'; its attributes are: {}", info.noun,
                                      word_as_written(keyword), info.attribute_list));
      fail_expected(Text("an attribute of ", info.noun, " (", info.attribute_list, ")"));
    }
    take();
    const bool event = *attr == Attr::closes || *attr == Attr::opens;
    if (!event && (seen & bit(*attr))) {
      report(keyword.loc, fmt::format("'{}' is given twice on {}; {} takes each of these once: {}", keyword.text,
                                      e.name, info.noun, info.attribute_list));
    }
    seen |= bit(*attr);
    const Text place("'", keyword.text, "' on ", info.noun);
    auto rating = [&](Dimension dim, RatingKind kind) {
      RawValue v = take_value(dimension_noun(dim));
      Rating r{kind, to_si(v, dim, place), keyword.loc};
      if (!(r.limit > 0)) report(v.loc, fmt::format("a rating must be positive, found '{}'", v.quote()));
      e.ratings.push_back(r);
    };
    switch (*attr) {
      case Attr::rated:
        switch (e.kind) {
          case ElementKind::resistor: rating(Dimension::power, RatingKind::mean_power); break;
          case ElementKind::capacitor: rating(Dimension::voltage, RatingKind::peak_voltage); break;
          default: rating(Dimension::current, RatingKind::peak_current); break;
        }
        break;
      case Attr::pulse_rated: rating(Dimension::energy, RatingKind::energy); break;
      case Attr::rated_i2t: rating(Dimension::action, RatingKind::i2t); break;
      case Attr::initial: {
        Dimension dim = e.kind == ElementKind::capacitor ? Dimension::voltage : Dimension::current;
        e.initial = to_si(take_value(dimension_noun(dim)), dim, place);
        break;
      }
      case Attr::closes:
      case Attr::opens: {
        if (!at_word("at")) fail_expected(Text("'at' after '", keyword.text, "'"));
        take();
        RawValue v = take_value("a time");
        SwitchEvent ev{to_si(v, Dimension::time, Text("'", keyword.text, " at'")), *attr == Attr::closes,
                       keyword.loc};
        if (std::string fault = time_limit_fault(v, ev.time); !fault.empty()) {
          report(v.loc, std::move(fault));
        } else if (ev.time < 0) {
          report(v.loc, fmt::format("a switch event cannot happen before t = 0, found '{}'", v.quote()));
        } else if (!e.events.empty()) {
          const SwitchEvent& prev = e.events.back();
          if (prev.closes == ev.closes) {
            report(keyword.loc, fmt::format("{} already {} at {}; its events must alternate between 'closes at' "
                                            "and 'opens at'",
                                            e.name, keyword.text, last_event.quote()));
          } else if (!(ev.time > prev.time)) {
            report(v.loc, fmt::format("switch events must come in time order: '{}' is not after '{}'", v.quote(),
                                      last_event.quote()));
          }
        }
        e.events.push_back(ev);
        last_event = v;
        break;
      }
      case Attr::on: {
        RawValue v = take_value("a resistance");
        e.r_on = to_si(v, Dimension::resistance, place);
        if (e.r_on < 0) report(v.loc, fmt::format("'on' needs a resistance of 0 or more, found '{}'", v.quote()));
        break;
      }
      case Attr::off: {
        RawValue v = take_value("a resistance");
        e.r_off = to_si(v, Dimension::resistance, place);
        if (!(e.r_off > 0)) report(v.loc, fmt::format("'off' needs a positive resistance, found '{}'", v.quote()));
        break;
      }
      case Attr::gain: {
        Dimension dim = gain_dimension(e.kind);
        RawValue v = take_value(dimension_noun(dim));
        e.value = to_si(v, dim, place);
        e.value_loc = v.loc;
        gain = true;
        break;
      }
      case Attr::sense: {
        sense.given = true;
        if (e.kind == ElementKind::vcvs || e.kind == ElementKind::vccs) {
          // `@` is optional on sense nodes.
          sense.nodes = true;
          accept(TokenKind::at_sign);
          const Token& a = take_name("a node name after 'sense'");
          expect(TokenKind::arrow, "'->' between the two sense nodes");
          accept(TokenKind::at_sign);
          const Token& b = take_name("a node name after '->'");
          sense.a = {a.text, a.loc};
          sense.b = {b.text, b.loc};
          if (a.text == b.text)
            report(b.loc, fmt::format("{} senses node '{}' against itself; name two different nodes", e.name, b.text));
        } else {
          if (peek().kind == TokenKind::at_sign)
            fail(peek().loc, fmt::format("{} senses the current of an element: write 'sense ELEMENT'", info.noun));
          const Token& x = take_name("an element name after 'sense'");
          sense.a = {x.text, x.loc};
          if (x.text == e.name) report(x.loc, fmt::format("{} cannot sense its own current", e.name));
        }
        break;
      }
    }
  }
}

void FileParser::parse_title(const Token& keyword) {
  once(title_line_, keyword);
  const Token& s = peek();
  if (s.kind != TokenKind::string) fail_expected("a quoted title, as in title \"Valve coil\"");
  take();
  expect_end();
  std::string title;
  title.reserve(s.text.size());
  for (std::size_t i = 1; i + 1 < s.text.size(); ++i) {
    if (s.text[i] == '\\') ++i;  // an escape: the lexer admits only a quote or a backslash after it
    title.push_back(s.text[i]);
  }
  builder_.set_title(std::move(title));
  title_line_ = keyword.loc.line;
}

void FileParser::parse_ground(const Token& keyword) {
  once(ground_line_, keyword);
  if (peek().kind == TokenKind::at_sign) fail(peek().loc, "the reference node is a bare name here: write 'n', not '@n'");
  const Token& n = take_name("a node name");
  expect_end();
  ground_name_ = n.text;
  ground_name_loc_ = n.loc;
  ground_loc_ = keyword.loc;
  ground_line_ = keyword.loc.line;
}

void FileParser::parse_window(const Token& keyword) {
  once(window_line_, keyword);
  RawValue from = take_value("the start of the window (a time)");
  expect(TokenKind::range, "'..' between the start and the end of the window");
  RawValue to = take_value("the end of the window (a time)");
  expect_end();
  Window w{to_si(from, Dimension::time, "'window'"), to_si(to, Dimension::time, "'window'"), keyword.loc};
  // One message per window: a start beyond the limit makes the end's limit and order moot.
  if (std::string fault = time_limit_fault(from, w.from); !fault.empty()) {
    report(from.loc, std::move(fault));
  } else if (std::string end_fault = time_limit_fault(to, w.to); !end_fault.empty()) {
    report(to.loc, std::move(end_fault));
  } else {
    if (w.from < 0) report(from.loc, fmt::format("the window starts at t = 0 or later, found '{}'", from.quote()));
    if (!(w.from < w.to))
      report(to.loc,
             fmt::format("the window must end after it starts: '{}' is not after '{}'", to.quote(), from.quote()));
  }
  builder_.set_window(w);
  window_line_ = keyword.loc.line;
}

void FileParser::parse_resolution(const Token& keyword) {
  once(resolution_line_, keyword);
  RawValue v = take_value("a time step");
  expect_end();
  double dt = to_si(v, Dimension::time, "'resolution'");
  if (!(dt > 0)) report(v.loc, fmt::format("'resolution' needs a positive time step, found '{}'", v.quote()));
  if (std::string fault = time_limit_fault(v, dt); !fault.empty()) report(v.loc, std::move(fault));
  builder_.set_resolution(dt, keyword.loc);
  resolution_line_ = keyword.loc.line;
}

void FileParser::parse_watch() {
  do {
    watches_.push_back(parse_observable());
  } while (accept(TokenKind::comma));
  expect_end("',' or end of line");
}

void FileParser::parse_sweep() { sweeps_.push_back(parse_sweep_body(false)); }

void FileParser::parse_golden_tolerance(const Token& keyword) {
  once(golden_line_, keyword);
  RawValue v = take_value("a relative tolerance (a plain number, or a percentage)");
  expect_end();
  double rel = 0.0;
  if (v.unit.dimension == Dimension::percent) {
    // A percentage is its number × 10⁻², converted exactly like a prefix: `0.001 %` is 1e-5.
    RawValue fraction = v;
    fraction.unit.exponent -= 2;
    fraction.unit.dimension.reset();
    rel = to_si(fraction, Dimension::ratio, "'golden-tolerance'");
  } else if (v.unit.dimension) {
    fail(v.loc, fmt::format("'{}' is {}, but 'golden-tolerance' needs a plain number or a percentage", v.quote(),
                            dimension_noun(*v.unit.dimension)));
  } else {
    rel = to_si(v, Dimension::ratio, "'golden-tolerance'");
  }
  if (!(rel > 0)) report(v.loc, fmt::format("'golden-tolerance' needs a positive tolerance, found '{}'", v.quote()));
  // At 100 % of each column's peak, a golden file of zeros would pass every waveform.
  else if (!(rel < 1))
    report(v.loc, fmt::format("'golden-tolerance' must be below 1 (100 %), found '{}': at 100 % of each column's peak "
                              "a golden file of zeros passes every waveform",
                              v.quote()));
  builder_.set_golden_tolerance(rel);
  golden_line_ = keyword.loc.line;
}

int FileParser::take_segment() {
  const Token& t = peek();
  static constexpr std::string_view kWhat = "a segment number (1, 2, ...)";
  if (t.kind != TokenKind::number || !t.suffix().empty()) fail_expected(kWhat);
  std::string_view s = t.number_part();
  int k = 0;
  auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), k);
  if (ec != std::errc() || end != s.data() + s.size()) fail_expected(kWhat);
  take();
  if (k < 1) report(t.loc, fmt::format("segments are numbered from 1, found '{}'", t.text));
  return k;
}

// The source text of tokens first..last; pieces on different physical lines are joined by a space.
std::string FileParser::span_text(std::size_t first, std::size_t last) const {
  std::string out;
  std::size_t i = first;
  while (i <= last) {
    std::size_t j = i;
    while (j + 1 <= last && toks_[j + 1].loc.line == toks_[i].loc.line) ++j;
    const char* begin = toks_[i].text.data();
    const char* end = toks_[j].text.data() + toks_[j].text.size();
    if (!out.empty()) out += ' ';
    out.append(begin, static_cast<std::size_t>(end - begin));
    i = j + 1;
  }
  return out;
}

void FileParser::parse_expect(const Token& keyword) {
  PendingClaim pending;
  Claim& c = pending.claim;
  c.loc = keyword.loc;
  const std::size_t first = at_;
  const Token& q = peek();
  Dimension dim = Dimension::ratio;
  if (q.kind == TokenKind::at_sign || (q.kind == TokenKind::word && peek(1).kind == TokenKind::dot)) {
    // `OBS at TIME`; a name followed by '.' is an observable even when it is spelt like a keyword.
    pending.observable = parse_observable();
    if (!at_word("at")) fail_expected("'at TIME' after the observable");
    take();
    c.quantity = ClaimQuantity::at_time;
    RawValue at = take_value("a time");
    c.time = to_si(at, Dimension::time, "'at'");
    if (std::string fault = time_limit_fault(at, c.time); !fault.empty()) report(at.loc, std::move(fault));
    dim = observable_dimension(pending.observable->kind);
  } else if (q.kind == TokenKind::word) {
    std::string_view k = q.text;
    take();
    if (k == "tau" || k == "rth" || k == "vth") {
      c.quantity = k == "tau" ? ClaimQuantity::tau : k == "rth" ? ClaimQuantity::rth : ClaimQuantity::vth;
      dim = k == "tau" ? Dimension::time : k == "rth" ? Dimension::resistance : Dimension::voltage;
      if (accept(TokenKind::lbracket)) {
        c.segment = take_segment();
        expect(TokenKind::rbracket, "']' after the segment number");
      }
    } else if (k == "peak" || k == "max" || k == "min" || k == "final" || k == "amplitude" || k == "phase" ||
               k == "worst") {
      if (k == "worst") {
        if (!at_word("peak")) fail_expected("'peak' after 'worst'");
        take();
      }
      c.quantity = k == "peak"        ? ClaimQuantity::peak
                   : k == "max"       ? ClaimQuantity::max
                   : k == "min"       ? ClaimQuantity::min
                   : k == "final"     ? ClaimQuantity::final_value
                   : k == "amplitude" ? ClaimQuantity::amplitude
                   : k == "phase"     ? ClaimQuantity::phase
                                      : ClaimQuantity::worst_peak;
      pending.observable = parse_observable();
      const PendingObservable& o = *pending.observable;
      if ((k == "amplitude" || k == "phase") && !o.bare && o.kind == ObservableKind::element_power) {
        fail(o.loc, fmt::format("'{}' is not defined for a power: '{}.p' has no steady-state fundamental to measure", k,
                                o.a.name));
      }
      dim = k == "phase" ? Dimension::angle : observable_dimension(o.kind);
    } else if (k == "energy" || k == "i2t") {
      c.quantity = k == "energy" ? ClaimQuantity::energy : ClaimQuantity::i2t;
      dim = k == "energy" ? Dimension::energy : Dimension::action;
      if (peek().kind == TokenKind::at_sign) fail(peek().loc, fmt::format("'{}' takes an element, not a node", k));
      const Token& x = take_name(Text("an element name after '", k, "'"));
      pending.element = NameRef{x.text, x.loc};
    } else {
      fail(q.loc, fmt::format("unknown claim quantity '{}'; expected tau, rth, vth, peak, max, min, final, amplitude, "
                              "phase, energy, i2t, worst peak, or OBS at TIME",
                              word_as_written(q)));
    }
  } else {
    fail_expected("a claim, such as 'tau = 4.7 ms ± 1%'");
  }
  c.dimension = dim;

  const std::size_t op_index = at_;
  const Token& op = peek();
  switch (op.kind) {
    case TokenKind::equal: c.op = CompareOp::eq; break;
    case TokenKind::less: c.op = CompareOp::lt; break;
    case TokenKind::less_equal: c.op = CompareOp::le; break;
    case TokenKind::greater: c.op = CompareOp::gt; break;
    case TokenKind::greater_equal: c.op = CompareOp::ge; break;
    default: fail_expected("a comparison (=, <, <=, >, >=)");
  }
  take();
  std::string place = fmt::format("'{}'", span_text(first, op_index - 1));
  RawValue v = take_value(dimension_noun(dim));
  c.value = to_si(v, dim, place);
  if (peek().kind == TokenKind::plus_minus) {
    const Token& pm = take();
    RawValue tol = take_value("a tolerance");
    if (tol.unit.dimension == Dimension::percent) {
      c.tolerance = to_si(tol, Dimension::percent, "a tolerance");
      c.tolerance_is_percent = true;
    } else {
      c.tolerance = to_si(tol, dim, fmt::format("the tolerance of {}", place));
    }
    if (c.op != CompareOp::eq)
      report(pm.loc, fmt::format("a tolerance goes only with '='; '{}' is already a bound", op.text));
    else if (!(c.tolerance > 0))
      report(tol.loc, fmt::format("a tolerance must be positive, found '{}'", tol.quote()));
  } else if (c.op == CompareOp::eq) {
    fail_expected(fmt::format("a tolerance after '= {}', such as '± 1%'", v.quote()));
  }
  const std::size_t last = at_ - 1;
  expect_end();
  c.text = span_text(first, last);
  claims_.push_back(std::move(pending));
}

void FileParser::resolve_references() {
  if (element_lines_ == 0) {
    if (errors_.empty()) report({}, "the file holds no circuit");
    return;
  }
  // Whether any element touches the reference node; unknowable when an element line failed.
  // Only element lines create nodes, so a reference node that exists is one an element touches.
  if (!element_line_failed_ && !builder_.find_node(ground_name_)) {
    if (ground_line_) {
      report(ground_name_loc_, fmt::format("no element connects to the reference node '{}'; connect one, or name "
                                           "another reference with 'ground NODE'",
                                           ground_name_));
    } else {
      report({}, fmt::format("no element connects to the reference node '{}'; connect one, or name the reference "
                             "with 'ground NODE'",
                             ground_name_));
    }
  }
  builder_.node(ground_name_);  // so that references to the reference node resolve

  ParseScope scope(*this);
  for (const PendingSense& s : senses_) {
    resolving([&] {
      Element& e = builder_.element(s.id);
      if (s.ref.nodes) {
        NodeId a = resolve_node(scope, s.ref.a);
        NodeId b = resolve_node(scope, s.ref.b);
        e.sense_pos = a;
        e.sense_neg = b;
      } else {
        e.sense_element = resolve_element(scope, s.ref.a);
      }
    });
  }
  for (const PendingObservable& w : watches_) resolving([&] { builder_.add_watch(resolve_observable(scope, w)); });
  for (PendingClaim& p : claims_) {
    resolving([&] {
      if (p.observable) p.claim.observable = resolve_observable(scope, *p.observable);
      if (p.element) p.claim.element = resolve_element(scope, *p.element);
      builder_.add_claim(std::move(p.claim));
    });
  }
  for (const PendingSweep& s : sweeps_) resolving([&] { builder_.add_sweep(resolve_sweep(scope, s)); });
}

// ---------------------------------------------------------------------------------------------
// Command-line arguments, read with the same code against a finished circuit

class CircuitScope : public Scope {
 public:
  explicit CircuitScope(const Circuit& c) : c_(c) {}
  Lookup element(std::string_view name) const override { return {c_.find_element(name).value_or(kNone), false}; }
  const Element& element_at(ElementId id) const override { return c_.element(id); }
  Lookup node(std::string_view name) const override { return {c_.find_node(name).value_or(kNone), false}; }
  std::string_view reference() const override { return c_.nodes().at(c_.ground()); }

 private:
  const Circuit& c_;
};

class ArgumentReader : Reader {
 public:
  ArgumentReader(std::string_view text, std::string_view option) : Reader(text), option_(option) {}

  Observable observable(const Circuit& circuit) {
    return guarded([&] {
      PendingObservable p = parse_observable();
      expect_end();
      Observable o = resolve_observable(CircuitScope(circuit), p);
      o.loc = {};
      return o;
    });
  }

  Sweep sweep(const Circuit& circuit) {
    return guarded([&] {
      PendingSweep p = parse_sweep_body(true);
      Sweep s = resolve_sweep(CircuitScope(circuit), p);
      // Checked here for an argument, which has no file position for the worst-case search to
      // name; a file's sweep is refused by that search, at the sweep's line.
      if (p.member == SweepMember::closes) check_closes_slot(circuit.element(s.element), s, p);
      s.loc = {};
      return s;
    });
  }

 private:
  template <typename F>
  auto guarded(F&& f) -> decltype(f()) {
    if (auto fault = detail::find_text_fault(text_)) throw argument_error(option_, "the argument is not text");
    detail::Lexer lexer(text_);
    std::optional<detail::LexError> error;
    if (!lexer.next_statement(toks_, error)) toks_.assign(1, Token{});
    if (error) throw argument_error(option_, error->message);
    std::vector<Token> rest;
    if (lexer.next_statement(rest, error)) throw argument_error(option_, "expected a single line");
    try {
      return f();
    } catch (const StatementError& e) {
      throw argument_error(option_, e.message);
    }
  }

  std::string_view option_;
};

Circuit parse_source(std::string text, std::string path) {
  // A byte-order mark says only "UTF-8"; columns start after it.
  if (std::string_view(text).substr(0, 3) == "\xEF\xBB\xBF") text.erase(0, 3);
  auto source = std::make_shared<const SourceText>(std::move(path), std::move(text));
  return FileParser(source).run();
}

}  // namespace

Circuit parse_netlist(std::string_view text, std::string path) { return parse_source(std::string(text), std::move(path)); }

Circuit parse_netlist_file(const std::filesystem::path& path) {
  std::string name = path.string();
  auto cannot_read = [&](int err) {
    std::string reason = std::strerror(err);
    if (!reason.empty()) reason[0] = static_cast<char>(std::tolower(static_cast<unsigned char>(reason[0])));
    return InputError(Diagnostic{"", {}, fmt::format("cannot read {}: {}", name, reason), ""});
  };
  auto too_long = [&](std::string_view what) {
    return InputError(Diagnostic{name, {}, fmt::format("{} longer than {} MiB, the most netfold reads (a circuit of "
                                                       "some 4 million elements); split the circuit, or check that "
                                                       "this is the file meant",
                                                       what, kMaxFileBytes >> 20),
                                 ""});
  };
  std::FILE* f = std::fopen(name.c_str(), "rb");
  if (!f) throw cannot_read(errno);
  // Read in one piece where the size is known (a regular file), in chunks otherwise (a pipe, a
  // device). A device may never end (/dev/zero): the size limit and the first NUL byte stop
  // the reading, long before the memory runs out.
  std::string text;
  std::error_code size_error;
  auto size = std::filesystem::file_size(path, size_error);
  if (!size_error) {
    if (size > kMaxFileBytes) {
      std::fclose(f);
      throw too_long("the file is");
    }
    text.reserve(static_cast<std::size_t>(size));
  }
  std::array<char, 1 << 16> buffer{};
  std::size_t n = 0;
  bool holds_nul = false;
  while (!holds_nul && text.size() <= kMaxFileBytes && (n = std::fread(buffer.data(), 1, buffer.size(), f)) > 0) {
    text.append(buffer.data(), n);
    holds_nul = std::memchr(buffer.data(), '\0', n) != nullptr;
  }
  int err = std::ferror(f) ? errno : 0;
  std::fclose(f);
  if (err != 0) throw cannot_read(err);
  // A NUL byte is reported at its line and column by the text check of parse_source.
  if (!holds_nul && text.size() > kMaxFileBytes) throw too_long("the input runs");
  return parse_source(std::move(text), std::move(name));
}

Observable parse_observable_argument(const Circuit& circuit, std::string_view text, std::string_view option) {
  return ArgumentReader(text, option).observable(circuit);
}

Sweep parse_sweep_argument(const Circuit& circuit, std::string_view text) {
  // The option and its argument, as the user wrote them: a file position would point at nothing.
  std::string option = detail::find_text_fault(text) ? std::string("--sweep")
                                                     : fmt::format("--sweep '{}'", shorten(text));
  return ArgumentReader(text, option).sweep(circuit);
}

}  // namespace netfold
