// The statements other than elements and claims: the statement loop, the directives, and the
// resolution of references at the end of the file.
#include <algorithm>
#include <cmath>
#include <limits>

#include <fmt/format.h>

#include "parse/file_parser.hpp"

namespace netfold::parser {

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

// `sweep TARGET FROM .. TO [step S][, TARGET FROM .. TO [step S]]...`: (v2) the targets of one
// line vary jointly.
void FileParser::parse_sweep() {
  const std::size_t line_start = sweeps_.size();
  do {
    PendingSweep s = parse_sweep_body(false);
    s.joins_previous = sweeps_.size() > line_start;
    for (std::size_t i = line_start; i < sweeps_.size(); ++i) {
      if (sweeps_[i].element.name == s.element.name && sweeps_[i].member == s.member)
        fail(s.loc, fmt::format("'{}.{}' is named twice on this sweep line; a joint sweep varies each target once",
                                s.element.name, s.member_text));
    }
    const bool stepped = s.step.has_value();
    sweeps_.push_back(std::move(s));
    if (peek().kind != TokenKind::comma) expect_end(stepped ? "',' or end of line" : "'step S', ',' or end of line");
  } while (accept(TokenKind::comma));
}

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
      check_claim(p);
      builder_.add_claim(std::move(p.claim));
    });
  }
  for (const PendingSweep& s : sweeps_)
    resolving([&] { builder_.add_sweep(resolve_sweep(scope, s), s.joins_previous); });
}

}  // namespace netfold::parser
