#include "netfold/claims.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <numbers>

#include <fmt/format.h>

#include "netfold/stress.hpp"
#include "netfold/units.hpp"
#include "netfold/worst.hpp"

namespace netfold {

namespace {

constexpr double kRadToDeg = 180.0 / std::numbers::pi;

// Computed values get one digit more than reports use, so that a value just outside a tight
// claim does not print as the claimed number itself.
constexpr int kComputedDigits = 5;
// Claimed values are echoed with enough digits to give back what was written.
constexpr int kClaimedDigits = 6;

// A quantity's value, or why it has none; `note` adds context to a defined value.
struct Evaluation {
  std::optional<double> value;
  std::string why;
  std::string note;
};

Evaluation undefined(std::string why) { return {std::nullopt, std::move(why), {}}; }

std::string_view op_text(CompareOp op) {
  switch (op) {
    case CompareOp::eq: return "=";
    case CompareOp::lt: return "<";
    case CompareOp::le: return "<=";
    case CompareOp::gt: return ">";
    case CompareOp::ge: return ">=";
  }
  return "?";
}

bool is_angle(const Claim& claim) { return claim.dimension == Dimension::angle; }

// A value of the claim's quantity for messages; angles are shown in degrees, rates of change in
// V/µs and A/µs as the ratings show them.
std::string show(const Claim& claim, double value, int digits) {
  if (is_angle(claim)) return format_si(value * kRadToDeg, "°", digits);
  if (claim.quantity == ClaimQuantity::dvdt) return rating_value_text(RatingKind::dvdt, value, digits);
  if (claim.quantity == ClaimQuantity::didt) return rating_value_text(RatingKind::didt, value, digits);
  return format_si(value, dimension_symbol(claim.dimension), digits);
}

// The level of a time-below or share claim, in the unit of its observable.
std::string show_level(const Claim& claim, int digits) {
  return format_si(claim.level, dimension_symbol(claim.observable.dimension()), digits);
}

// (−π, π]: the difference of two phases as the shorter turn, so that 179° and −179° are 2° apart.
double wrap_angle(double x) {
  double w = std::remainder(x, 2.0 * std::numbers::pi);
  if (w <= -std::numbers::pi) w += 2.0 * std::numbers::pi;
  return w;
}

std::string error_text(const Error& e) {
  if (const auto* input = dynamic_cast<const InputError*>(&e); input && !input->diagnostics().empty())
    return input->diagnostics().front().message;
  return e.what();
}

std::string observable_noun(const Observable& o) { return o.text; }

// The circuit with `extra` watched as well, so that the worst-case search (which covers the
// watched quantities) also covers an observable that only a claim names. Node and element
// indices are kept, so the claim's observable stays valid against the copy.
Circuit with_watches(const Circuit& c, const std::vector<Observable>& observed, const std::vector<Observable>& extra) {
  CircuitBuilder b(c.source_ptr());
  for (const auto& n : c.nodes()) b.node(n);
  b.set_ground(c.nodes().at(c.ground()), c.ground_loc());
  for (const auto& e : c.elements()) b.add_element(e);
  b.set_title(c.title());
  for (const auto& o : observed) b.add_watch(o);
  for (const auto& o : extra) b.add_watch(o);
  for (std::size_t k = 0; k < c.sweeps().size(); ++k)
    b.add_sweep(c.sweeps()[k], k > 0 && c.sweeps()[k].line == c.sweeps()[k - 1].line);
  if (c.window()) b.set_window(*c.window());
  if (c.resolution()) b.set_resolution(*c.resolution());
  if (c.golden_tolerance()) b.set_golden_tolerance(*c.golden_tolerance());
  return std::move(b).build();
}

// Evaluates the claims of one circuit, computing each costly thing (figures of an
// observable, the worst-case search) once however many claims use it.
class ClaimEvaluator {
 public:
  ClaimEvaluator(const Circuit& c, const Solution& s) : c_(c), s_(s) {}

