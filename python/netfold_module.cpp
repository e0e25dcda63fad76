// The Python module `netfold`: a thin binding of the library's entry points (parse, solve,
// worst, verify, equiv, check). Results are the library's own: figures and tables are the JSON
// documents of docs/cli.md turned into Python dicts, waveforms are NumPy arrays on the
// library's sample grid, and reports are the CLI's text. No engine logic lives here.
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>
#include <pybind11/stl/filesystem.h>

#include <memory>
#include <optional>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include "netfold/check.hpp"
#include "netfold/diagnostics.hpp"
#include "netfold/integrate.hpp"
#include "netfold/parse.hpp"
#include "netfold/plot.hpp"
#include "netfold/report.hpp"
#include "netfold/solve.hpp"
#include "netfold/units.hpp"
#include "netfold/verify.hpp"
#include "netfold/worst.hpp"

namespace py = pybind11;
using namespace pybind11::literals;

namespace {

// Held as shared pointers: a Solution keeps a pointer to its circuit, which must outlive it.
using CircuitPtr = std::shared_ptr<netfold::Circuit>;

// The exception types, created once at import and kept for the life of the process (the
// interpreter owns the module's reference; these are never released, so that no reference
// is dropped after the interpreter has shut down).
PyObject* g_error = nullptr;
PyObject* g_input_error = nullptr;
PyObject* g_numeric_error = nullptr;

py::object from_json(const std::string& text) { return py::module_::import("json").attr("loads")(text); }

py::array_t<double> to_array(const std::vector<double>& v) {
  return py::array_t<double>(static_cast<py::ssize_t>(v.size()), v.data());
}

// Text that may quote a file's bytes (a diagnostic echoes the offending line, also of a file
// that is not UTF-8) becomes a str with U+FFFD for what does not decode.
py::str utf8(const std::string& text) {
  PyObject* s = PyUnicode_DecodeUTF8(text.data(), static_cast<py::ssize_t>(text.size()), "replace");
  if (!s) throw py::error_already_set();
  return py::reinterpret_steal<py::str>(s);
}

// 0 is "no position" in a SourceLoc; Python says so with None.
py::object position(std::uint32_t n) { return n == 0 ? py::none() : py::object(py::int_(n)); }

void raise_input_error(const netfold::InputError& e) {
  py::list diagnostics;
  for (const auto& d : e.diagnostics())
    diagnostics.append(py::dict("path"_a = utf8(d.path), "line"_a = position(d.loc.line), "column"_a = position(d.loc.col),
                                "message"_a = utf8(d.message), "line_text"_a = utf8(d.line_text)));
  py::object exc = py::reinterpret_borrow<py::object>(g_input_error)(utf8(e.what()));
  const netfold::Diagnostic* first = e.diagnostics().empty() ? nullptr : &e.diagnostics().front();
  exc.attr("exit_code") = static_cast<int>(e.exit_code());
  exc.attr("path") = first && !first->path.empty() ? py::object(utf8(first->path)) : py::none();
  exc.attr("line") = first ? position(first->loc.line) : py::none();
  exc.attr("column") = first ? position(first->loc.col) : py::none();
  exc.attr("message") = utf8(first ? first->message : std::string(e.what()));
  exc.attr("diagnostics") = diagnostics;
  PyErr_SetObject(g_input_error, exc.ptr());
}

void raise_with_code(PyObject* type, const netfold::Error& e) {
  py::object exc = py::reinterpret_borrow<py::object>(type)(utf8(e.what()));
  exc.attr("exit_code") = static_cast<int>(e.exit_code());
  PyErr_SetObject(type, exc.ptr());
}

void register_exceptions(py::module_& m) {
  g_error = PyErr_NewExceptionWithDoc("netfold.Error", "Root of the errors netfold reports; exit_code is the CLI's exit status.",
                                      PyExc_Exception, nullptr);
  g_input_error = PyErr_NewExceptionWithDoc(
      "netfold.InputError",
      "Bad input (exit status 2). Attributes: path, line, column (1-based, in characters; None when the message is "
      "about a whole file or an argument), message, and diagnostics (every positioned message, as dicts).",
      g_error, nullptr);
  g_numeric_error = PyErr_NewExceptionWithDoc("netfold.NumericError", "A numerical or internal failure (exit status 3).",
                                              g_error, nullptr);
  if (!g_error || !g_input_error || !g_numeric_error) throw py::error_already_set();
  m.add_object("Error", py::handle(g_error));
  m.add_object("InputError", py::handle(g_input_error));
  m.add_object("NumericError", py::handle(g_numeric_error));
  py::register_exception_translator([](std::exception_ptr p) {
    try {
      if (p) std::rethrow_exception(p);
    } catch (const netfold::InputError& e) {
      raise_input_error(e);
    } catch (const netfold::NumericError& e) {
      raise_with_code(g_numeric_error, e);
    } catch (const netfold::Error& e) {
      raise_with_code(g_error, e);
    }
  });
}

// (Lambdas that index a dict declare `-> py::object`: an item accessor returned by value would
// refer to a dict that no longer exists.)

// A report function that writes to a stream, as a string.
template <typename Write>
std::string text_of(Write&& write) {
  std::ostringstream out;
  write(out);
  return out.str();
}

// A circuit solved once, with what `netfold solve` computes from it. Not movable: the report
// and the plot data point into the solution.
class Solved {
 public:
  Solved(CircuitPtr circuit, bool verify) : circuit_(std::move(circuit)), solution_(netfold::solve(*circuit_)) {
    report_ = netfold::build_solve_report(solution_);
    if (verify) report_.verification = netfold::summarize_verification(netfold::verify_closed_form(solution_));
    plot_ = netfold::plot_data(solution_);
  }
  Solved(const Solved&) = delete;
  Solved& operator=(const Solved&) = delete;

