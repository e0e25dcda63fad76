#include "netfold/ratings.hpp"

#include <cmath>
#include <stdexcept>

#include <fmt/format.h>

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
    case RatingKind::dvdt: return "V/s";
    case RatingKind::didt: return "A/s";
    case RatingKind::rms_current:
    case RatingKind::peak_forward_current: return "A";
    case RatingKind::peak_reverse_voltage: return "V";
  }
  return "";
}

RatingStress rating_stress(const Solution& solution, ElementId id, RatingKind kind) {
  const Circuit& c = solution.circuit();
  RatingStress s;
  switch (kind) {
    case RatingKind::peak_voltage:
    case RatingKind::peak_current: {
      Peak p = find_peak(solution, element_observable(c, id,
                                                      kind == RatingKind::peak_voltage ? ObservableKind::element_voltage
                                                                                       : ObservableKind::element_current));
      s.value = p.value;
      s.time = p.time;
      return s;
    }
    case RatingKind::mean_power: s.value = element_mean_power(solution, id, &s.segment); return s;
    case RatingKind::energy: s.value = element_energy(solution, id); return s;
    case RatingKind::i2t: s.value = element_i2t(solution, id); return s;
    // The parser does not produce these yet (the ratings stage computes them once it does).
    case RatingKind::dvdt:
    case RatingKind::didt:
    case RatingKind::rms_current:
    case RatingKind::peak_reverse_voltage:
    case RatingKind::peak_forward_current: break;
  }
  throw std::logic_error(fmt::format("no stress computed for the {} rating", rating_quantity(kind)));
}

std::string stress_location(const Solution& solution, RatingKind kind, const RatingStress& stress) {
  switch (kind) {
    case RatingKind::peak_voltage:
    case RatingKind::peak_current: return stress.time ? fmt::format("at {}", format_si(*stress.time, "s")) : "";
    case RatingKind::mean_power: {
      if (stress.segment < 1 || static_cast<std::size_t>(stress.segment) > solution.segments().size()) return "";
      const Segment& seg = solution.segments()[static_cast<std::size_t>(stress.segment - 1)];
      return fmt::format("segment {}, {} .. {}", seg.number, format_si(seg.from, "s"), format_si(seg.to, "s"));
    }
    case RatingKind::energy:
    case RatingKind::i2t: return "over the window";
    case RatingKind::dvdt:
    case RatingKind::didt:
    case RatingKind::rms_current:
    case RatingKind::peak_reverse_voltage:
    case RatingKind::peak_forward_current: return stress.time ? fmt::format("at {}", format_si(*stress.time, "s")) : "";
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
                                 format_si(r.actual, r.unit, 4), format_si(r.rated, r.unit, 4),
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
