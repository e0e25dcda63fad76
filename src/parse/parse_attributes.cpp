// The attributes of an element line: ratings, initial states, switch events, on/off
// resistances, gains and sensed quantities.
#include <fmt/format.h>

#include "parse/file_parser.hpp"

namespace netfold::parser {

void FileParser::parse_attributes(Element& e, const KindInfo& info, std::string_view expected,
                                  AttributeState& state) {
  while (peek().kind != TokenKind::end) {
    if (peek().kind != TokenKind::comma) fail_expected(expected);
    expected = "',' or end of line";
    take();
    const Token& keyword = peek();
    const Attr attr = take_attribute(info);
    const bool event = attr == Attr::closes || attr == Attr::opens;
    if (!event && (state.seen & bit(attr))) {
      report(keyword.loc, fmt::format("'{}' is given twice on {}; {} takes each of these once: {}", keyword.text,
                                      e.name, info.noun, info.attribute_list));
    }
    state.seen |= bit(attr);
    parse_attribute(e, info, attr, keyword, state);
  }
}

// The attribute keyword after a comma, one that `info`'s kind takes.
Attr FileParser::take_attribute(const KindInfo& info) {
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
  return *attr;
}

void FileParser::parse_rating(Element& e, const Text& place, Dimension dim, RatingKind kind, SourceLoc loc) {
  RawValue v = take_value(dimension_noun(dim));
  Rating r{kind, to_si(v, dim, place), loc};
  if (!(r.limit > 0)) report(v.loc, fmt::format("a rating must be positive, found '{}'", v.quote()));
  e.ratings.push_back(r);
}

void FileParser::parse_attribute(Element& e, const KindInfo& info, Attr attr, const Token& keyword,
                                 AttributeState& state) {
  const Text place("'", keyword.text, "' on ", info.noun);
  switch (attr) {
    case Attr::rated:
      if (e.kind == ElementKind::resistor) parse_rating(e, place, Dimension::power, RatingKind::mean_power, keyword.loc);
      else if (e.kind == ElementKind::capacitor)
        parse_rating(e, place, Dimension::voltage, RatingKind::peak_voltage, keyword.loc);
      else parse_rating(e, place, Dimension::current, RatingKind::peak_current, keyword.loc);
      break;
    case Attr::pulse_rated: parse_rating(e, place, Dimension::energy, RatingKind::energy, keyword.loc); break;
    case Attr::rated_i2t: parse_rating(e, place, Dimension::action, RatingKind::i2t, keyword.loc); break;
    case Attr::initial: {
      Dimension dim = e.kind == ElementKind::capacitor ? Dimension::voltage : Dimension::current;
      e.initial = to_si(take_value(dimension_noun(dim)), dim, place);
      break;
    }
    case Attr::closes:
    case Attr::opens: parse_event(e, keyword, attr == Attr::closes, state); break;
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
      state.gain = true;
      break;
    }
    case Attr::sense: parse_sense(e, info, state.sense); break;
  }
}

// `closes at T` / `opens at T`: in time order, alternating.
void FileParser::parse_event(Element& e, const Token& keyword, bool closes, AttributeState& state) {
  if (!at_word("at")) fail_expected(Text("'at' after '", keyword.text, "'"));
  take();
  RawValue v = take_value("a time");
  SwitchEvent ev{to_si(v, Dimension::time, Text("'", keyword.text, " at'")), closes, keyword.loc};
  if (std::string fault = time_limit_fault(v, ev.time); !fault.empty()) {
    report(v.loc, std::move(fault));
  } else if (ev.time < 0) {
    report(v.loc, fmt::format("a switch event cannot happen before t = 0, found '{}'", v.quote()));
  } else if (!e.events.empty()) {
    const SwitchEvent& prev = e.events.back();
    if (prev.closes == ev.closes) {
      report(keyword.loc, fmt::format("{} already {} at {}; its events must alternate between 'closes at' "
                                      "and 'opens at'",
                                      e.name, keyword.text, state.last_event.quote()));
    } else if (!(ev.time > prev.time)) {
      report(v.loc, fmt::format("switch events must come in time order: '{}' is not after '{}'", v.quote(),
                                state.last_event.quote()));
    }
  }
  e.events.push_back(ev);
  state.last_event = v;
}

// `sense NODE -> NODE` (voltage-controlled) or `sense ELEMENT` (current-controlled).
void FileParser::parse_sense(const Element& e, const KindInfo& info, SenseRef& sense) {
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
}

}  // namespace netfold::parser
