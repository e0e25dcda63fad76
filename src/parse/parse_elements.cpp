// Element lines: the kinds and their attribute tables, the nodes, values and waveforms.
#include <numbers>

#include <fmt/format.h>

#include "parse/file_parser.hpp"

namespace netfold::parser {

namespace {

struct AttrName {
  std::string_view keyword;
  Attr attr;
};

constexpr std::array<AttrName, 16> kAttrNames{{
    {"rated", Attr::rated}, {"pulse-rated", Attr::pulse_rated}, {"initial", Attr::initial},
    {"closes", Attr::closes}, {"opens", Attr::opens}, {"on", Attr::on}, {"off", Attr::off},
    {"rated-i2t", Attr::rated_i2t}, {"gain", Attr::gain}, {"sense", Attr::sense},
    {"forward", Attr::forward}, {"breakdown", Attr::breakdown}, {"tolerance", Attr::tolerance},
    {"rated-dvdt", Attr::rated_dvdt}, {"rated-didt", Attr::rated_didt}, {"rated-rms", Attr::rated_rms},
}};

// `rated-i2t` goes on every kind that carries a current of its own (v2); the controlled
// sources take no ratings.
constexpr std::uint32_t kI2t = bit(Attr::rated_i2t);
constexpr std::uint32_t kControlled = bit(Attr::gain) | bit(Attr::sense);

constexpr std::array<KindInfo, 11> kKinds{{
    {ElementKind::resistor, "resistor", "a resistor", bit(Attr::rated) | bit(Attr::pulse_rated) | kI2t |
     bit(Attr::tolerance), "rated P W, pulse-rated E J, rated-i2t X A2s, tolerance P%"},
    {ElementKind::capacitor, "capacitor", "a capacitor", bit(Attr::initial) | bit(Attr::rated) | bit(Attr::rated_dvdt) |
     bit(Attr::rated_rms) | kI2t | bit(Attr::tolerance),
     "initial V, rated V, rated-dvdt X V/us, rated-rms X A, rated-i2t X A2s, tolerance P%"},
    {ElementKind::inductor, "inductor", "an inductor", bit(Attr::initial) | bit(Attr::rated) | bit(Attr::rated_didt) |
     kI2t | bit(Attr::tolerance), "initial A, rated A, rated-didt X A/us, rated-i2t X A2s, tolerance P%"},
    {ElementKind::voltage_source, "voltage-source", "a voltage-source", bit(Attr::rated) | kI2t | bit(Attr::tolerance),
     "rated A, rated-i2t X A2s, tolerance P%"},
    {ElementKind::current_source, "current-source", "a current-source", kI2t | bit(Attr::tolerance),
     "rated-i2t X A2s, tolerance P%"},
    {ElementKind::switch_, "switch", "a switch",
     bit(Attr::closes) | bit(Attr::opens) | bit(Attr::on) | bit(Attr::off) | bit(Attr::rated) | kI2t |
     bit(Attr::rated_didt),
     "closes at T, opens at T, on R, off R, rated A, rated V, rated-i2t X A2s, rated-didt X A/us"},
    {ElementKind::vcvs, "vcvs", "a vcvs", kControlled, "gain K, sense NODE -> NODE"},
    {ElementKind::vccs, "vccs", "a vccs", kControlled, "gain G S, sense NODE -> NODE"},
    {ElementKind::ccvs, "ccvs", "a ccvs", kControlled, "gain R ohm, sense ELEMENT"},
    {ElementKind::cccs, "cccs", "a cccs", kControlled, "gain K, sense ELEMENT"},
    {ElementKind::diode, "diode", "a diode",
     bit(Attr::forward) | bit(Attr::on) | bit(Attr::off) | bit(Attr::breakdown) | bit(Attr::rated) | kI2t,
     "forward V, on R, off R, breakdown V, rated A, rated V, rated-i2t X A2s"},
}};

}  // namespace

const std::string_view kKindList =
    "resistor, capacitor, inductor, voltage-source, current-source, switch, diode, vcvs, vccs, ccvs or cccs";

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
    case ElementKind::vcvs:
    case ElementKind::cccs:
    case ElementKind::resistor:
    case ElementKind::capacitor:
    case ElementKind::inductor:
    case ElementKind::voltage_source:
    case ElementKind::current_source:
    case ElementKind::switch_:
    case ElementKind::diode: return Dimension::ratio;
  }
  return Dimension::ratio;
}

