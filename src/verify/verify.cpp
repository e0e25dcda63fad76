#include "netfold/verify.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>

#include <fmt/format.h>

#include "netfold/units.hpp"

namespace netfold {

double integrator_rtol_for(double rtol) { return std::clamp(rtol * 1e-4, kTightestIntegratorRtol, 1e-6); }

Schedule numerical_schedule(const Solution& solution) {
  return build_schedule(apply_scenario(solution.circuit(), solution.options().scenario), solution.window());
}

NumericalRun integrate_inputs(const Solution& solution, const IntegrateOptions& options) {
  return integrate_network(solution.circuit(), numerical_schedule(solution), solution.options().scenario,
                           solution.observables(), options);
}

namespace {

// N_y for each observable, from the numerical run alone (see the file comment of verify.hpp):
// the observable's own largest magnitude in the numerical solution, but not less than
// kZeroFloorFraction of S_D — the largest of the circuit's bounds B_y (NumericalRun::
// observable_bound) among the observables of the same dimension D; where all of those are 0,
// the bound on any element's voltage (V) or current (A), their product for powers — and not
// less than the smallest normal double. An observable that is identically zero (a capacitor
// current at rest, an inductor current held at zero, a node on a dead side) or tiny beside its
// peers is then judged at the resolution of what the circuit can make of it, and its rounding
// noise does not count as a 100 % error; a closed form cannot enlarge its own yardstick; and
// N_y > 0, so that no ratio is 0/0.
std::vector<double> normalize(const std::vector<Observable>& observables, const NumericalRun& run) {
  auto finite_or_zero = [](double v) { return std::isfinite(v) ? v : 0.0; };
  std::map<Dimension, double> peers;
  for (std::size_t i = 0; i < observables.size(); ++i) {
    double& p = peers[observables[i].dimension()];
    p = std::max(p, finite_or_zero(run.observable_bound.at(i)));
  }
  for (auto& [dim, p] : peers) {
    if (p > 0.0) continue;
    if (dim == Dimension::voltage) p = run.voltage_bound;
    else if (dim == Dimension::current) p = run.current_bound;
    else p = run.voltage_bound * run.current_bound;
    p = finite_or_zero(p);
  }
  std::vector<double> n(observables.size());
  for (std::size_t i = 0; i < observables.size(); ++i) {
    double own = 0.0;
    for (double y : run.values[i]) own = std::max(own, std::fabs(y));
    n[i] = std::max({own, kZeroFloorFraction * peers[observables[i].dimension()], kSmallestNormalization});
  }
  return n;
}

// κ = max_y Σ_j |∂y/∂x_j|·max|x_j| / N_y, from the numerical run alone: the factor by which a relative
// error of the state grows in the observables. It is ≫ 1 where an observable is a small
// difference of large terms (the capacitor current of a stiff RC that tracks its source, ωτ ≪ 1),
// and then CVODE's tolerance, set for the state, must be tighter by as much.
double amplification(const std::vector<Observable>& observables, const NumericalRun& run,
                     const std::vector<double>& n, std::string& which) {
  if (run.states.empty()) return 1.0;
  std::vector<double> x_max(run.states.size(), 0.0);
  for (std::size_t j = 0; j < run.states.size(); ++j)
    for (double x : run.states[j]) x_max[j] = std::max(x_max[j], std::fabs(x));
  double kappa = 1.0;
  for (std::size_t i = 0; i < observables.size(); ++i) {
    double k = 0.0;
    for (std::size_t j = 0; j < x_max.size(); ++j) k += run.state_gain[i][j] * x_max[j];
    k /= n[i];
    if (std::isfinite(k) && k > kappa) {
      kappa = k;
      which = observables[i].text;
    }
  }
  return kappa;
}

// The comparison of one numerical run with the closed form (steps 3 and 4 of verify_closed_form).
struct Comparison {
  std::vector<ObservableError> observables;
  std::vector<double> normalization;  // N_y
  double max_rel_error = 0.0;
  double t_at = 0.0;
  std::string worst;
  std::string not_finite;  // the first non-finite closed-form value, "" when none
};

// The closed form's segment that holds t on the side the numerical sample is on: a sample that
// ends its segment of `schedule` (the value just before an event) takes the closed segment
// that ends there, any other the one that holds t (an event time belongs to the segment it
// starts). Read by time, not by index, so that the two schedules need not agree.
std::size_t closed_segment(const std::vector<Segment>& segs, const Schedule& schedule, std::uint32_t j, double t) {
  const bool before = j + 1 < schedule.segments.size() && t >= schedule.segments[j].to;
  const auto it = std::partition_point(segs.begin(), segs.end(),
                                       [&](const Segment& s) { return before ? s.to < t : s.to <= t; });
  return it == segs.end() ? segs.size() - 1 : static_cast<std::size_t>(it - segs.begin());
}

Comparison compare(const Solution& solution, const Schedule& schedule, const std::vector<std::vector<Piece>>& closed,
                   const NumericalRun& run) {
  const auto& observables = solution.observables();
  Comparison out;
  out.normalization = normalize(observables, run);
  for (std::size_t i = 0; i < observables.size(); ++i) {
    ObservableError e;
    e.name = observables[i].text;
    e.dimension = observables[i].dimension();
    for (std::size_t k = 0; k < run.times.size(); ++k) {
      const double t = run.times[k];
      const double yc =
          closed[i].at(closed_segment(solution.segments(), schedule, run.segment_of[k], t)).value(t);
      const double yn = run.values[i][k];
      if (!std::isfinite(yc)) {
        if (out.not_finite.empty())
          out.not_finite = fmt::format("the closed form of {} is not finite at t = {}", e.name, format_si(t, "s"));
        continue;
      }
      e.max_closed = std::max(e.max_closed, std::fabs(yc));
      e.max_numeric = std::max(e.max_numeric, std::fabs(yn));
      const double d = std::fabs(yc - yn);
      if (d > e.max_abs_error) {
        e.max_abs_error = d;
        e.t_at = t;
      }
    }
    e.normalization = out.normalization[i];
    e.max_rel_error = e.max_abs_error / e.normalization;
    if (!std::isfinite(e.max_rel_error)) e.max_rel_error = 1.0;
    if (out.worst.empty() || e.max_rel_error > out.max_rel_error) {
      out.max_rel_error = e.max_rel_error;
      out.t_at = e.t_at;
      out.worst = e.name;
    }
    out.observables.push_back(e);
  }
  return out;
}

bool passes(const Comparison& c, const NumericalRun& run, double rtol) {
  return run.status == IntegrationStatus::ok && c.not_finite.empty() && !run.times.empty() &&
         c.max_rel_error <= rtol;
}

// Step 3 of verify_closed_form: a mismatch must be the closed form's, not the integrator's.
// CVODE keeps the state's error near its rtol (usually well below), but an observable that is a
// small difference of large terms amplifies it κ-fold (see amplification()). When κ·rtol_CVODE
// could reach a tenth of the threshold, the run is repeated with CVODE's tolerance tightened so
// that it cannot, and the tighter run decides. A run that passes needs no second look: two
// independent methods agree.
void retry_tighter(const Solution& solution, const Schedule& schedule, const VerifyOptions& options,
                   const std::vector<std::vector<Piece>>& closed, VerifyReport& report, Comparison& cmp,
                   IntegrationStats& stats) {
  const auto& observables = solution.observables();
  std::string which;
  const double kappa = amplification(observables, report.numerical, cmp.normalization, which);
  const double irtol = report.numerical.rtol;
  if (passes(cmp, report.numerical, options.rtol) || report.numerical.status != IntegrationStatus::ok ||
      !(kappa * irtol > 0.1 * options.rtol) || !(irtol > kTightestIntegratorRtol))
    return;
  const double tighter = std::max(kTightestIntegratorRtol, std::min(irtol / 10.0, 0.1 * options.rtol / kappa));
  const long left = options.max_steps - stats.steps;
  std::string note = fmt::format("{} amplifies the state's error {:.2g}-fold and the first run (rtol {:.0e}) "
                                 "gave {:.2g}: integrated again with rtol {:.0e}",
                                 which, kappa, irtol, cmp.max_rel_error, tighter);
  if (left > 0) {
    NumericalRun again = integrate_network(solution.circuit(), schedule, solution.options().scenario, observables,
                                           IntegrateOptions{tighter, 0.0, left});
    stats.add(again.stats);
    if (again.status == IntegrationStatus::ok) {
      report.numerical = std::move(again);
      cmp = compare(solution, schedule, closed, report.numerical);
    } else {
      note += fmt::format(", which did not finish ({}); the first run's comparison stands", again.message);
    }
  } else {
    note += "; no step budget was left for it";
  }
  report.notes.push_back(note);
}

// The comparison's line: the numbers compared, and when the error found is within the
// integrator's own (its tolerance, local to a step, accumulated over the run and amplified
// κ-fold: 1e3·rtol·κ, the margin integrator_rtol_for leaves with a factor of 10 to spare), that
// it cannot vouch for a failure there.
std::string compared_text(const Comparison& cmp, const NumericalRun& run, const std::vector<Observable>& observables,
                          double rtol) {
  if (cmp.worst.empty()) return "no observable to compare";
  std::string out = fmt::format("max rel error {:.2g} {} rtol {:.2g} at t = {} in {}", cmp.max_rel_error,
                                cmp.max_rel_error <= rtol ? "<=" : ">", rtol, format_si(cmp.t_at, "s"), cmp.worst);
  std::string which;
  const double resolvable = 1e3 * run.rtol * amplification(observables, run, cmp.normalization, which);
  if (cmp.max_rel_error > rtol && cmp.max_rel_error <= resolvable)
    out += fmt::format(": a threshold the integrator cannot reach (its tolerance {:.0e} resolves about {:.1g} "
                       "here), not evidence of a wrong closed form",
                       run.rtol, resolvable);
  return out;
}

// The closed form's state-dependent events in [0, window end): its schedule's events that are
// no timed event of the numerical schedule (a diode's, a contact's at its zero).
std::vector<double> closed_event_times(const Solution& solution, const Schedule& numerical) {
  std::vector<ScheduledEvent> timed = numerical.events;
  std::vector<double> out;
  for (const ScheduledEvent& e : solution.schedule().events) {
    if (e.time < 0.0 || e.time >= numerical.window.to) continue;
    const auto same = std::find_if(timed.begin(), timed.end(), [&](const ScheduledEvent& x) {
      return x.time == e.time && x.element == e.element && x.kind == e.kind;
    });
    if (same != timed.end()) {
      timed.erase(same);
      continue;
    }
    out.push_back(e.time);
  }
  return out;
}

// The largest distance from an instant of `a` to the nearest of `b` (with where), over both ways.
std::pair<double, double> farthest(const std::vector<double>& a, const std::vector<double>& b) {
  std::pair<double, double> worst{0.0, 0.0};
  for (int pass = 0; pass < 2; ++pass) {
    const auto& from = pass == 0 ? a : b;
    const auto& to = pass == 0 ? b : a;
    for (double t : from) {
      double d = kInfinity;
      for (double u : to) d = std::min(d, std::fabs(t - u));
      if (d > worst.first) worst = {d, t};
    }
  }
  return worst;
}

// Step 5 of verify_closed_form: the event instants of both, once both have run.
bool compare_events(const Solution& solution, const Schedule& schedule, VerifyReport& report) {
  const std::vector<double> closed = closed_event_times(solution, schedule);
  std::vector<double> numeric;
  for (const ScheduledEvent& e : report.numerical.events) numeric.push_back(e.time);
  report.closed_events = closed.size();
  report.event_time_tolerance = report.rtol * (schedule.window.to - std::max(0.0, schedule.window.from));
  std::tie(report.max_event_time_error, report.event_time_at) = farthest(closed, numeric);
  return report.max_event_time_error <= report.event_time_tolerance;
}

}  // namespace

VerifyReport verify_closed_form(const Solution& solution, const VerifyOptions& options) {
  if (!(options.rtol > 0.0) || !std::isfinite(options.rtol))
    throw argument_error("rtol", fmt::format("the cross-check threshold must be a positive number, saw {}",
                                             options.rtol));
  VerifyReport report;
  report.rtol = options.rtol;
  const auto& observables = solution.observables();

  // 1. The closed form first: an observable undefined in some segment is an input error there.
  std::vector<std::vector<Piece>> closed;
  for (const auto& obs : observables) closed.push_back(solution.pieces(obs));

  // 2. The numerical run on its own schedule (the scenario as given, the closed form's window),
  // compared at its instants; 3. again, tighter, where needed.
  const Schedule schedule = numerical_schedule(solution);
  const bool automatic = !(options.integrator_rtol > 0.0);
  const double irtol = automatic ? integrator_rtol_for(options.rtol) : options.integrator_rtol;
  report.numerical = integrate_network(solution.circuit(), schedule, solution.options().scenario, observables,
                                       IntegrateOptions{irtol, 0.0, options.max_steps});
  IntegrationStats stats = report.numerical.stats;
  Comparison cmp = compare(solution, schedule, closed, report.numerical);
  if (automatic) retry_tighter(solution, schedule, options, closed, report, cmp, stats);

  const NumericalRun& run = report.numerical;
  report.integrator_rtol = run.rtol;
  report.integrator_atol = run.atol;
  report.stats = stats;
  report.samples = run.times.size();
  if (!run.initial_note.empty()) report.notes.insert(report.notes.begin(), run.initial_note);
  if (run.skipped_before_zero > 0)
    report.notes.push_back(fmt::format("{} samples before t = 0 were not compared", run.skipped_before_zero));
  if (run.sample_stride > 1)
    report.notes.push_back(fmt::format("the sample grid has {} samples from t = 0 on, more than the {} compared: "
                                       "compared on one sample in {} and the last ({} instants, with each event "
                                       "from both sides)",
                                       run.grid_samples, kMaxComparedSamples, run.sample_stride, run.planned_samples));

  // 4. The verdict, with the numbers compared.
  report.observables = cmp.observables;
  report.max_rel_error = cmp.max_rel_error;
  report.t_at = cmp.t_at;
  report.worst_observable = cmp.worst;
  const std::string compared = compared_text(cmp, run, observables, options.rtol);
  const bool events_agree = compare_events(solution, schedule, report);
  report.passed = passes(cmp, run, options.rtol) && events_agree;
  if (run.status != IntegrationStatus::ok) {
    report.message = fmt::format("numerical integration did not finish: {} ({} of {} samples compared{}{})",
                                 run.message, run.times.size(), run.planned_samples, run.times.empty() ? "" : ", ",
                                 run.times.empty() ? "" : compared);
  } else if (!cmp.not_finite.empty()) {
    report.max_rel_error = std::max(report.max_rel_error, 1.0);
    report.message = cmp.not_finite;
  } else if (run.times.empty()) {
    report.message = "no sample of the window lies at or after t = 0: nothing was compared";
  } else if (!events_agree) {
    report.message = fmt::format("{}; but the event instants differ: {} located by the integrator, {} by the closed "
                                 "form, the farthest apart by {} at t = {} (tolerance {})",
                                 compared, run.events.size(), report.closed_events,
                                 std::isfinite(report.max_event_time_error)
                                     ? format_si(report.max_event_time_error, "s")
                                     : std::string("more than the window"),
                                 format_si(report.event_time_at, "s"), format_si(report.event_time_tolerance, "s"));
  } else {
    report.message = compared;
  }
  return report;
}

}  // namespace netfold
