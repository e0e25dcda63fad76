// The readable reports: `solve` (with and without --explain) and `equiv`.
#include <algorithm>
#include <cmath>
#include <numbers>

#include <fmt/format.h>
#include <fmt/ostream.h>
#include <fmt/ranges.h>

#include "netfold/report.hpp"
#include "netfold/units.hpp"
#include "report/explain_states.hpp"
#include "response/forced_response.hpp"
#include "response/terms.hpp"

namespace netfold {

namespace {

constexpr double kRadToDeg = 180.0 / std::numbers::pi;

std::string si(double v, std::string_view unit) { return format_si(v, unit, 4); }

// For display only: a value below 1e-10 of the scale it belongs to is rounding or a decay to
// e^-400, and prints as 0. JSON and CSV keep the exact numbers.
double shown(double v, double scale) { return std::fabs(v) <= 1e-10 * std::fabs(scale) ? 0.0 : v; }

std::string degrees(double rad) { return format_si(rad * kRadToDeg, "°", 4); }

std::string_view state_symbol(const Element& e) { return e.kind == ElementKind::capacitor ? "v" : "i"; }
std::string_view state_unit(const Element& e) { return e.kind == ElementKind::capacitor ? "V" : "A"; }

// "33.94 V·cos(2π·50 Hz·t - 64.48°)"
std::string cosine_text(const Phasor& p, std::string_view unit) {
  double mag = std::abs(p.value), ph = std::arg(p.value) * kRadToDeg;
  std::string phase;
  if (std::fabs(ph) >= 5e-5) phase = fmt::format(" {} {}", ph < 0 ? "-" : "+", format_si(std::fabs(ph), "°", 4));
  return fmt::format("{}·cos(2π·{}·t{})", si(mag, unit), si(p.frequency, "Hz"), phase);
}

// Joins signed terms: "a + b - c".
class TermList {
 public:
  void add(double coefficient, const std::string& text_of_magnitude) {
    if (terms_.empty()) {
      terms_ = (coefficient < 0 ? "-" : "") + text_of_magnitude;
    } else {
      terms_ += fmt::format(" {} {}", coefficient < 0 ? "-" : "+", text_of_magnitude);
    }
  }
  void add_raw(const std::string& text) { terms_ += terms_.empty() ? text : " + " + text; }
  std::string str(std::string_view zero) const { return terms_.empty() ? std::string(zero) : terms_; }

