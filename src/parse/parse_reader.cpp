// Token-level reading shared by the file parser and the command-line argument parsers.
#include <cstring>

#include <fmt/format.h>

#include "parse/parser.hpp"

namespace netfold::parser {

// A word as written, continued over the characters a word may hold and over hyphens, so
// that a misspelt `voltage-sourc` is quoted whole.
std::string Reader::word_as_written(const Token& t) const {
  const char* begin = t.text.data();
  const char* end = begin + t.text.size();
  const char* limit = text_.data() + text_.size();
  while (end < limit && (is_word_byte(*end) || (*end == '-' && end + 1 < limit && is_word_byte(end[1])))) ++end;
  return shorten(std::string_view(begin, static_cast<std::size_t>(end - begin)));
}

// Everything up to the next blank, comma or comment, to quote a statement's first word.
std::string Reader::text_as_written(const Token& t) const {
  const char* begin = t.text.data();
  const char* end = begin + t.text.size();
  const char* limit = text_.data() + text_.size();
  while (end < limit && !std::strchr(" \t\r\n,#", *end)) ++end;
  return shorten(std::string_view(begin, static_cast<std::size_t>(end - begin)));
}

std::string Reader::found(const Token& t) const {
  if (t.kind == TokenKind::end) return "found end of line";
  if (t.kind != TokenKind::word) return fmt::format("found '{}'", shorten(t.text));
  std::string word = word_as_written(t);
  // A word right after a bare number was read as its unit if it could be one.
  bool after_bare_number = &t == &toks_[at_] && at_ > 0 && toks_[at_ - 1].kind == TokenKind::number &&
                           toks_[at_ - 1].suffix().empty();
  if (after_bare_number && !is_keyword(t.text)) return fmt::format("found '{}', which is not a unit", word);
  return fmt::format("found '{}'", word);
}

RawValue Reader::take_value(const Text& what) {
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
PendingObservable Reader::parse_observable() {
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
PendingSweep Reader::parse_sweep_body(bool argument) {
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
  if (argument) expect_end(s.step ? "end of line" : "'step S' or end of line");
  return s;
}

}  // namespace netfold::parser