  Evaluation evaluate(const Claim& claim) {
    try {
      switch (claim.quantity) {
        case ClaimQuantity::tau:
        case ClaimQuantity::rth:
        case ClaimQuantity::vth: return segment_quantity(claim);
        case ClaimQuantity::peak:
        case ClaimQuantity::max:
        case ClaimQuantity::min:
        case ClaimQuantity::final_value:
        case ClaimQuantity::amplitude:
        case ClaimQuantity::phase: return figure(claim);
        case ClaimQuantity::at_time: return at_time(claim);
        case ClaimQuantity::energy: {
          double scale = 0.0;
          double e = element_energy(s_, claim.element, &scale);
          // An element that gives back all it took nets rounding noise, not a tiny energy.
          if (std::fabs(e) <= 1e-12 * scale) e = 0.0;
          return {e, {}, {}};
        }
        case ClaimQuantity::i2t: return {element_i2t(s_, claim.element), {}, {}};
        case ClaimQuantity::worst_peak: return worst_peak(claim);
        case ClaimQuantity::share_peak: return share_peak(claim);
        case ClaimQuantity::power: return power(claim);
        case ClaimQuantity::time_below: return below(claim);
        case ClaimQuantity::dvdt:
        case ClaimQuantity::didt: return rate(claim);
        case ClaimQuantity::rms: return rms(claim);
        // Read by the parser only once the engine computes them (several storage elements,
        // distributions).
        case ClaimQuantity::frequency:
        case ClaimQuantity::damping: return segment_quantity(claim);
      }
      return undefined("is not computed by this build");
    } catch (const Error& e) {
      return undefined(fmt::format("cannot be evaluated: {}", error_text(e)));
    }
  }

 private:
  const Circuit& c_;
  const Solution& s_;
  std::map<std::string, Figures> figures_;
  std::optional<WorstReport> worst_;
  std::string worst_error_;
  bool worst_done_ = false;

