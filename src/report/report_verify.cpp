// Reports of the numerical cross-check: `verify` text and JSON, and its line in `solve`.
#include <cmath>

#include <fmt/format.h>
#include <fmt/ostream.h>
#include <nlohmann/json.hpp>

#include "report/json_fields.hpp"
#include "netfold/report.hpp"
#include "netfold/units.hpp"

namespace netfold {

VerificationSummary summarize_verification(const VerifyReport& r) {
  VerificationSummary s;
  s.method = r.method;
  s.max_rel_error = r.max_rel_error;
  s.rtol = r.rtol;
  s.passed = r.passed;
  s.message = r.message;
  s.steps = r.stats.steps;
  s.rhs_evals = r.stats.rhs_evals;
  return s;
}

void write_verify_text(std::ostream& out, const VerifyReport& r, const Solution& sol) {
  const Circuit& c = sol.circuit();
  fmt::print(out, "netfold verify: {}{}\n", c.title().empty() ? c.source().path() : c.title(),
             c.title().empty() ? "" : fmt::format("  ({})", c.source().path()));
  const std::size_t grid = r.numerical.grid_samples;
  fmt::print(out, "closed form against {} (CVODE, BDF, Newton) on the full nodal equations, {} samples{}\n", r.method,
             r.samples, r.numerical.sample_stride > 1 ? fmt::format(" of a grid of {} (see the note)", grid) : "");
  // One absolute tolerance per state, each in its own unit.
  std::string atol;
  const std::vector<ElementId>& states = c.storage_elements();
  for (std::size_t k = 0; k < states.size() && k < r.integrator_atol.size(); ++k) {
    const std::string value =
        format_si(r.integrator_atol[k], c.element(states[k]).kind == ElementKind::capacitor ? "V" : "A", 3);
    atol += states.size() == 1 ? value : fmt::format("{}{} {}", k == 0 ? "" : ", ", c.element(states[k]).name, value);
  }
  fmt::print(out, "integrator tolerances: rtol {:.1e}, atol {}\n\n", r.integrator_rtol, atol.empty() ? "-" : atol);
  fmt::print(out, "{:<18} {:>13} {:>13} {:>12} {:>11}\n", "observable", "max |closed|", "max |error|", "rel. error",
             "at");
  for (const auto& o : r.observables) {
    std::string unit(dimension_symbol(o.dimension));
    fmt::print(out, "{:<18} {:>13} {:>13} {:>12.2e} {:>11}\n", o.name, format_si(o.max_closed, unit, 4),
               format_si(o.max_abs_error, unit, 3), o.max_rel_error, format_si(o.t_at, "s", 4));
  }
  fmt::print(out, "\nCVODE: {} steps, {} right-hand sides (each a full nodal solve), {} error-test failures, "
                  "{} convergence failures, {} matrix setups, {} factorizations\n",
             r.stats.steps, r.stats.rhs_evals, r.stats.error_test_failures, r.stats.nonlinear_conv_failures,
             r.stats.linear_setups, r.stats.factorizations);
  if (!r.numerical.events.empty() || r.closed_events > 0) {
    fmt::print(out, "\nevents located by the integrator's root finding: {} (closed form: {} instants); largest "
                    "time difference {} (tolerance {})\n",
               r.numerical.events.size(), r.closed_events,
               std::isfinite(r.max_event_time_error) ? format_si(r.max_event_time_error, "s", 3) : "unmatched",
               format_si(r.event_time_tolerance, "s", 3));
    constexpr std::size_t kListed = 20;
    for (std::size_t k = 0; k < r.numerical.events.size() && k < kListed; ++k)
      fmt::print(out, "  {:>14}  {}\n", format_si(r.numerical.events[k].time, "s", 10),
                 event_text(c, r.numerical.events[k]));
    if (r.numerical.events.size() > kListed)
      fmt::print(out, "  ... and {} more (all in the JSON)\n", r.numerical.events.size() - kListed);
    fmt::print(out, "\n");
  }
  for (const auto& n : r.notes) fmt::print(out, "note: {}\n", n);
  fmt::print(out, "{}: {}\n", r.passed ? "PASS" : "FAIL", r.message);
}

namespace {

const char* event_kind_name(EventKind kind) {
  switch (kind) {
    case EventKind::switch_closes: return "switch_closes";
    case EventKind::switch_opens: return "switch_opens";
    case EventKind::source_steps: return "source_steps";
    case EventKind::diode_conducts: return "diode_conducts";
    case EventKind::diode_blocks: return "diode_blocks";
    case EventKind::diode_breaks_down: return "diode_breaks_down";
  }
  return "switch_closes";
}

}  // namespace

std::string verify_json(const VerifyReport& r, const Circuit& circuit) {
  nlohmann::json j;
  j["method"] = r.method;
  j["rtol"] = detail::json_number(r.rtol);
  j["passed"] = r.passed;
  j["max_rel_error"] = detail::json_number(r.max_rel_error);
  j["t_at"] = detail::json_number(r.t_at);
  nlohmann::json obs = nlohmann::json::object();
  for (const auto& o : r.observables)
    obs[o.name] = {{"max_rel_error", detail::json_number(o.max_rel_error)},
                   {"t_at", detail::json_number(o.t_at)},
                   {"max_abs_error", detail::json_number(o.max_abs_error)},
                   {"max_closed", detail::json_number(o.max_closed)}};
  j["observables"] = obs;
  j["steps"] = r.stats.steps;
  j["rhs_evals"] = r.stats.rhs_evals;
  j["error_test_failures"] = r.stats.error_test_failures;
  j["nonlinear_conv_failures"] = r.stats.nonlinear_conv_failures;
  j["samples"] = r.samples;
  j["grid_samples"] = r.numerical.grid_samples;
  j["integrator_rtol"] = detail::json_number(r.integrator_rtol);
  // The numerical path's own states at t = 0− (by name), and how they were found.
  nlohmann::json initial = nlohmann::json::object();
  for (std::size_t k = 0; k < r.numerical.initial_states.size() && k < r.numerical.state_names.size(); ++k)
    initial[r.numerical.state_names[k]] = detail::json_number(r.numerical.initial_states[k]);
  j["initial_states"] = initial;
  j["initial_method"] = initial_state_method_name(r.numerical.initial_method);
  j["message"] = r.message;
  j["notes"] = r.notes;
  // (v2) The state-dependent events the integrator located, and their comparison.
  nlohmann::json events = nlohmann::json::array();
  for (const ScheduledEvent& e : r.numerical.events)
    events.push_back({{"time", detail::json_number(e.time)},
                      {"element", circuit.element(e.element).name},
                      {"kind", event_kind_name(e.kind)}});
  j["events"] = events;
  j["closed_events"] = r.closed_events;
  j["max_event_time_error"] = detail::json_number(r.max_event_time_error);
  j["event_time_tolerance"] = detail::json_number(r.event_time_tolerance);
  return j.dump(2) + "\n";
}

}  // namespace netfold
