// Report data: ratings, the hazard caution, JSON, CSV, plot data, equivalents.
#include <cmath>
#include <numbers>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "report/json_fields.hpp"
#include "netfold/report.hpp"
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
  j["window"] = {{"from", detail::json_number(sol.window().from)}, {"to", detail::json_number(sol.window().to)}};
  j["resolution"] = detail::json_number(sol.resolution());
  static const char* kSources[] = {"attribute", "option", "steady_state", "undetermined", "none"};
  j["initial_state"] = {{"value", detail::json_number(sol.initial_state())},
                        {"source", kSources[static_cast<int>(sol.initial_source())]}};
  auto segs = nlohmann::json::array();
  for (const auto& s : sol.segments()) {
    nlohmann::json js{{"number", s.number},
                      {"from", detail::json_number(s.from)},
                      {"to", detail::json_number(s.to)},
                      {"rth", detail::json_number(s.equivalent.rth)},
                      {"tau", detail::json_number(s.tau)},
                      {"state_start", detail::json_number(s.state_start)},
                      {"changes", s.changes}};
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

// Sample times FROM + k·resolution up to TO (a hair of slack so that TO itself is included
// when the window is a whole number of steps).
std::vector<double> sample_times(const Solution& sol) {
  const Window& w = sol.window();
  double dt = sol.resolution();
  auto n = static_cast<std::size_t>(std::floor((w.to - w.from) / dt * (1.0 + 1e-12) + 1e-9));
  std::vector<double> t(n + 1);
  for (std::size_t k = 0; k <= n; ++k) t[k] = w.from + static_cast<double>(k) * dt;
  return t;
}

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
  auto times = sample_times(sol);
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
  auto times = sample_times(sol);
  auto values = sample_values(sol, times);
  for (std::size_t i = 0; i < sol.observables().size(); ++i) {
    const auto& obs = sol.observables()[i];
    d.series.push_back({obs.text, std::string(obs.dimension() == Dimension::voltage   ? "V"
                                              : obs.dimension() == Dimension::current ? "A"
                                                                                       : "W"),
                        times, values[i]});
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

namespace {

// The storage element is held at its value at --at, so it adds a constant share to both the
// open-circuit voltage and the short-circuit current at the port: i_sc is the current that
// really flows in a short between the two nodes (the element's discharge included).
PortEquivalent hold_state(PortEquivalent eq) {
  if (eq.voc_defined) eq.voc.dc += eq.state_coefficient * eq.state_value;
  if (eq.isc_defined) eq.isc.dc += eq.isc_state_coefficient * eq.state_value;
  return eq;
}

}  // namespace

PortEquivalent port_equivalent(const Solution& sol, std::optional<std::pair<NodeId, NodeId>> port, double at) {
  const Circuit& c = sol.circuit();
  PortEquivalent eq;
  eq.at = at;
  eq.segment = &sol.segment_at(at);
  const Segment& seg = *eq.segment;
  if (!port) {
    if (sol.storage() == kNone)
      throw argument_error("equiv", "the circuit has no capacitor or inductor; name a port with --port A,B");
    const Element& st = c.element(sol.storage());
    eq.port = st.name;
    eq.node_a = st.pos;
    eq.node_b = st.neg;
    eq.rth = seg.equivalent.rth;
    eq.voc = seg.voc;
    eq.isc = seg.isc;
    eq.voc_defined = seg.voc_defined;
    eq.isc_defined = seg.isc_defined;
    eq.state_value = seg.state.value(at);
    return eq;
  }
  auto [a, b] = *port;
  eq.at_storage = false;
  eq.node_a = a;
  eq.node_b = b;
  eq.port = c.nodes()[a] + "," + c.nodes()[b];
  if (a == b) throw argument_error("--port", fmt::format("the port names node '{}' twice; give two different nodes", c.nodes()[a]));
  const NodalSystem& plain = sol.network(seg).system();
  for (NodeId n : {a, b})
    if (plain.node_floating(n))
      throw argument_error("--port", fmt::format("node '{}' is not connected to the rest of the network in segment {} "
                                                 "(from {}); choose a connected node",
                                                 c.nodes()[n], seg.number, format_si(seg.from, "s", 4)));
  eq.state_value = seg.state.value(at);
  BuildOptions options;
  options.mode = seg.mode;
  options.test_port = port;
  ReducedNetwork tested(c, seg.positions, options);
  bool shorted = false;
  for (const auto& p : tested.system().problems()) shorted |= p.kind == TopologyProblem::Kind::test_port_loop;
  if (shorted) {
    // An ideal branch already joins the two nodes: R_th = 0, v_oc is that branch's voltage.
    std::vector<double> k = sol.network(seg).coefficients(plain.node_difference(a, b));
    eq.rth = 0.0;
    eq.voc = sol.drive_of(k, seg);
    eq.state_coefficient = k[0];
    eq.isc_defined = false;
    return hold_state(eq);
  }
  if (tested.rcond() < kSingularRcond)
    throw NumericError(fmt::format("the equations with a test source at {} are singular (reciprocal condition {:.1e})",
                                   eq.port, tested.rcond()));
  const LinearForm test_current = tested.system().test_port_current();
  std::vector<double> k = tested.coefficients(test_current);
  const std::uint32_t t = tested.system().test_port_input();
  double ktt = k[t];
  if (tested.negligible(test_current, t, ktt)) ktt = 0.0;
  k.resize(t);  // the state and the sources; drop the test input
  if (ktt == 0.0) {
    eq.rth = kInfinity;
    bool driven = false;
    for (double v : k) driven |= v != 0.0;
    if (driven) {
      // Current sources push into an open port: its voltage is unbounded, a short's current is not.
      eq.voc_defined = false;
      eq.isc = sol.drive_of(k, seg);
      eq.isc_state_coefficient = k[0];
      return hold_state(eq);
    }
    std::vector<double> kv = sol.network(seg).coefficients(plain.node_difference(a, b));
    eq.voc = sol.drive_of(kv, seg);
    eq.state_coefficient = kv[0];
    return hold_state(eq);  // i_sc = 0
  }
  eq.isc = sol.drive_of(k, seg);
  eq.isc_state_coefficient = k[0];
  eq.rth = -1.0 / ktt;
  std::vector<double> kv = k;
  for (double& v : kv) v = -v / ktt;
  eq.voc = sol.drive_of(kv, seg);
  eq.state_coefficient = kv[0];
  return hold_state(eq);
}

std::string equivalent_json(const PortEquivalent& eq, const Solution& sol) {
  nlohmann::json j;
  j["port"] = eq.port;
  j["at"] = detail::json_number(eq.at);
  j["segment"] = eq.segment->number;
  j["rth"] = detail::json_number(eq.rth);
  j["gth"] = eq.rth == 0.0 ? nlohmann::json(nullptr) : detail::json_number(1.0 / eq.rth);
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