  Evaluation segment_quantity(const Claim& claim) {
    std::string name = claim_quantity_text(claim, c_);
    if (s_.storage_elements().empty())
      return undefined(fmt::format("{} is undefined: the circuit has no capacitor or inductor", name));
    const auto& segs = s_.segments();
    if (claim.segment < 1 || static_cast<std::size_t>(claim.segment) > segs.size()) {
      std::vector<std::string> spans;
      for (const auto& seg : segs) spans.push_back(fmt::format("{} .. {}", format_si(seg.from, "s"), format_si(seg.to, "s")));
      return undefined(fmt::format("segment {} does not exist: the window has {} segment{} ({})", claim.segment,
                                   segs.size(), segs.size() == 1 ? "" : "s", fmt::join(spans, ", ")));
    }
    const Segment& seg = segs[static_cast<std::size_t>(claim.segment - 1)];
    if (claim.quantity == ClaimQuantity::frequency || claim.quantity == ClaimQuantity::damping) {
      // The slowest-decaying oscillatory mode (modes are listed slowest first).
      for (const NaturalMode& m : seg.modes)
        if (m.oscillatory)
          return {claim.quantity == ClaimQuantity::frequency ? m.frequency : m.damping, {}, {}};
      return undefined(fmt::format("{} is undefined: segment {} has no oscillatory mode{}", name, claim.segment,
                                   s_.modal_path() ? "" : " (one storage element has a single real mode)"));
    }
    if (s_.modal_path()) {
      if (claim.quantity != ClaimQuantity::tau)
        return undefined(fmt::format("{} is undefined with several storage elements: there is no single Thevenin "
                                     "equivalent; claim tau, frequency or damping instead",
                                     name));
      Evaluation e{seg.tau, {}, {}};
      if (std::isinf(seg.tau)) e.note = "tau is infinite: a mode does not decay (a capacitor with no DC path)";
      else if (seg.unstable()) e.note = "tau is negative: a mode grows";
      return e;
    }
    const std::string& storage = c_.element(s_.storage()).name;
    switch (claim.quantity) {
      case ClaimQuantity::tau: {
        Evaluation e{seg.tau, {}, {}};
        if (std::isinf(seg.tau))
          e.note = fmt::format("tau is infinite: {} sees {} in segment {}", storage,
                               c_.element(s_.storage()).kind == ElementKind::capacitor ? "no resistance to discharge"
                                                                                        : "a short circuit",
                               claim.segment);
        else if (seg.unstable())
          e.note = "tau is negative: a controlled source makes the response grow";
        return e;
      }
      case ClaimQuantity::rth: {
        Evaluation e{seg.equivalent.rth, {}, {}};
        if (std::isinf(seg.equivalent.rth))
          e.note = fmt::format("rth is infinite: {} sees an open circuit in segment {}", storage, claim.segment);
        return e;
      }
      case ClaimQuantity::vth:
        if (!seg.voc_defined)
          return undefined(fmt::format("{} is undefined: {} sees an open circuit (R_th = ∞) in segment {}, so there "
                                       "is no Thevenin voltage",
                                       name, storage, claim.segment));
        return {seg.voc.value(seg.from), {}, {}};
      // Not quantities of a segment's equivalent: evaluate() does not send them here.
      case ClaimQuantity::peak:
      case ClaimQuantity::max:
      case ClaimQuantity::min:
      case ClaimQuantity::final_value:
      case ClaimQuantity::at_time:
      case ClaimQuantity::amplitude:
      case ClaimQuantity::phase:
      case ClaimQuantity::energy:
      case ClaimQuantity::i2t:
      case ClaimQuantity::worst_peak:
      case ClaimQuantity::frequency:
      case ClaimQuantity::damping:
      case ClaimQuantity::share_peak:
      case ClaimQuantity::time_below:
      case ClaimQuantity::dvdt:
      case ClaimQuantity::didt:
      case ClaimQuantity::rms:
      case ClaimQuantity::power: break;
    }
    return undefined(fmt::format("{} is not a quantity of a segment", name));
  }

  Evaluation power(const Claim& claim) {
    int segment = 0;
    const double p = element_mean_power(s_, claim.element, &segment);
    RatingStress stress;
    stress.segment = segment;
    return {p, {}, stress_location(s_, RatingKind::mean_power, stress)};
  }

  Evaluation rate(const Claim& claim) {
    const bool dv = claim.quantity == ClaimQuantity::dvdt;
    const RateFigure r = largest_rate(
        s_, element_observable(c_, claim.element, dv ? ObservableKind::element_voltage : ObservableKind::element_current));
    RatingStress stress;
    stress.value = r.value;
    stress.time = r.time;
    stress.before_event = r.before_event;
    return {r.value, {}, stress_location(s_, dv ? RatingKind::dvdt : RatingKind::didt, stress)};
  }

  Evaluation rms(const Claim& claim) {
    const RmsFigure r = largest_rms(s_, element_observable(c_, claim.element, ObservableKind::element_current));
    RatingStress stress;
    stress.time = r.from;
    stress.until = r.from + r.span;
    stress.over_window = r.over_window;
    return {r.value, {}, stress_location(s_, RatingKind::rms_current, stress)};
  }

  Evaluation below(const Claim& claim) {
    const Window& w = s_.window();
    const std::string level = show_in(claim.observable, claim.level);
    if (claim.after && (*claim.after < 0.0 || *claim.after > w.to))
      return undefined(fmt::format("the start {} is outside 0 s .. {}, the span the window covers",
                                   format_si(*claim.after, "s"), format_si(w.to, "s")));
    const TimeBelow t = time_below(s_, claim.observable, claim.level, claim.after);
    const std::string from = claim.after ? format_si(t.from, "s") : fmt::format("the last event at {}", format_si(t.from, "s"));
    if (!t.stays_below)
      return undefined(fmt::format("|{}| does not stay below {} after {}: it is {} at the window's end ({}); "
                                   "lengthen the window or check the discharge path",
                                   claim.observable.text, level, from,
                                   show_in(claim.observable, s_.value(claim.observable, w.to)), format_si(w.to, "s")));
    return {t.time, {}, fmt::format("below {} from {} on, measured from {}", level, format_si(t.from + t.time, "s"), from)};
  }