Dimension observable_dimension(ObservableKind kind) {
  Observable o;
  o.kind = kind;
  return o.dimension();
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

  AttributeState state;
  parse_attributes(e, *info, parse_element_value(e, *info), state);
  check_element(e, *info, name, state);

  std::optional<ElementId> id = builder_.add_element(std::move(e));
  if (!id) {
    const Element& first_one = builder_.elements().at(*builder_.find_element(name.text));
    report(name.loc, fmt::format("duplicate element name '{}': the first '{}' is on line {}", name.text, name.text,
                                 first_one.loc.line));
    return;
  }
  if (state.sense.given) senses_.push_back({*id, state.sense});
}

// The value after the nodes (a resistance, a capacitance, an inductance, a waveform), for the
// kinds that have one. Returns what may follow it, for messages.
std::string_view FileParser::parse_element_value(Element& e, const KindInfo& info) {
  switch (info.kind) {
    case ElementKind::resistor:
    case ElementKind::capacitor:
    case ElementKind::inductor: {
      Dimension dim = info.kind == ElementKind::resistor    ? Dimension::resistance
                      : info.kind == ElementKind::capacitor ? Dimension::capacitance
                                                            : Dimension::inductance;
      expect(TokenKind::comma, Text("',' and ", dimension_noun(dim), " after the nodes"));
      RawValue v = take_value(dimension_noun(dim));
      e.value = to_si(v, dim, info.noun);
      e.value_loc = v.loc;
      if (!(e.value > 0)) {
        // dimension_noun gives "a resistance"; drop the article after "positive".
        std::string_view noun = dimension_noun(dim);
        noun.remove_prefix(noun.find(' ') + 1);
        report(v.loc, fmt::format("{} needs a positive {}, found '{}'", info.noun, noun, v.quote()));
      }
      return "',' or end of line";
    }
    case ElementKind::voltage_source:
    case ElementKind::current_source:
      expect(TokenKind::comma, "',' and a waveform after the nodes");
      e.value_loc = peek().loc;
      e.waveform = parse_waveform(info);
      return "'+', ',' or end of line";
    case ElementKind::switch_:
    case ElementKind::diode:
    case ElementKind::vcvs:
    case ElementKind::vccs:
    case ElementKind::ccvs:
    case ElementKind::cccs: return "',' or end of line";
  }
  return "',' or end of line";
}

// What an element line must hold besides its attributes' own checks.
void FileParser::check_element(const Element& e, const KindInfo& info, const Token& name,
                               const AttributeState& state) {
  if (e.kind == ElementKind::switch_ && e.events.empty()) {
    report(name.loc, fmt::format("switch {} never changes state: give it a 'closes at' or 'opens at' event, "
                                 "or replace it by a resistor",
                                 name.text));
  }
  bool controlled = e.kind == ElementKind::vcvs || e.kind == ElementKind::vccs || e.kind == ElementKind::ccvs ||
                    e.kind == ElementKind::cccs;
  if (controlled && !state.gain) {
    std::string_view list = info.attribute_list;
    report(name.loc, fmt::format("{} {} needs '{}'", info.keyword, name.text, list.substr(0, list.find(','))));
  }
  if (controlled && !state.sense.given) {
    std::string_view list = info.attribute_list;
    report(name.loc, fmt::format("{} {} needs '{}'", info.keyword, name.text, list.substr(list.find(", ") + 2)));
  }
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

}  // namespace netfold::parser
