// Report data: ratings, the hazard caution, JSON, CSV, plot data, equivalents.
#include <cmath>
#include <numbers>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "report/json_fields.hpp"
#include "report/plot_marks.hpp"
#include "netfold/report.hpp"
#include "netfold/schedule.hpp"
#include "netfold/units.hpp"
#include "netfold/worst.hpp"

namespace netfold {

namespace {

constexpr double kRadToDeg = 180.0 / std::numbers::pi;

nlohmann::json phasors_json(const Drive& d) {
  auto arr = nlohmann::json::array();
  for (const auto& p : d.phasors)
    arr.push_back({{"frequency", detail::json_number(p.frequency)},
                   {"magnitude", detail::json_number(std::abs(p.value))},
                   {"phase_deg", detail::json_number(std::arg(p.value) * kRadToDeg)}});
  return arr;
}

}  // namespace

bool is_hazardous(const Solution& solution, const std::vector<Figures>& figures) {
  for (const auto& e : solution.circuit().elements()) {
    if (e.kind != ElementKind::voltage_source) continue;
    double ac_square = 0.0, dc = std::fabs(e.waveform.dc), level = e.waveform.dc;
    for (const auto& s : e.waveform.sinusoids) ac_square += 0.5 * s.amplitude * s.amplitude;
    for (const auto& st : e.waveform.steps) {
      level += st.level;
      dc = std::max(dc, std::fabs(level));
    }
    if (std::sqrt(ac_square) > 50.0 || dc > 120.0) return true;
  }
  for (std::size_t i = 0; i < figures.size() && i < solution.observables().size(); ++i)
    if (solution.observables()[i].dimension() == Dimension::voltage && figures[i].peak > 120.0) return true;
  return false;
}

SolveReport build_solve_report(const Solution& solution) {
  SolveReport r;
  r.solution = &solution;
  const Circuit& c = solution.circuit();
  for (const auto& obs : solution.observables()) r.figures.push_back(compute_figures(solution, obs));
  std::vector<ElementId> named;
  for (const auto& obs : solution.observables())
    if (obs.element != kNone && std::find(named.begin(), named.end(), obs.element) == named.end())
      named.push_back(obs.element);
  for (ElementId id : named) {
    ElementTotals t;
    t.element = id;
    t.energy = element_energy(solution, id, &t.energy_scale);
    t.i2t = element_i2t(solution, id);
    r.totals.push_back(t);
  }
  r.ratings = solution.circuit().sweeps().empty() && !has_tolerances(solution.circuit()) ? check_ratings(solution)
                                                  : worst_case_ratings(solution.circuit(), solution.circuit().sweeps());
  r.hazardous = is_hazardous(solution, r.figures);
  if (r.hazardous) r.warnings.push_back(kHazardCaution);
  for (const auto& w : solution.warnings()) r.warnings.push_back(w);
  (void)c;
  return r;
}

std::string solve_json(const SolveReport& report) {
  const Solution& sol = *report.solution;
  const Circuit& c = sol.circuit();
  nlohmann::json j;
  j["title"] = c.title();
  j["file"] = c.source().path();
  if (sol.storage() != kNone) {
    const Element& st = c.element(sol.storage());
    j["storage"] = {{"name", st.name},
                    {"kind", std::string(kind_keyword(st.kind))},
                    {"value", detail::json_number(st.value)},
                    {"unit", st.kind == ElementKind::capacitor ? "F" : "H"}};
  } else {
    j["storage"] = nullptr;
  }
  // Spec v2: every storage element (one entry for one), beside "storage".
  auto storages = nlohmann::json::array();
  for (ElementId id : sol.storage_elements()) {
    const Element& st = c.element(id);
    storages.push_back({{"name", st.name},
                        {"kind", std::string(kind_keyword(st.kind))},
                        {"value", detail::json_number(st.value)},
                        {"unit", st.kind == ElementKind::capacitor ? "F" : "H"}});
  }
  j["storage_elements"] = storages;
  j["window"] = {{"from", detail::json_number(sol.window().from)}, {"to", detail::json_number(sol.window().to)}};
  j["resolution"] = detail::json_number(sol.resolution());
  static const char* kSources[] = {"attribute", "option", "steady_state", "undetermined", "none"};
  if (sol.modal_path()) {
    nlohmann::json values = nlohmann::json::object(), sources = nlohmann::json::object();
    for (std::size_t k = 0; k < sol.storage_elements().size(); ++k) {
      const std::string& name = c.element(sol.storage_elements()[k]).name;
      values[name] = detail::json_number(sol.initial_states()[k]);
      sources[name] = kSources[static_cast<int>(sol.initial_sources()[k])];
    }
    j["initial_state"] = {{"value", values}, {"source", sources}};
  } else {
    j["initial_state"] = {{"value", detail::json_number(sol.initial_state())},
                          {"source", kSources[static_cast<int>(sol.initial_source())]}};
  }
  auto segs = nlohmann::json::array();
  for (const auto& s : sol.segments()) {
    nlohmann::json js{{"number", s.number},
                      {"from", detail::json_number(s.from)},
                      {"to", detail::json_number(s.to)},
                      {"rth", detail::json_number(s.equivalent.rth)},
                      {"tau", detail::json_number(s.tau)},
                      {"state_start", detail::json_number(s.state_start)},
                      {"changes", s.changes}};
    // What started the segment, with exact times (spec v2), and the diodes' states.
    nlohmann::json events = nlohmann::json::array();
    for (const auto& ev : s.events)
      events.push_back({{"time", detail::json_number(ev.time)}, {"element", c.element(ev.element).name},
                        {"event", event_text(c, ev)}});
    js["events"] = std::move(events);
    if (!s.positions.diodes.empty()) {
      static const char* kDiode[] = {"blocking", "conducting", "breakdown"};
      nlohmann::json diodes = nlohmann::json::object();
      std::size_t d = 0;
      for (const auto& e : c.elements())
        if (e.kind == ElementKind::diode) diodes[e.name] = kDiode[static_cast<int>(s.positions.diodes[d++])];
      js["diodes"] = std::move(diodes);
    }
    if (s.voc_defined) {
      js["vth_dc"] = detail::json_number(s.voc.dc);
      js["vth_phasors"] = phasors_json(s.voc);
    } else {
      js["vth_dc"] = nullptr;
      js["vth_phasors"] = nullptr;
    }
    if (s.isc_defined) {
      js["isc_dc"] = detail::json_number(s.isc.dc);
      js["isc_phasors"] = phasors_json(s.isc);
    } else {
      js["isc_dc"] = nullptr;
      js["isc_phasors"] = nullptr;
    }
    js["unstable"] = s.unstable();
    if (sol.modal_path()) {
      // No single Thevenin equivalent: the states by name and the natural modes instead.
      js["rth"] = nullptr;
      nlohmann::json start = nlohmann::json::object();
      for (std::size_t k = 0; k < sol.storage_elements().size() && k < s.states_start.size(); ++k)
        start[c.element(sol.storage_elements()[k]).name] = detail::json_number(s.states_start[k]);
      js["state_start"] = start;
      auto modes = nlohmann::json::array();
      for (const NaturalMode& m : s.modes) {
        if (m.oscillatory)
          modes.push_back({{"kind", "oscillatory"},
                           {"frequency", detail::json_number(m.frequency)},
                           {"natural_frequency", detail::json_number(m.natural_frequency)},
                           {"damping", detail::json_number(m.damping)},
                           {"tau", detail::json_number(m.tau)}});
        else
          modes.push_back({{"kind", "real"}, {"tau", detail::json_number(m.tau)}});
      }
      js["modes"] = modes;
    }
    segs.push_back(js);
  }
  j["segments"] = segs;
  nlohmann::json obs = nlohmann::json::object();
  for (std::size_t i = 0; i < sol.observables().size(); ++i) {
    const Figures& f = report.figures[i];
    obs[sol.observables()[i].text] = {{"peak", detail::json_number(f.peak)},
                                      {"t_peak", detail::json_number(f.t_peak)},
                                      {"max", detail::json_number(f.max)},
                                      {"t_max", detail::json_number(f.t_max)},
                                      {"min", detail::json_number(f.min)},
                                      {"t_min", detail::json_number(f.t_min)},
                                      {"final", detail::json_number(f.final_value)},
                                      {"steady_amplitude", detail::json_number(f.amplitude)},
                                      {"steady_phase_deg", f.phase ? detail::json_number(*f.phase * kRadToDeg) : nlohmann::json(nullptr)},
                                      {"steady_dc", detail::json_number(f.dc)},
                                      {"settling_time", detail::json_number(f.settling_time)}};
  }
  j["observables"] = obs;
  auto totals = nlohmann::json::object();
  for (const auto& t : report.totals)
    totals[c.element(t.element).name] = {{"energy", detail::json_number(t.energy)}, {"i2t", detail::json_number(t.i2t)}};
  j["energy"] = totals;
  j["ratings"] = detail::json_ratings(c, report.ratings);
  if (report.verification) {
    const auto& v = *report.verification;
    j["verification"] = {{"method", v.method},
                         {"max_rel_error", detail::json_number(v.max_rel_error)},
                         {"rtol", detail::json_number(v.rtol)},
                         {"passed", v.passed},
                         {"steps", v.steps},
                         {"rhs_evals", v.rhs_evals}};
  } else {
    j["verification"] = nullptr;
  }
  j["warnings"] = report.warnings;
  return j.dump(2) + "\n";
}

namespace {

// Values of each observable at each time, from the closed form (right-continuous at events).
std::vector<std::vector<double>> sample_values(const Solution& sol, const std::vector<double>& times) {
  std::vector<std::vector<double>> values;
  for (const auto& obs : sol.observables()) {
    std::vector<Piece> pieces = sol.pieces(obs);
    std::vector<double> v(times.size());
    std::size_t seg = 0;
    for (std::size_t k = 0; k < times.size(); ++k) {
      while (seg + 1 < pieces.size() && times[k] >= pieces[seg + 1].t0()) ++seg;
      v[k] = pieces[seg].value(times[k]);
    }
    values.push_back(std::move(v));
  }
  return values;
}

}  // namespace

std::string waveform_csv(const Solution& sol) {
  auto times = sample_grid(sol.window(), sol.resolution());
  auto values = sample_values(sol, times);
  std::string out = "t";
  for (const auto& obs : sol.observables()) out += "," + obs.text;
  out += "\n";
  for (std::size_t k = 0; k < times.size(); ++k) {
    out += format_exact(times[k]);
    for (const auto& v : values) {
      out += ',';
      out += format_exact(std::isfinite(v[k]) ? v[k] : 0.0);
    }
    out += '\n';
  }
  return out;
}

PlotData plot_data(const Solution& sol) {
  PlotData d;
  d.title = sol.circuit().title().empty() ? sol.circuit().source().path() : sol.circuit().title();
  auto times = sample_grid(sol.window(), sol.resolution());
  auto values = sample_values(sol, times);
  for (std::size_t i = 0; i < sol.observables().size(); ++i) {
    const auto& obs = sol.observables()[i];
    d.series.push_back({obs.text, std::string(obs.dimension() == Dimension::voltage   ? "V"
                                              : obs.dimension() == Dimension::current ? "A"
                                                                                       : "W"),
                        times, values[i]});
  }
  // The peak of each trace, labelled with its value and time; the rating that limits it.
  for (std::size_t i = 0; i < sol.observables().size(); ++i) {
    const auto& obs = sol.observables()[i];
    const std::string& unit = d.series[i].unit;
    const Figures f = compute_figures(sol, obs);
    const bool high = f.max >= -f.min;
    const double v = high ? f.max : f.min, t = high ? f.t_max : f.t_min;
    if (std::isfinite(v) && std::isfinite(t))
      d.markers.push_back({i, t, v, fmt::format("peak {} at {}", format_si(v, unit, 4), format_si(t, "s", 4))});
    if (auto limit = detail::peak_rating_of(sol.circuit(), obs.text)) {
      const std::string element = obs.text.substr(0, obs.text.rfind('.'));
      d.levels.push_back({unit, *limit, fmt::format("{} rated {}", element, format_si(*limit, unit, 4)), true});
      // Its negative too where the trace swings far enough below zero to be judged by it.
      if (-f.min > 0.3 * *limit) d.levels.push_back({unit, -*limit, "", true});
    }
  }
  for (const auto& s : sol.segments()) {
    if (s.changes.empty() || s.from <= sol.window().from) continue;
    d.events.push_back(s.from);
    std::string label;
    for (const auto& ch : s.changes) label += (label.empty() ? "" : ", ") + ch;
    d.event_labels.push_back(label);
  }
  return d;
}

std::string equivalent_json(const PortEquivalent& eq, const Solution& sol) {
  nlohmann::json j;
  j["port"] = eq.port;
  j["at"] = detail::json_number(eq.at);
  j["segment"] = eq.segment->number;
  j["rth"] = detail::json_number(eq.rth);
  j["gth"] = detail::json_number(eq.gth);  // null for ∞ (R_th = 0)
  j["vth_dc"] = eq.voc_defined ? detail::json_number(eq.voc.dc) : nlohmann::json(nullptr);
  j["vth_phasors"] = eq.voc_defined ? phasors_json(eq.voc) : nlohmann::json(nullptr);
  j["isc_dc"] = eq.isc_defined ? detail::json_number(eq.isc.dc) : nlohmann::json(nullptr);
  j["isc_phasors"] = eq.isc_defined ? phasors_json(eq.isc) : nlohmann::json(nullptr);
  if (!eq.at_storage) {
    j["vth_state_coefficient"] = detail::json_number(eq.state_coefficient);
    j["isc_state_coefficient"] = detail::json_number(eq.isc_state_coefficient);
    j["state_value"] = detail::json_number(eq.state_value);
  }
  j["tau"] = eq.at_storage ? detail::json_number(eq.segment->tau) : nlohmann::json(nullptr);
  (void)sol;
  return j.dump(2) + "\n";
}

}  // namespace netfold