  static std::string show_in(const Observable& o, double value) {
    return format_si(value, dimension_symbol(o.dimension()), kComputedDigits);
  }

  const Figures& figures_of(const Observable& o) {
    auto it = figures_.find(o.text);
    if (it == figures_.end()) it = figures_.emplace(o.text, compute_figures(s_, o)).first;
    return it->second;
  }

  Evaluation figure(const Claim& claim) {
    const Observable& o = claim.observable;
    const Figures& f = figures_of(o);
    switch (claim.quantity) {
      case ClaimQuantity::peak: return {f.peak, {}, fmt::format("at {}", format_si(f.t_peak, "s"))};
      case ClaimQuantity::max: return {f.max, {}, fmt::format("at {}", format_si(f.t_max, "s"))};
      case ClaimQuantity::min: return {f.min, {}, fmt::format("at {}", format_si(f.t_min, "s"))};
      case ClaimQuantity::final_value: return {f.final_value, {}, {}};
      case ClaimQuantity::amplitude:
      case ClaimQuantity::phase: break;  // the steady-state fundamental, below
      // Not figures of an observable: evaluate() does not send them here.
      case ClaimQuantity::tau:
      case ClaimQuantity::rth:
      case ClaimQuantity::vth:
      case ClaimQuantity::at_time:
      case ClaimQuantity::energy:
      case ClaimQuantity::i2t:
      case ClaimQuantity::worst_peak:
      case ClaimQuantity::frequency:
      case ClaimQuantity::damping:
      case ClaimQuantity::share_peak:
      case ClaimQuantity::time_below:
      case ClaimQuantity::dvdt:
      case ClaimQuantity::didt:
      case ClaimQuantity::rms:
      case ClaimQuantity::power: return undefined(fmt::format("{} is not a figure of an observable", claim_quantity_text(claim, c_)));
    }
    const char* what = claim.quantity == ClaimQuantity::amplitude ? "amplitude" : "phase";
    if (o.kind == ObservableKind::element_power)
      return undefined(fmt::format("the {} of a power is undefined: {} has no steady-state fundamental", what,
                                   observable_noun(o)));
    if (!f.steady)
      return undefined(fmt::format("the {} of {} is undefined: it has no steady state in the last segment (it "
                                   "ramps or grows)",
                                   what, observable_noun(o)));
    if (!f.amplitude)
      return undefined(fmt::format("the {} of {} is undefined: the circuit has no sinusoidal source, so there is "
                                   "no steady-state fundamental",
                                   what, observable_noun(o)));
    if (claim.quantity == ClaimQuantity::amplitude) return {*f.amplitude, {}, {}};
    if (!f.phase)
      return undefined(fmt::format("the phase of {} is undefined: its fundamental is zero", observable_noun(o)));
    return {*f.phase, {}, {}};
  }

  Evaluation at_time(const Claim& claim) {
    const Window& w = s_.window();
    if (claim.time < w.from || claim.time > w.to)
      return undefined(fmt::format("{} is outside the window {} .. {}", format_si(claim.time, "s"),
                                   format_si(w.from, "s"), format_si(w.to, "s")));
    return {s_.value(claim.observable, claim.time), {}, {}};
  }