 private:
  std::string terms_;
};

std::string drive_text(const Drive& d, std::string_view unit) {
  TermList t;
  if (d.dc != 0.0 || d.phasors.empty()) t.add(d.dc, si(std::fabs(d.dc), unit));
  for (const auto& p : d.phasors)
    if (std::abs(p.value) > 0.0) t.add_raw(cosine_text(p, unit));
  return t.str(si(0.0, unit));
}

std::string shifted_time(double t0) { return t0 == 0.0 ? "t" : fmt::format("(t - {})", si(t0, "s")); }

}  // namespace

std::string wave_expression(const Wave& w, std::string_view unit) {
  TermList t;
  double constant = w.offset, exponential = w.transient, ramp = 0.0;
  if (w.a == 0.0) {
    constant += w.transient;
    exponential = 0.0;
    ramp = w.drift;
  } else {
    constant -= w.drift / w.a;
    exponential += w.drift / w.a;
  }
  double scale = std::max({std::fabs(constant), std::fabs(exponential), std::fabs(ramp * (w.t1 - w.t0))});
  for (const auto& p : w.phasors) scale = std::max(scale, std::abs(p.value));
  constant = shown(constant, scale);
  exponential = shown(exponential, scale);
  if (constant != 0.0) t.add(constant, si(std::fabs(constant), unit));
  for (const auto& p : w.phasors)
    if (shown(std::abs(p.value), scale) > 0.0) t.add_raw(cosine_text(p, unit));
  if (ramp != 0.0) t.add(ramp, fmt::format("{}/s·{}", si(std::fabs(ramp), unit), shifted_time(w.t0)));
  if (exponential != 0.0) {
    double tau = 1.0 / std::fabs(w.a);
    t.add(exponential, fmt::format("{}·e^({}{}/{})", si(std::fabs(exponential), unit), w.a < 0 ? "-" : "",
                                   shifted_time(w.t0), si(tau, "s")));
  }
  return t.str(si(0.0, unit));
}

namespace {

std::string rth_text(double rth) { return std::isinf(rth) ? "∞ (open)" : si(rth, "Ω"); }

const char* initial_source_text(InitialStateSource src) {
  switch (src) {
    case InitialStateSource::attribute: return "given by 'initial'";
    case InitialStateSource::option: return "set by the sweep";
    case InitialStateSource::steady_state: return "steady state before t = 0";
    case InitialStateSource::undetermined: return "undetermined before t = 0, started from 0";
    case InitialStateSource::none: return "";
  }
  return "";
}

std::string segment_heading(const Circuit& c, const Segment& s) {
  const std::string positions = configuration_text(c, s.positions);
  std::string changes;
  for (const auto& ch : s.changes) changes += (changes.empty() ? "" : ", ") + ch;
  return fmt::format("segment {}: {} .. {}{}{}{}{}", s.number, si(s.from, "s"), si(s.to, "s"),
                     changes.empty() ? "" : " — at start: ", changes, positions.empty() ? "" : " — ", positions);
}

// A sum of modal terms (several storage elements), with t' = t − t0 of the segment: a real
// rate as e^(−t'/τ), a complex one as e^(−t'/τ)·cos(ω·t' + φ), powers of t' and the φ factor of
// a drift or a resonance as written; the DC and phasor parts as drive_text writes them.
std::string terms_expression(const response::Response& r, std::string_view unit) {
  std::string out = drive_text(r.periodic, unit);
  // Terms that are rounding beside the others over the segment are not written.
  const double span = r.t1 - r.t0;
  auto size = [&](const response::Term& t) {
    return std::abs(t.c) * std::pow(span, t.k) * std::max(1.0, std::exp(t.z.real() * span)) * (t.has_phi ? span : 1.0);
  };
  double total = std::fabs(r.periodic.dc);
  for (const auto& p : r.periodic.phasors) total += std::abs(p.value);
  for (const auto& t : r.terms) total += size(t);
  for (const auto& t : r.terms) {
    if (size(t) <= 1e-12 * total) continue;
    const double decay = t.z.real();
    std::string shape = decay == 0.0 ? "" : fmt::format("·e^(−t'/{})", si(-1.0 / decay, "s"));
    if (decay > 0.0) shape = fmt::format("·e^(t'/{})", si(1.0 / decay, "s"));
    if (t.k > 0) shape += t.k == 1 ? "·t'" : fmt::format("·t'^{}", t.k);
    if (t.has_phi) shape += fmt::format("·φ({:.4g}{:+.4g}j 1/s, t')", t.d.real(), t.d.imag());
    if (t.z.imag() != 0.0) {
      out += fmt::format(" + {}{}·cos({}·t' {} {:.4g}°)", si(std::abs(t.c), unit), shape,
                         si(t.z.imag() / (2.0 * std::numbers::pi), "Hz·2π"), std::arg(t.c) < 0 ? "−" : "+",
                         std::fabs(std::arg(t.c)) * 180.0 / std::numbers::pi);
    } else {
      out += fmt::format(" {} {}{}", t.c.real() < 0 ? "−" : "+", si(std::fabs(t.c.real()), unit), shape);
    }
  }
  return out;
}

void write_modes(std::ostream& out, const Segment& s) {
  std::vector<std::string> parts;
  for (const NaturalMode& m : s.modes) {
    const std::string tau = std::isinf(m.tau) ? std::string("∞") : si(m.tau, "s");
    if (m.oscillatory)
      parts.push_back(fmt::format("oscillatory f_d = {}, f_n = {}, ζ = {:.4g}, τ = {}", si(m.frequency, "Hz"),
                                  si(m.natural_frequency, "Hz"), m.damping, tau));
    else
      parts.push_back(fmt::format("real τ = {}{}", tau, m.multiplicity > 1 ? fmt::format(" (×{})", m.multiplicity) : ""));
  }
  fmt::print(out, "  natural modes (slowest first): {}\n", parts.empty() ? "none" : fmt::format("{}", fmt::join(parts, "; ")));
}

void write_state_lines(std::ostream& out, const Solution& sol, const Segment& s) {
  const Circuit& c = sol.circuit();
  const Element& st = c.element(sol.storage());
  auto sym = state_symbol(st);
  auto unit = state_unit(st);
  if (s.mode == PortMode::held_at_zero) {
    fmt::print(out, "  {} has no path for its current here: i(t) = 0 A throughout (R_th = ∞)\n", st.name);
    return;
  }
  if (s.voc_defined)
    fmt::print(out, "  Thevenin: R_th = {}, v_oc(t) = {}\n", rth_text(s.equivalent.rth), drive_text(s.voc, "V"));
  else
    fmt::print(out, "  Thevenin: R_th = ∞ (nothing discharges {}), v_oc undefined\n", st.name);
  if (s.isc_defined)
    fmt::print(out, "  Norton:   i_sc(t) = {}\n", drive_text(s.isc, "A"));
  else
    fmt::print(out, "  Norton:   i_sc undefined (R_th = 0)\n");
  if (std::isinf(s.tau)) {
    fmt::print(out, "  τ = ∞: {} integrates {} exactly\n", st.name,
               st.kind == ElementKind::capacitor ? "i_sc(t)/C" : "v_oc(t)/L");
  } else {
    fmt::print(out, "  τ = {} = {}{}\n", st.kind == ElementKind::capacitor ? "R_th·C" : "L/R_th", si(s.tau, "s"),
               s.unstable() ? "  (negative: unstable)" : "");
  }
  auto steady = s.state.steady_state();
  if (steady && !std::isinf(s.tau)) {
    double t0 = s.from;
    fmt::print(out, "  {0}(t) = {0}_ss(t) + ({0}({1}+) - {0}_ss({1}+))·e^(-{2}/τ)\n", sym, si(t0, "s"), shifted_time(t0));
    fmt::print(out, "     {}_ss(t) = {}; {}({}+) = {}; {}_ss({}+) = {}\n", sym, drive_text(*steady, unit), sym,
               si(t0, "s"), si(s.state_start, unit), sym, si(t0, "s"), si(steady->value(t0), unit));
  }
  fmt::print(out, "  {}(t) = {}\n", sym, wave_expression(s.state, unit));
}

}  // namespace

void write_solve_text(std::ostream& out, const SolveReport& report) {
  const Solution& sol = *report.solution;
  const Circuit& c = sol.circuit();
  fmt::print(out, "netfold solve: {}{}\n", c.title().empty() ? c.source().path() : c.title(),
             c.title().empty() ? "" : fmt::format("  ({})", c.source().path()));
  if (report.hazardous) fmt::print(out, "\n{}\n\n", kHazardCaution);
  if (sol.storage() != kNone) {
    const Element& st = c.element(sol.storage());
    fmt::print(out, "storage element: {}, {} {} (line {})\n", st.name, kind_keyword(st.kind),
               si(st.value, st.kind == ElementKind::capacitor ? "F" : "H"), st.loc.line);
    fmt::print(out, "state at t = 0-: {} = {} ({})\n", state_symbol(st), si(sol.initial_state(), state_unit(st)),
               initial_source_text(sol.initial_source()));
  } else if (sol.modal_path()) {
    std::vector<std::string> list, states;
    for (std::size_t k = 0; k < sol.storage_elements().size(); ++k) {
      const Element& st = c.element(sol.storage_elements()[k]);
      list.push_back(fmt::format("{} ({} {}, line {})", st.name, kind_keyword(st.kind),
                                 si(st.value, st.kind == ElementKind::capacitor ? "F" : "H"), st.loc.line));
      states.push_back(fmt::format("{}.{} = {} ({})", st.name, st.kind == ElementKind::capacitor ? "v" : "i",
                                   si(sol.initial_states()[k], state_unit(st)),
                                   initial_source_text(sol.initial_sources()[k])));
    }
    fmt::print(out, "storage elements: {}\n", fmt::join(list, ", "));
    fmt::print(out, "state at t = 0-: {}\n", fmt::join(states, ", "));
  } else {
    fmt::print(out, "storage element: none (purely resistive circuit)\n");
  }
  fmt::print(out, "window: {} .. {}{}, resolution {}\n", si(sol.window().from, "s"), si(sol.window().to, "s"),
             sol.window_is_default() ? " (default: last event + max(8 τ, 5 periods))" : "",
             si(sol.resolution(), "s"));

  for (std::size_t k = 0; k < sol.segments().size(); ++k) {
    const Segment& s = sol.segments()[k];
    fmt::print(out, "\n{}\n", segment_heading(c, s));
    // With events found while solving, what ended the segment is part of its story.
    if (sol.event_driven() && k + 1 < sol.segments().size() && !sol.segments()[k + 1].changes.empty()) {
      std::string ends;
      for (const auto& ch : sol.segments()[k + 1].changes) ends += (ends.empty() ? "" : ", ") + ch;
      fmt::print(out, "  ends at {}: {}\n", si(s.to, "s"), ends);
    }
    if (sol.storage() != kNone) write_state_lines(out, sol, s);
    if (sol.modal_path()) write_modes(out, s);
    for (const auto& obs : sol.observables()) {
      Piece p = sol.piece(obs, s);
      std::string unit(dimension_symbol(obs.dimension()));
      if (p.has_terms()) {
        if (p.terms_g)
          fmt::print(out, "  {}(t) = [{}]·[{}]\n", obs.text, terms_expression(*p.terms_f, "V"),
                     terms_expression(*p.terms_g, "A"));
        else
          fmt::print(out, "  {}(t) = {}\n", obs.text, terms_expression(*p.terms_f, unit));
      } else if (p.g) {
        fmt::print(out, "  {}(t) = [{}]·[{}]\n", obs.text, wave_expression(p.f, "V"), wave_expression(*p.g, "A"));
      } else {
        fmt::print(out, "  {}(t) = {}\n", obs.text, wave_expression(p.f, unit));
      }
    }
  }

  fmt::print(out, "\n{:<16} {:>11} {:>10} {:>11} {:>11} {:>11}  {:<34} {:>10}\n", "observable", "peak |y|", "at",
             "max", "min", "final", "steady state", "settling");
  for (std::size_t i = 0; i < sol.observables().size(); ++i) {
    const auto& obs = sol.observables()[i];
    const Figures& f = report.figures[i];
    std::string unit(dimension_symbol(obs.dimension()));
    std::string steady = "-";
    double dc = f.dc ? shown(*f.dc, f.peak) : 0.0;
    if (f.amplitude && f.phase && shown(*f.amplitude, f.peak) != 0.0) {
      steady = fmt::format("{} ∠ {}", si(*f.amplitude, unit), degrees(*f.phase));
      if (dc != 0.0) steady += fmt::format(" + DC {}", si(dc, unit));
    } else if (f.dc) {
      steady = fmt::format("DC {}", si(dc, unit));
    }
    std::string settling = f.settling_time ? si(*f.settling_time, "s") : "-";
    fmt::print(out, "{:<16} {:>11} {:>10} {:>11} {:>11} {:>11}  {:<34} {:>10}\n", obs.text, si(f.peak, unit),
               si(f.t_peak, "s"), si(shown(f.max, f.peak), unit), si(shown(f.min, f.peak), unit),
               si(shown(f.final_value, f.peak), unit), steady, settling);
  }

  if (!report.totals.empty()) {
    fmt::print(out, "\nenergy absorbed and I²t over the window\n");
    for (const auto& t : report.totals)
      fmt::print(out, "  {:<14} energy {:>11}   I²t {:>11}\n", c.element(t.element).name,
                 si(shown(t.energy, t.energy_scale), "J"), si(t.i2t, "A²s"));
  }
  if (!report.ratings.empty()) {
    const bool worst = std::any_of(report.ratings.begin(), report.ratings.end(), [](const RatingCheck& r) { return r.worst_case; });
    fmt::print(out, "\nratings{}\n", worst ? " (worst case over the declared sweeps)" : "");
    for (const auto& r : report.ratings) fmt::print(out, "  {}\n", rating_line(c, r));
  }
  if (report.warnings.size() > (report.hazardous ? 1u : 0u)) {
    fmt::print(out, "\nwarnings\n");
    for (const auto& w : report.warnings)
      if (w != kHazardCaution) fmt::print(out, "  - {}\n", w);
  }
  if (report.verification) {
    const auto& v = *report.verification;
    if (v.passed)
      fmt::print(out, "\nverification: closed form matches numerical integration to {:.2g} ({}, {} steps)\n",
                 v.max_rel_error, v.method, v.steps);
    else
      fmt::print(out, "\nverification FAILED: {}\n", v.message);
  }
}

void write_explanation(std::ostream& out, const Solution& sol) {
  const Circuit& c = sol.circuit();
  fmt::print(out, "\nderivation\n");
  if (sol.modal_path() && !sol.storage_elements().empty()) {
    detail::write_states_explanation(out, sol, terms_expression);
    return;
  }
  if (sol.storage() == kNone) {
    fmt::print(out, "  no capacitor or inductor: each segment is a resistive network; every quantity is a fixed\n"
                    "  combination of the source values, y(t) = Σ k_j·u_j(t), solved once per segment by MNA\n");
    if (sol.event_driven()) detail::write_event_explanation(out);
    return;
  }
  const Element& st = c.element(sol.storage());
  bool cap = st.kind == ElementKind::capacitor;
  auto unit = state_unit(st);
  auto sym = state_symbol(st);
  fmt::print(out, "  1. {} ({} = {}) is the only storage element. Within a segment the rest of the network is\n"
                  "     resistive, so {} is replaced by a {} source holding its state {}(t), and the MNA\n"
                  "     equations G·x = B·u are solved once for every input u (the state and each source).\n",
             st.name, cap ? "C" : "L", si(st.value, cap ? "F" : "H"), st.name, cap ? "voltage" : "current", sym);
  fmt::print(out, "  2. From that solution the {} of {} is an affine function of the state and the sources,\n"
                  "     {}, so the state acts as the test source: its coefficient gives R_th, the rest v_oc.\n",
             cap ? "current" : "voltage", st.name,
             cap ? "i_C = (v_oc(t) - v_C)/R_th" : "v_L = v_oc(t) - R_th·i_L");
  std::string x0 = si(sol.initial_state(), unit);
  fmt::print(out, "  3. State at t = 0-: {}(0-) = {} ({}); {} is continuous across every event.\n", sym, x0,
             initial_source_text(sol.initial_source()), cap ? "a capacitor's voltage" : "an inductor's current");
  for (const auto& s : sol.segments()) {
    fmt::print(out, "\n  {}\n", segment_heading(c, s));
    if (s.mode == PortMode::held_at_zero) {
      fmt::print(out, "    {} is in series with an open circuit and carried 0 A at the event: i = 0 A, v = L·di/dt = 0 V\n",
                 st.name);
      continue;
    }
    const auto& eq = s.equivalent;
    const auto& sources = sol.sources();
    // The combination of sources making v_oc (or i_sc).
    TermList combo;
    const std::vector<double>& k = s.voc_defined ? eq.voc : eq.isc;
    for (std::size_t j = 0; j < sources.size(); ++j) {
      double coef = k[j + 1];
      if (coef == 0.0) continue;
      combo.add(coef, fmt::format("{}·{}(t)", format_si(std::fabs(coef), "", 6), c.element(sources[j]).name));
    }
    if (s.voc_defined) {
      fmt::print(out, "    a. R_th = {}\n", rth_text(eq.rth));
      fmt::print(out, "    b. v_oc(t) = {} = {}\n", combo.str("0"), drive_text(s.voc, "V"));
    } else {
      fmt::print(out, "    a. R_th = ∞: nothing but current sources reaches {}\n", st.name);
      fmt::print(out, "    b. i_sc(t) = {} = {}\n", combo.str("0"), drive_text(s.isc, "A"));
    }
    if (std::isinf(s.tau)) {
      fmt::print(out, "    c. τ = ∞, so {}(t) = {}(t0) + (1/{})·∫ {} dt:\n", sym, sym, cap ? "C" : "L",
                 cap ? "i_sc" : "v_oc");
      fmt::print(out, "       {}(t) = {}\n", sym, wave_expression(s.state, unit));
      continue;
    }
    fmt::print(out, "    c. τ = {} = {} {} {} = {}\n", cap ? "R_th·C" : "L/R_th",
               cap ? rth_text(eq.rth) : si(st.value, "H"), cap ? "×" : "/", cap ? si(st.value, "F") : rth_text(eq.rth),
               si(s.tau, "s"));
    // Forced response through H(jω) = 1/(1 + jωτ), applied to v_oc (capacitor) or i_sc (inductor).
    const Drive& drive = cap ? s.voc : s.isc;
    std::string_view dunit = cap ? "V" : "A";
    fmt::print(out, "    d. forced response {}_ss = H(jω)·{} with H(jω) = 1/(1 + jωτ):\n", sym, cap ? "v_oc" : "i_sc");
    if (drive.dc != 0.0 || drive.phasors.empty())
      fmt::print(out, "       DC: H(0) = 1 → {}\n", si(drive.dc, dunit));
    for (const auto& f : detail::forced_phasors(s, drive))
      fmt::print(out, "       {}: ωτ = {}, |H| = {}, ∠H = {} → {}\n", si(f.frequency, "Hz"), format_si(f.omega_tau, "", 4),
                 format_si(std::abs(f.gain), "", 4), degrees(std::arg(f.gain)), cosine_text(f.response, unit));
    auto steady = s.state.steady_state();
    if (steady) {
      double ss0 = steady->value(s.from);
      fmt::print(out, "    e. {}({}+) = {}, {}_ss({}+) = {}, difference {}\n", sym, si(s.from, "s"),
                 si(s.state_start, unit), sym, si(s.from, "s"), si(ss0, unit), si(s.state_start - ss0, unit));
    }
    fmt::print(out, "    f. {}(t) = {}\n", sym, wave_expression(s.state, unit));
    for (const auto& obs : sol.observables()) {
      Piece p = sol.piece(obs, s);
      std::string ounit(dimension_symbol(obs.dimension()));
      if (p.g)
        fmt::print(out, "    g. {}(t) = v·i = [{}]·[{}]\n", obs.text, wave_expression(p.f, "V"), wave_expression(*p.g, "A"));
      else
        fmt::print(out, "    g. {}(t) = {}\n", obs.text, wave_expression(p.f, ounit));
    }
  }
}

namespace {

// The storage element's share of a port's v_oc or i_sc, which the DC figure above includes.
void held_state_line(std::ostream& out, double coefficient, const char* unit, const PortEquivalent& eq,
                     const Solution& sol) {
  if (coefficient == 0.0 || eq.at_storage) return;
  const Element& st = sol.circuit().element(sol.storage());
  fmt::print(out, "        (DC includes {} from {} held at {}, its value at t = {})\n",
             si(coefficient * eq.state_value, unit), st.name, si(eq.state_value, state_unit(st)), si(eq.at, "s"));
}

}  // namespace

void write_equivalent_text(std::ostream& out, const PortEquivalent& eq, const Solution& sol) {
  const Circuit& c = sol.circuit();
  fmt::print(out, "netfold equiv: {}{}\n", c.title().empty() ? c.source().path() : c.title(),
             c.title().empty() ? "" : fmt::format("  ({})", c.source().path()));
  fmt::print(out, "port: {}   at t = {} in {}\n", eq.port, si(eq.at, "s"), segment_heading(c, *eq.segment));
  fmt::print(out, "Thevenin: R_th = {}\n", rth_text(eq.rth));
  if (eq.voc_defined) {
    fmt::print(out, "  v_oc: DC {}\n", si(eq.voc.dc, "V"));
    for (const auto& p : eq.voc.phasors)
      fmt::print(out, "        {} ∠ {} at {}\n", si(std::abs(p.value), "V"), degrees(std::arg(p.value)),
                 si(p.frequency, "Hz"));
    held_state_line(out, eq.state_coefficient, "V", eq, sol);
  } else {
    fmt::print(out, "  v_oc undefined (R_th = ∞ with a current source driving the port)\n");
  }
  fmt::print(out, "Norton: G_th = {}\n", std::isinf(eq.gth) ? "∞" : si(eq.gth, "S"));
  if (eq.isc_defined) {
    fmt::print(out, "  i_sc: DC {}\n", si(eq.isc.dc, "A"));
    held_state_line(out, eq.isc_state_coefficient, "A", eq, sol);
    for (const auto& p : eq.isc.phasors)
      fmt::print(out, "        {} ∠ {} at {}\n", si(std::abs(p.value), "A"), degrees(std::arg(p.value)),
                 si(p.frequency, "Hz"));
  } else {
    fmt::print(out, "  i_sc undefined (R_th = 0: the port is shorted by an ideal branch)\n");
  }
}

}  // namespace netfold
