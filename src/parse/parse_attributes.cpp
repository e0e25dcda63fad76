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
    // A switch or diode may carry `rated` twice, once for a current and once for a voltage:
    // parse_rated checks that the two differ.
    const bool rated_by_unit = attr == Attr::rated && (e.kind == ElementKind::switch_ || e.kind == ElementKind::diode);
    if (!event && !rated_by_unit && (state.seen & bit(attr))) {
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
  // An rms rating may be written in Arms: it is an rms value already, not a peak to convert.
  if (kind == RatingKind::rms_current) v.unit.rms = false;
  Rating r{kind, to_si(v, dim, place), loc};
  if (!(r.limit > 0)) report(v.loc, fmt::format("a rating must be positive, found '{}'", v.quote()));
  e.ratings.push_back(r);
}

void FileParser::parse_attribute(Element& e, const KindInfo& info, Attr attr, const Token& keyword,
                                 AttributeState& state) {
  const Text place("'", keyword.text, "' on ", info.noun);
  switch (attr) {
    case Attr::rated: parse_rated(e, info, keyword); break;
    case Attr::pulse_rated: parse_rating(e, place, Dimension::energy, RatingKind::energy, keyword.loc); break;
    case Attr::rated_i2t: parse_rating(e, place, Dimension::action, RatingKind::i2t, keyword.loc); break;
    case Attr::rated_dvdt: parse_rating(e, place, Dimension::voltage_rate, RatingKind::dvdt, keyword.loc); break;
    case Attr::rated_didt: parse_rating(e, place, Dimension::current_rate, RatingKind::didt, keyword.loc); break;
    case Attr::rated_rms: parse_rating(e, place, Dimension::current, RatingKind::rms_current, keyword.loc); break;
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
    case Attr::forward: {
      RawValue v = take_value("a voltage");
      e.forward = to_si(v, Dimension::voltage, place);
      // A negative drop would make the diode a source that drives current while it conducts.
      if (e.forward < 0) report(v.loc, fmt::format("'forward' needs a voltage of 0 or more, found '{}'", v.quote()));
      break;
    }
    case Attr::breakdown: {
      RawValue v = take_value("a voltage");
      e.breakdown = to_si(v, Dimension::voltage, place);
      if (!(*e.breakdown > 0))
        report(v.loc, fmt::format("'breakdown' needs a positive voltage (the diode conducts in reverse at minus that "
                                  "voltage), found '{}'",
                                  v.quote()));
      break;
    }
    case Attr::tolerance: e.tolerance = parse_tolerance(info, keyword); break;
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

// `rated X`: what it limits follows the kind and, on a switch or a diode, the value's unit.
void FileParser::parse_rated(Element& e, const KindInfo& info, const Token& keyword) {
  const Text place("'rated' on ", info.noun);
  switch (e.kind) {
    case ElementKind::resistor: parse_rating(e, place, Dimension::power, RatingKind::mean_power, keyword.loc); return;
    case ElementKind::capacitor:
      parse_rating(e, place, Dimension::voltage, RatingKind::peak_voltage, keyword.loc);
      return;
    case ElementKind::switch_:
    case ElementKind::diode: break;
    case ElementKind::inductor:
    case ElementKind::voltage_source:
    case ElementKind::current_source:
    case ElementKind::vcvs:
    case ElementKind::vccs:
    case ElementKind::ccvs:
    case ElementKind::cccs:
      parse_rating(e, place, Dimension::current, RatingKind::peak_current, keyword.loc);
      return;
  }
  const bool diode = e.kind == ElementKind::diode;
  const Token& value = peek();
  RawValue v = take_value("a current (A) or a voltage (V)");
  std::optional<Dimension> dim = v.unit.dimension;
  // A switch's bare `rated` is a current, as in the first edition; a diode's is ambiguous.
  if (!dim && !diode) dim = Dimension::current;
  if (!dim)
    fail(v.loc, fmt::format("'rated {}' on a diode needs its unit: A for the peak forward current, V for the peak "
                            "reverse voltage",
                            v.quote()));
  if (*dim != Dimension::current && *dim != Dimension::voltage)
    fail(v.loc, fmt::format("'{}' is {}, but 'rated' on {} needs a current (A) or a voltage (V)", v.quote(),
                            dimension_noun(*dim), info.noun));
  const RatingKind kind = *dim == Dimension::current ? (diode ? RatingKind::peak_forward_current
                                                              : RatingKind::peak_current)
                                                     : (diode ? RatingKind::peak_reverse_voltage
                                                              : RatingKind::peak_voltage);
  for (const Rating& r : e.ratings)
    if (r.kind == kind)
      report(keyword.loc, fmt::format("'rated' with {} is given twice on {}; {} takes one current rating and one "
                                      "voltage rating",
                                      dimension_noun(*dim), e.name, info.noun));
  Rating r{kind, to_si(v, *dim, place), keyword.loc};
  if (!(r.limit > 0)) report(value.loc, fmt::format("a rating must be positive, found '{}'", v.quote()));
  e.ratings.push_back(r);
}

// `closes at T` / `opens at T`, and (v2) `opens at current zero after T` / `closes at voltage
// zero after T`: in the order of their written times, alternating.
void FileParser::parse_event(Element& e, const Token& keyword, bool closes, AttributeState& state) {
  if (!at_word("at")) fail_expected(Text("'at' after '", keyword.text, "'"));
  take();
  const EventTrigger trigger = take_trigger(keyword, closes);
  RawValue v = take_value(trigger == EventTrigger::time ? "a time" : "a time after 'after'");
  SwitchEvent ev{to_si(v, Dimension::time, Text("'", keyword.text, " at'")), closes, keyword.loc, trigger};
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

// After `opens at` / `closes at`: `current zero after` or `voltage zero after` (v2), or nothing
// (a timed event).
EventTrigger FileParser::take_trigger(const Token& keyword, bool closes) {
  const bool current = at_word("current");
  if (!current && !at_word("voltage")) return EventTrigger::time;
  const Token& what = take();
  // A contact parts at a current zero (its arc goes out there); a zero-crossing switch closes
  // at a voltage zero. The other two pairings are not part of the format.
  if (current == closes)
    fail(what.loc, fmt::format("a switch {} at {} zero is not an event of the format: a switch opens at current "
                               "zero and closes at voltage zero",
                               keyword.text, what.text));
  if (!at_word("zero")) fail_expected(Text("'zero' after '", what.text, "'"));
  take();
  if (!at_word("after")) fail_expected(Text("'after T' after '", what.text, " zero'"));
  take();
  return current ? EventTrigger::current_zero : EventTrigger::voltage_zero;
}

// `tolerance P%` or `tolerance -P% .. +Q%` (v2): fractions of the value (or, on a source, of its
// waveform) that bound it.
Tolerance FileParser::parse_tolerance(const KindInfo& info, const Token& keyword) {
  Tolerance t;
  t.loc = keyword.loc;
  RawValue first = take_value("a percentage, as in 'tolerance 5%' or 'tolerance -10% .. +5%'");
  const double a = percent_fraction(first, info);
  if (!accept(TokenKind::range)) {
    if (a < 0)
      fail(first.loc, fmt::format("a symmetric tolerance is written without a sign, as in 'tolerance 5%'; found '{}' "
                                  "(bounds of each sign are written '-10% .. +5%')",
                                  first.quote()));
    t.lower = -a;
    t.upper = a;
  } else {
    RawValue second = take_value("the upper bound of the tolerance (a percentage)");
    const double b = percent_fraction(second, info);
    if (a > 0)
      fail(first.loc, fmt::format("the lower bound of a tolerance is 0 or below, found '{}'", first.quote()));
    if (b < 0) fail(second.loc, fmt::format("the upper bound of a tolerance is 0 or above, found '{}'", second.quote()));
    t.lower = a;
    t.upper = b;
  }
  if (!(t.lower > -1)) {
    const bool source = is_independent_source(info.kind);
    fail(first.loc, fmt::format("a tolerance of '{}' below could take {} to zero or below; a tolerance stays under "
                                "100 %",
                                first.quote(), source ? "the source's waveform" : Text("the value of ", info.noun).str()));
  }
  return t;
}

// A percentage, as the fraction it stands for: `5%` is the double nearest 0.05 (its exponent is
// shifted, never multiplied by a rounded 0.01).
double FileParser::percent_fraction(const RawValue& v, const KindInfo& info) {
  if (v.unit.dimension != Dimension::percent)
    fail(v.loc, fmt::format("a tolerance is a percentage, as in 'tolerance 5%', found '{}'", v.quote()));
  RawValue fraction = v;
  fraction.unit.exponent -= 2;
  fraction.unit.dimension.reset();
  return to_si(fraction, Dimension::ratio, Text("'tolerance' on ", info.noun));
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