  void search_worst() {
    worst_done_ = true;
    // The search covers the solution's observables; claimed ones outside that list join it.
    std::vector<Observable> extra;
    WorstOptions options;
    for (const auto& cl : c_.claims()) {
      if (cl.quantity == ClaimQuantity::share_peak) options.share_levels.push_back({cl.observable.text, cl.level});
      if (cl.quantity != ClaimQuantity::worst_peak && cl.quantity != ClaimQuantity::share_peak) continue;
      auto named = [&](const Observable& o) { return o.text == cl.observable.text; };
      if (std::none_of(s_.observables().begin(), s_.observables().end(), named) &&
          std::none_of(extra.begin(), extra.end(), named))
        extra.push_back(cl.observable);
    }
    try {
      if (extra.empty()) {
        worst_ = find_worst_case(c_, c_.sweeps(), options);
      } else {
        // The report keeps no reference to the circuit it searched, so a local copy is enough.
        Circuit widened = with_watches(c_, s_.observables(), extra);
        worst_ = find_worst_case(widened, widened.sweeps(), options);
      }
    } catch (const Error& e) {
      worst_error_ = error_text(e);
    }
  }

 public:
  // Every rating, at the worst case over the sweeps: the claims' search when it ran (it
  // covers the ratings too), else a search of the ratings alone.
  std::vector<ClaimResult> ratings() {
    std::vector<RatingCheck> checks;
    try {
      if (c_.sweeps().empty() && !has_tolerances(c_)) checks = check_ratings(s_);
      else if (worst_done_ && worst_) checks = worst_->ratings;
      else checks = worst_case_ratings(c_, c_.sweeps());
    } catch (const Error& e) {
      std::vector<ClaimResult> out;
      for (const auto& el : c_.elements())
        for (const auto& r : el.ratings) {
          ClaimResult cr;
          cr.text = fmt::format("{} {}", el.name, rating_quantity(r.kind));
          cr.path = c_.source().path();
          cr.loc = r.loc.line > 0 ? r.loc : el.loc;
          cr.message = fmt::format("cannot be evaluated: {}", error_text(e));
          out.push_back(std::move(cr));
        }
      return out;
    }
    std::vector<ClaimResult> out;
    for (const RatingCheck& r : checks) out.push_back(rating_result(r));
    return out;
  }

  ClaimResult rating_result(const RatingCheck& r) const {
    ClaimResult cr;
    const Element& e = c_.element(r.element);
    cr.text = fmt::format("{} {}", e.name, r.quantity);
    cr.path = c_.source().path();
    cr.loc = r.loc.line > 0 ? r.loc : e.loc;
    cr.computed = r.actual;
    cr.margin = r.rated - std::fabs(r.actual);
    cr.passed = !r.exceeded;
    std::string detail = fmt::format("{} used", percent_text(r.used_percent));
    if (!r.where.empty()) detail += "; " + r.where;
    if (!r.worst_argument.empty()) detail += "; " + r.worst_argument;
    cr.message = fmt::format("computed {} {} rated {} ({})", rating_value_text(r.kind, std::fabs(r.actual), kComputedDigits),
                             r.exceeded ? ">" : "<=", rating_value_text(r.kind, r.rated, kClaimedDigits), detail);
    return cr;
  }

 private:
  Evaluation worst_peak(const Claim& claim) {
    if (c_.sweeps().empty() && !has_tolerances(c_))
      return undefined(fmt::format("worst peak {} needs a sweep: declare one with 'sweep TARGET FROM .. TO' "
                                   "(a source's phase, the storage element's initial state or a switch's closing time)",
                                   claim.observable.text));
    if (!worst_done_) search_worst();
    if (!worst_) return undefined(fmt::format("the worst-case search failed: {}", worst_error_));
    std::optional<double> best;
    std::string where;
    for (const auto& sweep : worst_->sweeps)
      for (const auto& ex : sweep.observables) {
        if (ex.name != claim.observable.text) continue;
        if (!best || ex.worst > *best) {
          best = ex.worst;
          where = fmt::format("over sweep {}, at {}, t = {}", sweep.sweep.text,
                              sweep_argument_text(c_, sweep.sweep, ex.worst_at, 4), format_si(ex.t_peak, "s"));
        }
      }
    if (!best) return undefined(fmt::format("the worst-case search did not cover {}", claim.observable.text));
    return {*best, {}, where};
  }

