// `expect` lines: the claim quantity, its comparison and value.
#include <array>
#include <charconv>

#include <fmt/format.h>

#include "parse/file_parser.hpp"

namespace netfold::parser {

namespace {

// The comparison a token spells, if any.
std::optional<CompareOp> comparison(TokenKind kind) {
  if (kind == TokenKind::equal) return CompareOp::eq;
  if (kind == TokenKind::less) return CompareOp::lt;
  if (kind == TokenKind::less_equal) return CompareOp::le;
  if (kind == TokenKind::greater) return CompareOp::gt;
  if (kind == TokenKind::greater_equal) return CompareOp::ge;
  return std::nullopt;
}

struct NamedClaim {
  std::string_view word;
  ClaimQuantity quantity;
  Dimension dimension;
};

// Claims on a segment: `tau[k]` and the like.
constexpr std::array<NamedClaim, 5> kSegmentClaims{{
    {"tau", ClaimQuantity::tau, Dimension::time},
    {"rth", ClaimQuantity::rth, Dimension::resistance},
    {"vth", ClaimQuantity::vth, Dimension::voltage},
    {"frequency", ClaimQuantity::frequency, Dimension::frequency},  // (v2) damped natural frequency
    {"damping", ClaimQuantity::damping, Dimension::ratio},          // (v2) damping ratio
}};

// Claims on an element: `energy X` and the like.
constexpr std::array<NamedClaim, 6> kElementClaims{{
    {"energy", ClaimQuantity::energy, Dimension::energy},
    {"i2t", ClaimQuantity::i2t, Dimension::action},
    {"dvdt", ClaimQuantity::dvdt, Dimension::voltage_rate},  // (v2) of a capacitor
    {"didt", ClaimQuantity::didt, Dimension::current_rate},  // (v2)
    {"rms", ClaimQuantity::rms, Dimension::current},         // (v2)
    {"power", ClaimQuantity::power, Dimension::power},       // (v2) of a resistor
}};

template <std::size_t N>
const NamedClaim* find_claim(const std::array<NamedClaim, N>& table, std::string_view word) {
  for (const NamedClaim& c : table)
    if (c.word == word) return &c;
  return nullptr;
}

}  // namespace

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
  c.dimension = parse_claim_quantity(pending);
  parse_claim_bound(c, first);
  const std::size_t last = at_ - 1;
  expect_end();
  c.text = span_text(first, last);
  claims_.push_back(std::move(pending));
}

// The quantity of a claim, up to its comparison; returns its dimension.
Dimension FileParser::parse_claim_quantity(PendingClaim& pending) {
  Claim& c = pending.claim;
  const Token& q = peek();
  if (q.kind == TokenKind::at_sign || (q.kind == TokenKind::word && peek(1).kind == TokenKind::dot)) {
    // `OBS at TIME`; a name followed by '.' is an observable even when it is spelt like a keyword.
    pending.observable = parse_observable();
    if (!at_word("at")) fail_expected("'at TIME' after the observable");
    take();
    c.quantity = ClaimQuantity::at_time;
    RawValue at = take_value("a time");
    c.time = to_si(at, Dimension::time, "'at'");
    if (std::string fault = time_limit_fault(at, c.time); !fault.empty()) report(at.loc, std::move(fault));
    return observable_dimension(pending.observable->kind);
  }
  if (q.kind != TokenKind::word) fail_expected("a claim, such as 'tau = 4.7 ms ± 1%'");
  std::string_view k = q.text;
  take();
  pending.quantity_loc = q.loc;
  if (const NamedClaim* n = find_claim(kSegmentClaims, k)) {
    c.quantity = n->quantity;
    if (accept(TokenKind::lbracket)) {
      c.segment = take_segment();
      expect(TokenKind::rbracket, "']' after the segment number");
    }
    return n->dimension;
  }
  if (k == "share") return parse_share(pending);
  if (k == "time-below") return parse_time_below(pending);
  if (k == "peak" || k == "max" || k == "min" || k == "final" || k == "amplitude" || k == "phase" || k == "worst") {
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
    return k == "phase" ? Dimension::angle : observable_dimension(o.kind);
  }
  if (const NamedClaim* n = find_claim(kElementClaims, k)) {
    c.quantity = n->quantity;
    if (peek().kind == TokenKind::at_sign) fail(peek().loc, fmt::format("'{}' takes an element, not a node", k));
    const Token& x = take_name(Text("an element name after '", k, "'"));
    pending.element = NameRef{x.text, x.loc};
    return n->dimension;
  }
  fail(q.loc, fmt::format("unknown claim quantity '{}'; expected tau, rth, vth, peak, max, min, final, amplitude, "
                          "phase, energy, i2t, worst peak, frequency, damping, share peak, time-below, dvdt, didt, rms, "
                          "power, or OBS at TIME",
                          word_as_written(q)));
}

