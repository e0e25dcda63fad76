#include "netfold/ratings.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include <fmt/format.h>

#include "netfold/stress.hpp"
#include "netfold/units.hpp"

namespace netfold {

std::string_view rating_quantity(RatingKind kind) {
  switch (kind) {
    case RatingKind::peak_voltage: return "peak voltage";
    case RatingKind::peak_current: return "peak current";
    case RatingKind::mean_power: return "mean power";
    case RatingKind::energy: return "energy";
    case RatingKind::i2t: return "I²t";
    case RatingKind::dvdt: return "dv/dt";
    case RatingKind::didt: return "di/dt";
    case RatingKind::rms_current: return "rms current";
    case RatingKind::peak_reverse_voltage: return "peak reverse voltage";
    case RatingKind::peak_forward_current: return "peak forward current";
  }
  return "";
}

std::string_view rating_unit(RatingKind kind) {
  switch (kind) {
    case RatingKind::peak_voltage: return "V";
    case RatingKind::peak_current: return "A";
    case RatingKind::mean_power: return "W";
    case RatingKind::energy: return "J";
    case RatingKind::i2t: return "A²s";
    case RatingKind::dvdt: return "V/µs";
    case RatingKind::didt: return "A/µs";
    case RatingKind::rms_current:
    case RatingKind::peak_forward_current: return "A";
    case RatingKind::peak_reverse_voltage: return "V";
  }
  return "";
}

std::string rating_value_text(RatingKind kind, double value, int digits) {
  if (kind != RatingKind::dvdt && kind != RatingKind::didt) return format_si(value, rating_unit(kind), digits);
  const char* per_second = kind == RatingKind::dvdt ? "V/s" : "A/s";
  // Datasheets state these rates in V/µs and A/µs without a prefix; a rate far from that
  // range (a slow ramp in V/s, an absurd figure) keeps an SI prefix on V/s instead.
  const double per_us = value * 1e-6;
  const double size = std::fabs(per_us);
  if (!std::isfinite(per_us) || (size != 0.0 && (size < 1e-3 || size >= 1e6))) return format_si(value, per_second, digits);
  const int whole = size >= 1.0 ? static_cast<int>(std::floor(std::log10(size))) + 1 : 1;
  std::string text = fmt::format("{:.{}g}", per_us, std::max(digits, whole));
  return fmt::format("{} {}", text, rating_unit(kind));
}

namespace {

Observable voltage_of(const Circuit& c, ElementId id) {
  return element_observable(c, id, ObservableKind::element_voltage);
}
Observable current_of(const Circuit& c, ElementId id) {
  return element_observable(c, id, ObservableKind::element_current);
}

RatingStress peak_stress(const Peak& p) {
  RatingStress s;
  s.value = p.value;
  s.time = p.time;
  return s;
}

}  // namespace

RatingStress rating_stress(const Solution& solution, ElementId id, RatingKind kind) {
  const Circuit& c = solution.circuit();
  RatingStress s;
  switch (kind) {
    case RatingKind::peak_voltage: return peak_stress(find_peak(solution, voltage_of(c, id)));
    case RatingKind::peak_current: return peak_stress(find_peak(solution, current_of(c, id)));
    case RatingKind::mean_power: s.value = element_mean_power(solution, id, &s.segment); return s;
    case RatingKind::energy:
    case RatingKind::i2t:
      s.value = kind == RatingKind::energy ? element_energy(solution, id) : element_i2t(solution, id);
      s.time = solution.window().from;
      s.until = solution.window().to;
      return s;
    case RatingKind::dvdt:
    case RatingKind::didt: {
      const RateFigure r = largest_rate(solution, kind == RatingKind::dvdt ? voltage_of(c, id) : current_of(c, id));
      s.value = r.value;
      s.time = r.time;
      s.before_event = r.before_event;
      return s;
    }
    case RatingKind::rms_current: {
      const RmsFigure r = largest_rms(solution, current_of(c, id));
      s.value = r.value;
      s.time = r.from;
      s.until = r.from + r.span;
      s.over_window = r.over_window;
      return s;
    }
    // A diode's reverse voltage is −v along its arrow (anode to cathode), its forward current +i.
    case RatingKind::peak_reverse_voltage: return peak_stress(largest_signed(solution, voltage_of(c, id), -1.0));
    case RatingKind::peak_forward_current: return peak_stress(largest_signed(solution, current_of(c, id), +1.0));
  }
  throw std::logic_error(fmt::format("no stress computed for the {} rating", rating_quantity(kind)));
}

namespace {

bool is_event_time(const Solution& solution, double t) {
  const auto& events = solution.schedule().events;
  return std::any_of(events.begin(), events.end(), [&](const ScheduledEvent& e) { return e.time == t; });
}

std::string span_text(const RatingStress& stress) {
  if (!stress.time || !stress.until) return "";
  return fmt::format("{} .. {}", format_si(*stress.time, "s"), format_si(*stress.until, "s"));
}

}  // namespace

std::string stress_location(const Solution& solution, RatingKind kind, const RatingStress& stress) {
  switch (kind) {
    case RatingKind::peak_voltage:
    case RatingKind::peak_current:
    case RatingKind::peak_reverse_voltage:
    case RatingKind::peak_forward_current: return stress.time ? fmt::format("at {}", format_si(*stress.time, "s")) : "";
    case RatingKind::mean_power: {
      if (stress.segment < 1 || static_cast<std::size_t>(stress.segment) > solution.segments().size()) return "";
      const Segment& seg = solution.segments()[static_cast<std::size_t>(stress.segment - 1)];
      return fmt::format("segment {}, {} .. {}", seg.number, format_si(seg.from, "s"), format_si(seg.to, "s"));
    }
    case RatingKind::energy:
    case RatingKind::i2t: return fmt::format("over the window {}", span_text(stress));
    case RatingKind::dvdt:
    case RatingKind::didt: {
      if (!stress.time) return "";
      const std::string at = format_si(*stress.time, "s");
      if (stress.before_event) return fmt::format("just before the event at {}", at);
      if (is_event_time(solution, *stress.time)) return fmt::format("just after the event at {}", at);
      return fmt::format("at {}", at);
    }
    case RatingKind::rms_current:
      return fmt::format("{} {}", stress.over_window ? "over the window" : "over one period,", span_text(stress));
  }
  return "";
}

void judge_rating(RatingCheck& r, double actual) {
  r.actual = actual;
  r.used_percent = 100.0 * std::fabs(actual) / r.rated;
  r.exceeded = std::fabs(actual) > r.rated;
}

std::vector<RatingCheck> check_ratings(const Solution& solution) {
  std::vector<RatingCheck> out;
  const auto& el = solution.circuit().elements();
  for (ElementId id = 0; id < el.size(); ++id)
    for (const auto& r : el[id].ratings) {
      RatingCheck rc;
      rc.element = id;
      rc.kind = r.kind;
      rc.quantity = rating_quantity(r.kind);
      rc.unit = rating_unit(r.kind);
      rc.rated = r.limit;
      rc.loc = r.loc;
      RatingStress stress = rating_stress(solution, id, r.kind);
      judge_rating(rc, stress.value);
      rc.where = stress_location(solution, r.kind, stress);
      out.push_back(rc);
    }
  return out;
}

std::string rating_line(const Circuit& c, const RatingCheck& r) {
  std::string line = fmt::format("{:<14} {:<13} {:>11} of {:>11} {:>7}  {}", c.element(r.element).name, r.quantity,
                                 rating_value_text(r.kind, r.actual), rating_value_text(r.kind, r.rated),
                                 percent_text(r.used_percent), r.exceeded ? "EXCEEDED" : "ok");
  std::string detail = r.where;
  if (!r.worst_argument.empty())
    detail += fmt::format("{}{}", detail.empty() ? "" : "; ", r.worst_argument);
  if (!detail.empty()) line += fmt::format("  ({})", detail);
  return line;
}

std::string percent_text(double percent) {
  if (!std::isfinite(percent)) return "∞ %";
  if (std::fabs(percent) < 1e4) return fmt::format("{:.1f} %", percent);
  return fmt::format("{:.3g} %", percent);
}

}  // namespace netfold