  // The share (in %) of each sweep's range (and tolerance box) in which the peak exceeds the
  // level; the claim speaks of the largest over the sweeps (spec v2).
  Evaluation share_peak(const Claim& claim) {
    if (c_.sweeps().empty() && !has_tolerances(c_))
      return undefined(fmt::format("share peak {} needs a sweep or a tolerance: declare one with 'sweep TARGET FROM .. "
                                   "TO' or 'tolerance P%'",
                                   claim.observable.text));
    if (!worst_done_) search_worst();
    if (!worst_) return undefined(fmt::format("the worst-case search failed: {}", worst_error_));
    std::optional<double> largest;
    std::string where;
    for (const auto& sweep : worst_->sweeps)
      for (const auto& ls : sweep.shares) {
        if (ls.observable != claim.observable.text || ls.level != claim.level) continue;
        if (!largest || 100.0 * ls.share > *largest) {
          largest = 100.0 * ls.share;
          where = fmt::format("over sweep {}{}", sweep.sweep.text,
                              sweep.samples ? fmt::format(", {} samples", sweep.samples) : std::string());
        }
      }
    if (!largest) return undefined(fmt::format("the worst-case search did not cover {}", claim.observable.text));
    return {*largest, {}, where};
  }
};

}  // namespace

std::string ClaimResult::location() const { return fmt::format("{}:{}", path, loc.line); }

std::string claim_quantity_text(const Claim& claim, const Circuit& circuit) {
  auto segmented = [&](const char* name) {
    return claim.segment == 1 ? std::string(name) : fmt::format("{}[{}]", name, claim.segment);
  };
  const std::string& obs = claim.observable.text;
  switch (claim.quantity) {
    case ClaimQuantity::tau: return segmented("tau");
    case ClaimQuantity::rth: return segmented("rth");
    case ClaimQuantity::vth: return segmented("vth");
    case ClaimQuantity::peak: return "peak " + obs;
    case ClaimQuantity::max: return "max " + obs;
    case ClaimQuantity::min: return "min " + obs;
    case ClaimQuantity::final_value: return "final " + obs;
    case ClaimQuantity::at_time: return fmt::format("{} at {}", obs, format_si(claim.time, "s"));
    case ClaimQuantity::amplitude: return "amplitude " + obs;
    case ClaimQuantity::phase: return "phase " + obs;
    case ClaimQuantity::energy:
    case ClaimQuantity::i2t: {
      std::string name = claim.element < circuit.elements().size() ? circuit.element(claim.element).name : "?";
      return (claim.quantity == ClaimQuantity::energy ? "energy " : "i2t ") + name;
    }
    case ClaimQuantity::worst_peak: return "worst peak " + obs;
    case ClaimQuantity::frequency: return segmented("frequency");
    case ClaimQuantity::damping: return segmented("damping");
    case ClaimQuantity::share_peak: return fmt::format("share peak {} > {}", obs, show_level(claim, kClaimedDigits));
    case ClaimQuantity::time_below: return fmt::format("time-below {} {}{}", obs, show_level(claim, kClaimedDigits),
                         claim.after ? fmt::format(" after {}", format_si(*claim.after, "s", kClaimedDigits)) : "");
    case ClaimQuantity::dvdt:
    case ClaimQuantity::didt:
    case ClaimQuantity::rms:
    case ClaimQuantity::power: {
      std::string name = claim.element < circuit.elements().size() ? circuit.element(claim.element).name : "?";
      const char* word = claim.quantity == ClaimQuantity::dvdt   ? "dvdt "
                         : claim.quantity == ClaimQuantity::didt ? "didt "
                         : claim.quantity == ClaimQuantity::rms  ? "rms "
                                                                 : "power ";
      return word + name;
    }
  }
  return "?";
}

ClaimResult compare_claim(const Claim& claim, const std::string& path, double computed) {
  ClaimResult r;
  r.text = claim.text;
  r.path = path;
  r.loc = claim.loc;
  std::string claimed = fmt::format("claimed {}{}", claim.op == CompareOp::eq ? "" : std::string(op_text(claim.op)) + " ",
                                    show(claim, claim.value, kClaimedDigits));
  if (claim.op == CompareOp::eq)
    claimed += claim.tolerance_is_percent ? fmt::format(" ± {}", format_si(claim.tolerance, "%", kClaimedDigits))
                                          : fmt::format(" ± {}", show(claim, claim.tolerance, kClaimedDigits));
  if (std::isnan(computed)) {
    r.passed = false;
    r.message = fmt::format("the computed value is undefined (not a number), {}", claimed);
    return r;
  }
  r.computed = computed;
  double margin = 0.0;
  // Signed distance from the claimed value; for phases the shorter way round.
  double diff = std::isinf(computed) ? computed : computed - claim.value;
  if (is_angle(claim) && std::isfinite(diff)) diff = wrap_angle(diff);
  switch (claim.op) {
    case CompareOp::eq: {
      double tol = claim.tolerance_is_percent ? std::fabs(claim.value) * claim.tolerance / 100.0 : claim.tolerance;
      margin = std::isinf(diff) ? -kInfinity : tol - std::fabs(diff);
      r.passed = margin >= 0.0;
      break;
    }
    case CompareOp::lt:
    case CompareOp::le:
      margin = -diff;
      r.passed = claim.op == CompareOp::lt ? margin > 0.0 : margin >= 0.0;
      break;
    case CompareOp::gt:
    case CompareOp::ge:
      margin = diff;
      r.passed = claim.op == CompareOp::gt ? margin > 0.0 : margin >= 0.0;
      break;
  }
  r.margin = margin;
  double shown = is_angle(claim) ? wrap_angle(computed) : computed;
  r.message = fmt::format("computed {}, {} (margin {})", show(claim, shown, kComputedDigits), claimed,
                          show(claim, margin, 4));
  return r;
}

namespace {

ClaimResult claim_result(ClaimEvaluator& evaluator, const Circuit& circuit, const Claim& claim) {
  Evaluation e = evaluator.evaluate(claim);
  if (!e.value) {
    ClaimResult r;
    r.text = claim.text;
    r.path = circuit.source().path();
    r.loc = claim.loc;
    r.message = e.why;
    return r;
  }
  ClaimResult r = compare_claim(claim, circuit.source().path(), *e.value);
  if (!e.note.empty()) r.message += "; " + e.note;
  return r;
}

}  // namespace

std::vector<ClaimResult> evaluate_claims(const Circuit& circuit, const Solution& solution) {
  std::vector<ClaimResult> results;
  ClaimEvaluator evaluator(circuit, solution);
  for (const Claim& claim : circuit.claims()) results.push_back(claim_result(evaluator, circuit, claim));
  return results;
}

CircuitVerdicts evaluate_verdicts(const Circuit& circuit, const Solution& solution) {
  CircuitVerdicts v;
  ClaimEvaluator evaluator(circuit, solution);
  for (const Claim& claim : circuit.claims()) v.claims.push_back(claim_result(evaluator, circuit, claim));
  v.ratings = evaluator.ratings();
  return v;
}

std::vector<ClaimResult> unevaluated_claims(const Circuit& circuit, const std::string& reason) {
  std::vector<ClaimResult> results;
  for (const Claim& claim : circuit.claims()) {
    ClaimResult r;
    r.text = claim.text;
    r.path = circuit.source().path();
    r.loc = claim.loc;
    r.message = reason;
    results.push_back(std::move(r));
  }
  return results;
}

}  // namespace netfold
