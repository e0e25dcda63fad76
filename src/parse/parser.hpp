#pragma once
/// \file parser.hpp
/// Internal: what the parser's files share — statement errors and message text, values as
/// written and their conversion, the element kinds and their attributes, references resolved
/// once every element is known, and the token-level Reader. The file parser itself is in
/// file_parser.hpp; the public entry points are in parse.cpp.

#include <algorithm>
#include <array>
#include <cstdint>
#include <numbers>
#include <optional>
#include <string>
#include <string_view>

#include "netfold/netlist.hpp"
#include "netfold/parse.hpp"
#include "netfold/units.hpp"
#include "parse/lexer.hpp"

namespace netfold::parser {

using detail::Token;
using detail::TokenKind;

inline constexpr double kDegree = std::numbers::pi / 180.0;
// Offending text is quoted up to this many code points, so that a 1 MB token does not make a
// 1 MB message.
inline constexpr std::size_t kQuoteLimit = 40;

// An error that ends the parsing of the current statement (or of one reference).
struct StatementError {
  SourceLoc loc;
  std::string message;
};

// A reference to a name whose own line already failed: reporting it again would only repeat
// that error.
struct Silenced {};

[[noreturn]] void fail(SourceLoc loc, std::string message);

// `s`, cut after kQuoteLimit code points.
std::string shorten(std::string_view s);

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

// True for a word with a meaning of its own in the format.
bool is_keyword(std::string_view word);
bool is_word_byte(char c);

// ---------------------------------------------------------------------------------------------
// Values (parse_values.cpp)

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
double to_si(const RawValue& v, Dimension want, const Text& place, bool rms_allowed = false);

// A time on the time axis (an event, a window bound, a step, a resolution, a claim's instant,
// a closing-time sweep) lies within kMaxTime of t = 0. The message when it does not, or "".
std::string time_limit_fault(const RawValue& v, double t);

// ---------------------------------------------------------------------------------------------
// Element kinds and their attributes (tables in parse_elements.cpp)

enum class Attr : std::uint8_t {
  rated, pulse_rated, initial, closes, opens, on, off, rated_i2t, gain, sense,
  forward, breakdown, tolerance, rated_dvdt, rated_didt, rated_rms,  // (v2)
};

constexpr std::uint32_t bit(Attr a) { return 1u << static_cast<unsigned>(a); }

struct KindInfo {
  ElementKind kind;
  std::string_view keyword;
  std::string_view noun;        // "a resistor"
  std::uint32_t attributes;     // bits of the Attr it takes
  std::string_view attribute_list;
};

extern const std::string_view kKindList;
const KindInfo* find_kind(std::string_view keyword);
const KindInfo& kind_info(ElementKind kind);
std::optional<Attr> find_attr(std::string_view keyword);
Dimension gain_dimension(ElementKind kind);
Dimension observable_dimension(ObservableKind kind);

// ---------------------------------------------------------------------------------------------
// References, resolved once every element is known (parse_resolve.cpp)

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
  bool joins_previous = false;  // (v2) a later target of a joint sweep line
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

ElementId resolve_element(const Scope& scope, NameRef ref);
NodeId resolve_node(const Scope& scope, NameRef ref);
Observable resolve_observable(const Scope& scope, const PendingObservable& p);
Sweep resolve_sweep(const Scope& scope, const PendingSweep& p);
// A closing-time sweep moves the switch's first `closes` event; it must stay between the
// events around it.
void check_closes_slot(const Element& e, const Sweep& s, const PendingSweep& p);

// ---------------------------------------------------------------------------------------------
// Token-level reading, shared by the file parser and the command-line argument parsers
// (parse_reader.cpp)

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
  std::string word_as_written(const Token& t) const;
  // Everything up to the next blank, comma or comment, to quote a statement's first word.
  std::string text_as_written(const Token& t) const;
  std::string found(const Token& t) const;

  [[noreturn]] void fail_expected(const Text& what) const {
    fail(peek().loc, "expected " + what.str() + ", " + found(peek()));
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
  RawValue take_value(const Text& what);
  // `X.v`, `X.i`, `X.p`, `@n`, `@a - @b`.
  PendingObservable parse_observable();
  // `TARGET FROM .. TO [step S]`, or `TARGET=FROM..TO [step S]` on the command line (which must
  // end there; a file's line may go on with `, TARGET ...`).
  PendingSweep parse_sweep_body(bool argument);

  std::string_view text_;
  std::vector<Token> toks_;  // the current statement, ending in an `end` token
  std::size_t at_ = 0;
};

}  // namespace netfold::parser