  const CircuitPtr& circuit() const { return circuit_; }
  const netfold::Solution& solution() const { return solution_; }
  const netfold::SolveReport& report() const { return report_; }
  const netfold::PlotData& plot() const { return plot_; }
  // The JSON of `netfold solve --json` as a dict, converted on first use.
  py::object data() {
    if (!data_) data_ = from_json(netfold::solve_json(report_));
    return *data_;
  }
  py::object item(const char* key) { return data()[key]; }

 private:
  CircuitPtr circuit_;
  netfold::Solution solution_;
  netfold::SolveReport report_;
  netfold::PlotData plot_;
  std::optional<py::object> data_;
};
using SolvedPtr = std::shared_ptr<Solved>;

SolvedPtr solve_circuit(const CircuitPtr& circuit, bool verify) {
  py::gil_scoped_release unlocked;
  return std::make_shared<Solved>(circuit, verify);
}

// The sample grid of the waveforms: the plot data's (every series shares it), or the window's
// grid when nothing is watched.
std::vector<double> sample_grid(const Solved& s) {
  if (!s.plot().series.empty()) return s.plot().series.front().t;
  return netfold::sample_times(s.solution().window(), s.solution().resolution());
}

py::object value_at(const Solved& s, const std::string& observable, const py::object& t) {
  const netfold::Solution& sol = s.solution();
  netfold::Observable obs = netfold::parse_observable_argument(*s.circuit(), observable, "observable");
  sol.pieces(obs);  // throws InputError where the observable is undefined (a floating node)
  if (py::isinstance<py::float_>(t) || py::isinstance<py::int_>(t)) return py::float_(sol.value(obs, t.cast<double>()));
  auto times = py::array_t<double, py::array::c_style | py::array::forcecast>::ensure(t);
  if (!times) throw py::type_error("t must be a number or an array of numbers");
  py::array_t<double> out(std::vector<py::ssize_t>(times.shape(), times.shape() + times.ndim()));
  const double* in = times.data();
  double* res = out.mutable_data();
  for (py::ssize_t k = 0; k < times.size(); ++k) res[k] = sol.value(obs, in[k]);
  return out;
}

void bind_circuit(py::module_& m) {
  py::class_<netfold::Circuit, std::shared_ptr<netfold::Circuit>>(m, "Circuit", "A parsed, checked .nf circuit (immutable).")
      .def_property_readonly("path", [](const netfold::Circuit& c) { return c.source().path(); })
      .def_property_readonly("title", &netfold::Circuit::title)
      .def_property_readonly("text", [](const netfold::Circuit& c) { return c.source().text(); })
      .def_property_readonly("nodes", &netfold::Circuit::nodes)
      .def_property_readonly("elements",
                             [](const netfold::Circuit& c) {
                               py::list out;
                               for (const auto& e : c.elements())
                                 out.append(py::dict("name"_a = e.name, "kind"_a = std::string(netfold::kind_keyword(e.kind)),
                                                     "first"_a = c.nodes().at(e.pos), "second"_a = c.nodes().at(e.neg),
                                                     "value"_a = e.value));
                               return out;
                             },
                             "Elements in file order: name, kind, first and second node, value (SI; 0 for sources and switches).")
      .def_property_readonly("watches",
                             [](const netfold::Circuit& c) {
                               std::vector<std::string> out;
                               for (const auto& w : c.watches()) out.push_back(w.text);
                               return out;
                             })
      .def_property_readonly("sweeps",
                             [](const netfold::Circuit& c) {
                               std::vector<std::string> out;
                               for (const auto& s : c.sweeps()) out.push_back(s.text);
                               return out;
                             })
      .def("__repr__", [](const netfold::Circuit& c) {
        return "<netfold.Circuit '" + (c.title().empty() ? c.source().path() : c.title()) + "', " +
               std::to_string(c.elements().size()) + " elements>";
      });
}

void bind_solution(py::module_& m) {
  py::class_<Solved, SolvedPtr>(m, "Solution",
                                "The exact solution of a circuit, with the figures of `netfold solve`. Dict-valued "
                                "attributes have the fields of `netfold solve --json` (docs/cli.md); null there is None "
                                "here (an infinite or undefined value).")
      .def_property_readonly("circuit", [](const Solved& s) { return s.circuit(); })
      .def_property_readonly("data", &Solved::data, "The whole JSON document of `netfold solve --json`, as a dict.")
      .def_property_readonly("title", [](Solved& s) { return s.item("title"); })
      .def_property_readonly("storage", [](Solved& s) { return s.item("storage"); })
      .def_property_readonly("segments", [](Solved& s) { return s.item("segments"); },
                             "One dict per interval between switching events: from, to, rth, tau, state_start, vth_dc, "
                             "vth_phasors, ...")
      .def_property_readonly("figures", [](Solved& s) { return s.item("observables"); },
                             "Per watched observable: peak, t_peak, max, min, final, steady_amplitude, settling_time, ...")
      .def_property_readonly("energy", [](Solved& s) { return s.item("energy"); })
      .def_property_readonly("ratings", [](Solved& s) { return s.item("ratings"); })
      .def_property_readonly("verification", [](Solved& s) { return s.item("verification"); })
      .def_property_readonly("warnings", [](const Solved& s) { return s.report().warnings; })
      .def_property_readonly("hazardous", [](const Solved& s) { return s.report().hazardous; })
      .def_property_readonly("window", [](const Solved& s) {
        return std::make_pair(s.solution().window().from, s.solution().window().to);
      })
      .def_property_readonly("resolution", [](const Solved& s) { return s.solution().resolution(); })
      .def_property_readonly("observables",
                             [](const Solved& s) {
                               std::vector<std::string> out;
                               for (const auto& o : s.solution().observables()) out.push_back(o.text);
                               return out;
                             })
      .def_property_readonly("units",
                             [](const Solved& s) {
                               py::dict out;
                               for (const auto& series : s.plot().series) out[py::str(series.name)] = series.unit;
                               return out;
                             },
                             "The unit of each observable: 'V', 'A' or 'W'.")
      .def_property_readonly("times", [](const Solved& s) { return to_array(sample_grid(s)); },
                             "The sample grid (s): the window from its start in steps of the resolution, as in the CSV.")
      .def_property_readonly("waveforms",
                             [](const Solved& s) {
                               py::dict out;
                               for (const auto& series : s.plot().series) out[py::str(series.name)] = to_array(series.v);
                               return out;
                             },
                             "Each observable on the sample grid (`times`), in V, A or W, from the closed form.")
      .def_property_readonly("events",
                             [](const Solved& s) {
                               py::list out;
                               const auto& p = s.plot();
                               for (std::size_t i = 0; i < p.events.size(); ++i)
                                 out.append(py::make_tuple(p.events[i], i < p.event_labels.size() ? p.event_labels[i] : ""));
                               return out;
                             },
                             "Switching events inside the window: (time, what happens).")
      .def("value", &value_at, "observable"_a, "t"_a,
           "The closed form of an observable (`coil_l.i`, `@a`, `@a - @b`) at time t (s): a float, or an array "
           "of the shape of t.")
      .def("report", [](const Solved& s) { return text_of([&](std::ostream& o) { netfold::write_solve_text(o, s.report()); }); },
           "The text report of `netfold solve`.")
      .def("explain", [](const Solved& s) {
        return text_of([&](std::ostream& o) { netfold::write_explanation(o, s.solution()); });
      }, "The derivation with numbers, as `netfold solve --explain` prints it.")
      .def("to_json", [](const Solved& s) { return netfold::solve_json(s.report()); })
      .def("to_csv", [](const Solved& s) { return netfold::waveform_csv(s.solution()); })
      .def("to_svg", [](const Solved& s) { return netfold::render_svg_plot(s.plot()); })
      .def("__getitem__", [](Solved& s, const std::string& key) -> py::object { return s.data()[py::str(key)]; })
      .def("__repr__", [](const Solved& s) {
        return "<netfold.Solution of '" + s.circuit()->source().path() + "', " +
               std::to_string(s.solution().segments().size()) + " segments>";
      });
}

// `worst`: the sweeps' results with the search grid and the peak over it as arrays.
struct WorstResult {
  CircuitPtr circuit;
  netfold::WorstReport report;
};

void bind_worst(py::module_& m) {
  py::class_<WorstResult, std::shared_ptr<WorstResult>>(m, "WorstCase", "The worst case over each sweep (`netfold worst`).")
      .def_property_readonly("data", [](const WorstResult& w) { return from_json(netfold::worst_json(w.report, *w.circuit)); },
                             "The JSON document of `netfold worst --json`, as a dict.")
      .def_property_readonly("sweeps",
                             [](const WorstResult& w) {
                               py::list sweeps = from_json(netfold::worst_json(w.report, *w.circuit))["sweeps"];
                               for (std::size_t i = 0; i < w.report.sweeps.size(); ++i) {
                                 const auto& res = w.report.sweeps[i];
                                 py::dict peaks;
                                 for (std::size_t k = 0; k < res.observables.size() && k < res.grid_peaks.size(); ++k)
                                   peaks[py::str(res.observables[k].name)] = to_array(res.grid_peaks[k]);
                                 py::dict sweep = sweeps[i];
                                 sweep["grid"] = to_array(res.grid);
                                 sweep["peaks"] = peaks;
                               }
                               return sweeps;
                             },
                             "Per sweep: the fields of `worst --json`, plus 'grid' (the searched arguments, SI) and "
                             "'peaks' (per observable, the peak |value| at each grid point) as arrays.")
      .def_property_readonly("ratings",
                             [](const WorstResult& w) -> py::object {
                               return from_json(netfold::worst_json(w.report, *w.circuit))["ratings"];
                             })
      .def("report", [](const WorstResult& w) {
        netfold::Solution nominal = netfold::solve(*w.circuit);
        return text_of([&](std::ostream& o) { netfold::write_worst_text(o, w.report, nominal); });
      }, "The text report of `netfold worst`.")
      .def("to_json", [](const WorstResult& w) { return netfold::worst_json(w.report, *w.circuit); })
      .def("to_csv", [](const WorstResult& w) { return netfold::worst_csv(w.report); });

  m.def(
      "worst",
      [](const CircuitPtr& circuit, std::optional<std::vector<std::string>> sweeps) {
        std::vector<netfold::Sweep> list = circuit->sweeps();
        if (sweeps) {
          list.clear();
          for (const auto& text : *sweeps) list.push_back(netfold::parse_sweep_argument(*circuit, text));
        }
        auto out = std::make_shared<WorstResult>();
        out->circuit = circuit;
        py::gil_scoped_release unlocked;
        out->report = netfold::find_worst_case(*circuit, list);
        return out;
      },
      "circuit"_a, "sweeps"_a = py::none(),
      "The worst case of every watched quantity over the circuit's sweeps, or over `sweeps` given as "
      "'TARGET=FROM..TO' texts (as `netfold worst --sweep`).");
}

// `verify`: the cross-check, with the numerical waveforms on the sample grid.
struct VerifyResult {
  SolvedPtr solved;
  netfold::VerifyReport report;
};

std::shared_ptr<VerifyResult> verify_solved(SolvedPtr solved, double rtol) {
  netfold::VerifyOptions options;
  options.rtol = rtol;
  auto out = std::make_shared<VerifyResult>();
  out->solved = std::move(solved);
  py::gil_scoped_release unlocked;
  out->report = netfold::verify_closed_form(out->solved->solution(), options);
  return out;
}

void bind_verify(py::module_& m) {
  py::class_<VerifyResult, std::shared_ptr<VerifyResult>>(
      m, "Verification", "The closed form against CVODE on the full nodal equations (`netfold verify`).")
      .def_property_readonly("data",
                             [](const VerifyResult& v) {
                               return from_json(netfold::verify_json(v.report, v.solved->solution().circuit()));
                             },
                             "The JSON document of `netfold verify --json`, as a dict.")
      .def_property_readonly("passed", [](const VerifyResult& v) { return v.report.passed; })
      .def_property_readonly("max_rel_error", [](const VerifyResult& v) { return v.report.max_rel_error; })
      .def_property_readonly("rtol", [](const VerifyResult& v) { return v.report.rtol; })
      .def_property_readonly("message", [](const VerifyResult& v) { return v.report.message; })
      .def_property_readonly("solution", [](const VerifyResult& v) { return v.solved; })
      .def_property_readonly("times", [](const VerifyResult& v) { return to_array(v.report.numerical.times); },
                             "The samples the integration reached (s).")
      .def_property_readonly("numeric",
                             [](const VerifyResult& v) {
                               py::dict out;
                               const auto& obs = v.solved->solution().observables();
                               for (std::size_t i = 0; i < obs.size() && i < v.report.numerical.values.size(); ++i)
                                 out[py::str(obs[i].text)] = to_array(v.report.numerical.values[i]);
                               return out;
                             },
                             "Each observable from the numerical integration, at `times`.")
      .def("report", [](const VerifyResult& v) {
        return text_of([&](std::ostream& o) { netfold::write_verify_text(o, v.report, v.solved->solution()); });
      }, "The text report of `netfold verify`.")
      .def("to_json", [](const VerifyResult& v) { return netfold::verify_json(v.report, v.solved->solution().circuit()); });

  const char* doc = "Integrates the circuit's full nodal equations numerically and compares them with the closed form; "
                    "passes when max |closed - numeric| / max |closed| <= rtol.";
  m.def("verify", [](const SolvedPtr& s, double rtol) { return verify_solved(s, rtol); }, "solution"_a, "rtol"_a = 1e-6, doc);
  m.def("verify", [](const CircuitPtr& c, double rtol) { return verify_solved(solve_circuit(c, false), rtol); }, "circuit"_a,
        "rtol"_a = 1e-6, doc);
}

// `equiv`: the Thevenin/Norton equivalent at the storage element or between two nodes.
struct EquivResult {
  SolvedPtr solved;
  netfold::PortEquivalent equivalent;  // points into the solution's segments
};

std::shared_ptr<EquivResult> equivalent_of(SolvedPtr solved, std::optional<std::pair<std::string, std::string>> port,
                                           double at) {
  const netfold::Circuit& circuit = *solved->circuit();
  std::optional<std::pair<netfold::NodeId, netfold::NodeId>> nodes;
  if (port) {
    auto node = [&](const std::string& name) {
      auto id = circuit.find_node(name);
      if (!id) throw netfold::argument_error("port", "unknown node '" + name + "'");
      return *id;
    };
    nodes = std::make_pair(node(port->first), node(port->second));
  }
  const netfold::Window& window = solved->solution().window();
  if (!(at >= 0.0 && at <= window.to))
    throw netfold::argument_error("at", "the time must lie in the window 0 .. " + netfold::format_si(window.to, "s"));
  auto out = std::make_shared<EquivResult>();
  out->solved = std::move(solved);
  out->equivalent = netfold::port_equivalent(out->solved->solution(), nodes, at);
  return out;
}

void bind_equiv(py::module_& m) {
  py::class_<EquivResult, std::shared_ptr<EquivResult>>(m, "Equivalent",
                                                         "A Thevenin/Norton equivalent at a port (`netfold equiv`).")
      .def_property_readonly("data", [](const EquivResult& e) {
        return from_json(netfold::equivalent_json(e.equivalent, e.solved->solution()));
      }, "The JSON document of `netfold equiv --json`, as a dict (rth, vth_dc, vth_phasors, isc_dc, tau, ...).")
      .def("__getitem__", [](const EquivResult& e, const std::string& key) -> py::object {
        return from_json(netfold::equivalent_json(e.equivalent, e.solved->solution()))[py::str(key)];
      })
      .def("report", [](const EquivResult& e) {
        return text_of([&](std::ostream& o) { netfold::write_equivalent_text(o, e.equivalent, e.solved->solution()); });
      }, "The text report of `netfold equiv`.")
      .def("to_json", [](const EquivResult& e) { return netfold::equivalent_json(e.equivalent, e.solved->solution()); });

  const char* doc = "The equivalent seen by the storage element, or between the nodes of `port` (a pair of node "
                    "names), in the segment that holds time `at` (s).";
  m.def("equiv", [](const SolvedPtr& s, std::optional<std::pair<std::string, std::string>> port, double at) {
    return equivalent_of(s, std::move(port), at);
  }, "solution"_a, "port"_a = py::none(), "at"_a = 0.0, doc);
  m.def("equiv", [](const CircuitPtr& c, std::optional<std::pair<std::string, std::string>> port, double at) {
    return equivalent_of(solve_circuit(c, false), std::move(port), at);
  }, "circuit"_a, "port"_a = py::none(), "at"_a = 0.0, doc);
}

const char* case_kind_name(netfold::CaseKind kind) {
  switch (kind) {
    case netfold::CaseKind::claim: return "claim";
    case netfold::CaseKind::golden: return "golden";
    case netfold::CaseKind::refusal: return "refusal";
    case netfold::CaseKind::parse: return "parse";
    case netfold::CaseKind::solve: return "solve";
    case netfold::CaseKind::solves: return "solves";
    case netfold::CaseKind::internal: return "internal";
    default: return "case";
  }
}

py::dict file_dict(const netfold::FileResult& f) {
  py::list cases;
  for (const auto& c : f.cases)
    cases.append(py::dict("kind"_a = case_kind_name(c.kind), "name"_a = utf8(c.name), "location"_a = utf8(c.location),
                          "passed"_a = c.passed, "error"_a = c.is_error(), "message"_a = utf8(c.message),
                          "detail"_a = utf8(c.detail)));
  return py::dict("path"_a = utf8(f.path), "cases"_a = cases, "failures"_a = f.failures(), "errors"_a = f.errors(),
                  "seconds"_a = f.seconds);
}

void bind_check(py::module_& m) {
  py::class_<netfold::CheckReport, std::shared_ptr<netfold::CheckReport>>(
      m, "CheckReport", "Every claim, rating and golden waveform of a circuit library (`netfold check`).")
      .def_property_readonly("passed", &netfold::CheckReport::passed)
      .def_property_readonly("failed", &netfold::CheckReport::failed, "Failed cases, errors included.")
      .def_property_readonly("files",
                             [](const netfold::CheckReport& r) {
                               py::list out;
                               for (const auto& f : r.files) out.append(file_dict(f));
                               return out;
                             },
                             "Per file: path, failures, errors, seconds and its cases (kind, name, location, passed, "
                             "error, message, detail).")
      .def("report", [](const netfold::CheckReport& r) {
        return utf8(text_of([&](std::ostream& o) { netfold::write_check_text(o, r); }));
      }, "The text report of `netfold check`, ending with 'N passed, N failed'.")
      .def("junit_xml", &netfold::junit_xml);

  m.def(
      "check",
      [](const std::vector<std::string>& paths, unsigned jobs, bool update_golden, std::optional<std::string> shard) {
        std::vector<std::filesystem::path> files = netfold::find_netlists(paths);
        if (shard) files = netfold::select_shard(files, netfold::parse_shard_argument(*shard));
        netfold::CheckOptions options;
        options.jobs = jobs;
        options.update_golden = update_golden;
        py::gil_scoped_release unlocked;
        return std::make_shared<netfold::CheckReport>(netfold::check_files(files, options));
      },
      "paths"_a, "jobs"_a = 0, "update_golden"_a = false, "shard"_a = py::none(),
      "Checks every .nf file under `paths` (files, or folders searched recursively); `jobs` = 0 uses every core; "
      "`shard` = 'K/N' checks the K-th of N slices.");
}

}  // namespace

PYBIND11_MODULE(netfold, m) {
  m.doc() = "netfold: exact closed-form switching transients of circuits with one capacitor or inductor.";
  m.attr("__version__") = NETFOLD_VERSION;
  register_exceptions(m);
  bind_circuit(m);
  bind_solution(m);
  bind_worst(m);
  bind_verify(m);
  bind_equiv(m);
  bind_check(m);

  m.def(
      "parse",
      [](const std::string& text, const std::string& path) {
        return std::make_shared<netfold::Circuit>(netfold::parse_netlist(text, path));
      },
      "text"_a, "path"_a = "<string>", "Parses the text of a .nf circuit; `path` is used in messages only.");
  m.def(
      "parse_file", [](const std::filesystem::path& path) {
        return std::make_shared<netfold::Circuit>(netfold::parse_netlist_file(path));
      },
      "path"_a, "Reads and parses a .nf file.");
  m.def(
      "solve", [](const CircuitPtr& circuit, bool verify) { return solve_circuit(circuit, verify); }, "circuit"_a,
      "verify"_a = true,
      "Solves the circuit over its window: segments, figures, ratings and waveforms; with `verify` (as `netfold "
      "solve` does by default) also the numerical cross-check summary.");
}