// (v2) `share peak OBS > LEVEL`: the claim's value is a percentage of the sweeps' range.
Dimension FileParser::parse_share(PendingClaim& pending) {
  Claim& c = pending.claim;
  const std::size_t first = at_ - 1;  // `share`
  if (!at_word("peak")) fail_expected("'peak' after 'share'");
  take();
  c.quantity = ClaimQuantity::share_peak;
  pending.observable = parse_observable();
  const std::size_t last = at_ - 1;
  if (peek().kind != TokenKind::greater) fail_expected("'>' and a level after the observable");
  take();
  const Dimension dim = observable_dimension(pending.observable->kind);
  RawValue level = take_value(dimension_noun(dim));
  c.level = to_si(level, dim, fmt::format("the level of '{}'", span_text(first, last)));
  if (!(c.level > 0)) report(level.loc, fmt::format("'share peak' needs a positive level, found '{}'", level.quote()));
  return Dimension::percent;
}

// (v2) `time-below OBS LEVEL [after TIME]`: the claim's value is a time.
Dimension FileParser::parse_time_below(PendingClaim& pending) {
  Claim& c = pending.claim;
  c.quantity = ClaimQuantity::time_below;
  pending.observable = parse_observable();
  const Dimension dim = observable_dimension(pending.observable->kind);
  RawValue level = take_value(Text("a level (", dimension_noun(dim), ") after the observable"));
  c.level = to_si(level, dim, "the level of 'time-below'");
  if (!(c.level > 0)) report(level.loc, fmt::format("'time-below' needs a positive level, found '{}'", level.quote()));
  if (at_word("after")) {
    take();
    RawValue after = take_value("a time");
    c.after = to_si(after, Dimension::time, "'after'");
    if (std::string fault = time_limit_fault(after, *c.after); !fault.empty()) report(after.loc, std::move(fault));
    else if (*c.after < 0)
      report(after.loc, fmt::format("'after' is a time at or after t = 0, found '{}'", after.quote()));
  }
  return Dimension::time;
}

// What a claim needs of the circuit, checked once every element and sweep is known.
void FileParser::check_claim(const PendingClaim& p) const {
  const Claim& c = p.claim;
  auto needs_kind = [&](std::string_view word, ElementKind kind) {
    const Element& e = builder_.elements().at(c.element);
    if (e.kind != kind)
      fail(p.element->loc, fmt::format("'{}' takes {}, but '{}' is {}", word, kind_info(kind).noun, e.name,
                                       kind_info(e.kind).noun));
  };
  if (c.quantity == ClaimQuantity::dvdt) needs_kind("dvdt", ElementKind::capacitor);
  if (c.quantity == ClaimQuantity::power) needs_kind("power", ElementKind::resistor);
  if (c.quantity == ClaimQuantity::share_peak && sweeps_.empty())
    fail(p.quantity_loc, "'share peak' is the share of the declared sweeps' range in which the peak exceeds its "
                         "level, but this file declares no sweep; add a line such as 'sweep SWITCH.closes 0 ms .. "
                         "20 ms'");
}

// The comparison of a claim whose quantity ends before token `op_index`: `OP VALUE [± TOL]`.
void FileParser::parse_claim_bound(Claim& c, std::size_t first) {
  const Dimension dim = c.dimension;
  const std::size_t op_index = at_;
  const Token& op = peek();
  const std::optional<CompareOp> compare = comparison(op.kind);
  if (!compare) fail_expected("a comparison (=, <, <=, >, >=)");
  c.op = *compare;
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
}

}  // namespace netfold::parser
