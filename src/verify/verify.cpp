#include "netfold/verify.hpp"

#include <algorithm>
#include <cmath>
#include <map>

#include <fmt/format.h>

#include "netfold/units.hpp"

namespace netfold {

double integrator_rtol_for(double rtol) { return std::clamp(rtol * 1e-4, kTightestIntegratorRtol, 1e-6); }

namespace {

// A numerical error that is smaller than the comparison can resolve still needs a finite,
// meaningful ratio: see normalize() below.
double ratio(double error, double normalization) {
  if (normalization > 0.0) return error / normalization;
  return error > 0.0 ? 1.0 : 0.0;  // a value where exactly zero was expected counts as 100 %
}

// N_y for each observable, from its largest magnitude `own` (see the file comment of verify.hpp).
// Each observable's error is divided by its own largest magnitude, but not by less than
// kZeroFloorFraction of S_D, the largest magnitude among the observables of the same dimension:
// an observable that is identically zero (an inductor current held at zero, a node on a dead
// side) or tiny beside its peers is then judged at the resolution of its peers, and its rounding
// noise (1e-17 of S_D) does not count as a 100 % error. Where every observable of that dimension
// is identically zero, S_D is the network's own magnitude from the numerical solution: the largest
// voltage across (V) or current through (A) any element, their product for powers. Only when that
// is zero too (a dead network) is N_y = 0, and then ratio() counts any non-zero difference as a
// relative error of 1: no division by zero, no NaN.
std::vector<double> normalize(const std::vector<Observable>& observables, const std::vector<double>& own,
                              const NumericalRun& run) {
  std::map<Dimension, double> peers;
  for (std::size_t i = 0; i < observables.size(); ++i) {
    double& p = peers[observables[i].dimension()];
    p = std::max(p, own[i]);
  }
  for (auto& [dim, p] : peers) {
    if (p > 0.0) continue;
    if (dim == Dimension::voltage) p = run.voltage_scale;
    else if (dim == Dimension::current) p = run.current_scale;
    else p = run.voltage_scale * run.current_scale;
  }
  std::vector<double> n(observables.size());
  for (std::size_t i = 0; i < observables.size(); ++i)
    n[i] = std::max(own[i], kZeroFloorFraction * peers[observables[i].dimension()]);
  return n;
}

// κ = max_y |∂y/∂x|·max|x| / N_y, from the numerical run alone: the factor by which a relative
// error of the state grows in the observables. It is ≫ 1 where an observable is a small
// difference of large terms (the capacitor current of a stiff RC that tracks its source, ωτ ≪ 1),
// and then CVODE's tolerance, set for the state, must be tighter by as much.
double amplification(const std::vector<Observable>& observables, const NumericalRun& run, std::string& which) {
  if (run.state.empty()) return 1.0;
  double x_max = 0.0;
  for (double x : run.state) x_max = std::max(x_max, std::fabs(x));
  std::vector<double> own(observables.size(), 0.0);
  for (std::size_t i = 0; i < observables.size(); ++i)
    for (double y : run.values[i]) own[i] = std::max(own[i], std::fabs(y));
  const std::vector<double> n = normalize(observables, own, run);
  double kappa = 1.0;
  for (std::size_t i = 0; i < observables.size(); ++i) {
    if (!(n[i] > 0.0)) continue;
    double k = run.state_gain[i] * x_max / n[i];
    if (std::isfinite(k) && k > kappa) {
      kappa = k;
      which = observables[i].text;
    }
  }
  return kappa;
}

}  // namespace

namespace {

// The comparison of one numerical run with the closed form (steps 3 and 4 of verify_closed_form).
struct Comparison {
  std::vector<ObservableError> observables;
  double max_rel_error = 0.0;
  double t_at = 0.0;
  std::string worst;
  std::string not_finite;  // the first non-finite closed-form value, "" when none
};

Comparison compare(const std::vector<Observable>& observables, const std::vector<std::vector<Piece>>& closed,
                   const NumericalRun& run) {
  Comparison out;
  for (std::size_t i = 0; i < observables.size(); ++i) {
    ObservableError e;
    e.name = observables[i].text;
    e.dimension = observables[i].dimension();
    for (std::size_t k = 0; k < run.times.size(); ++k) {
      const double t = run.times[k];
      const double yc = closed[i].at(run.segment_of[k]).value(t);
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
    out.observables.push_back(e);
  }
  std::vector<double> own;
  for (const auto& e : out.observables) own.push_back(e.max_closed);
  const std::vector<double> n = normalize(observables, own, run);
  for (std::size_t i = 0; i < out.observables.size(); ++i) {
    ObservableError& e = out.observables[i];
    e.normalization = n[i];
    e.max_rel_error = ratio(e.max_abs_error, e.normalization);
    if (!std::isfinite(e.max_rel_error)) e.max_rel_error = 1.0;
    if (out.worst.empty() || e.max_rel_error > out.max_rel_error) {
      out.max_rel_error = e.max_rel_error;
      out.t_at = e.t_at;
      out.worst = e.name;
    }
  }
  return out;
}

bool passes(const Comparison& c, const NumericalRun& run, double rtol) {
  return run.status == IntegrationStatus::ok && c.not_finite.empty() && !run.times.empty() &&
         c.max_rel_error <= rtol;
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

  // 2. The numerical run, compared on the sample grid.
  const bool automatic = !(options.integrator_rtol > 0.0);
  const double irtol = automatic ? integrator_rtol_for(options.rtol) : options.integrator_rtol;
  report.numerical = integrate_network(solution, IntegrateOptions{irtol, 0.0, options.max_steps});
  IntegrationStats stats = report.numerical.stats;
  Comparison cmp = compare(observables, closed, report.numerical);

  // 3. A mismatch must be the closed form's, not the integrator's. CVODE keeps the state's error
  // near its rtol (usually well below), but an observable that is a small difference of large
  // terms amplifies it κ-fold (see amplification()). When κ·rtol_CVODE could reach a tenth of the
  // threshold, the run is repeated with CVODE's tolerance tightened so that it cannot, and the
  // tighter run decides. A run that passes needs no second look: two independent methods agree.
  std::string which;
  const double kappa = amplification(observables, report.numerical, which);
  if (automatic && !passes(cmp, report.numerical, options.rtol) && report.numerical.status == IntegrationStatus::ok &&
      kappa * report.numerical.rtol > 0.1 * options.rtol && report.numerical.rtol > kTightestIntegratorRtol) {
    const double tighter = std::max(kTightestIntegratorRtol, std::min(irtol / 10.0, 0.1 * options.rtol / kappa));
    const long left = options.max_steps - stats.steps;
    std::string note = fmt::format("{} amplifies the state's error {:.2g}-fold and the first run (rtol {:.0e}) "
                                   "gave {:.2g}: integrated again with rtol {:.0e}",
                                   which, kappa, report.numerical.rtol, cmp.max_rel_error, tighter);
    if (left > 0) {
      NumericalRun again = integrate_network(solution, IntegrateOptions{tighter, 0.0, left});
      stats.add(again.stats);
      if (again.status == IntegrationStatus::ok) {
        report.numerical = std::move(again);
        cmp = compare(observables, closed, report.numerical);
      } else {
        note += fmt::format(", which did not finish ({}); the first run's comparison stands", again.message);
      }
    } else {
      note += "; no step budget was left for it";
    }
    report.notes.push_back(note);
  }

  const NumericalRun& run = report.numerical;
  report.integrator_rtol = run.rtol;
  report.integrator_atol = run.atol;
  report.stats = stats;
  report.samples = run.times.size();
  if (!run.initial_note.empty()) report.notes.insert(report.notes.begin(), run.initial_note);
  if (run.skipped_before_zero > 0)
    report.notes.push_back(fmt::format("{} samples before t = 0 were not compared", run.skipped_before_zero));

  // 4. The verdict, with the numbers compared.
  report.observables = cmp.observables;
  report.max_rel_error = cmp.max_rel_error;
  report.t_at = cmp.t_at;
  report.worst_observable = cmp.worst;
  const std::string compared =
      cmp.worst.empty() ? std::string("no observable to compare")
                        : fmt::format("max rel error {:.2g} {} rtol {:.2g} at t = {} in {}", cmp.max_rel_error,
                                      cmp.max_rel_error <= options.rtol ? "<=" : ">", options.rtol,
                                      format_si(cmp.t_at, "s"), cmp.worst);
  report.passed = passes(cmp, run, options.rtol);
  if (run.status != IntegrationStatus::ok) {
    report.message = fmt::format("numerical integration did not finish: {} ({} of {} samples compared{}{})",
                                 run.message, run.times.size(), run.planned_samples, run.times.empty() ? "" : ", ",
                                 run.times.empty() ? "" : compared);
  } else if (!cmp.not_finite.empty()) {
    report.max_rel_error = std::max(report.max_rel_error, 1.0);
    report.message = cmp.not_finite;
  } else if (run.times.empty()) {
    report.message = "no sample of the window lies at or after t = 0: nothing was compared";
  } else {
    report.message = compared;
  }
  return report;
}

}  // namespace netfold
