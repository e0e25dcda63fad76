// The degenerate-circuit catalogue (tests/degenerate/*.nf): every file is a small circuit
// that the method cannot solve, or solves only with a warning, and its first lines say what
// the engineer must be told:
//
//   # expect: <exact substring of the message>      the circuit is refused (exit 2)
//   # line: N                                        ... at line N of the file
// or
//   # expect-ok: <substring of a warning>            a valid result that carries that warning
//   # line: -                                        (empty: a valid result, no warning asked)
//
// then optionally `# pending: lead` (the engine does not give that message yet: the case is
// run, reported with WARN and not failed) and any number of
//
//   # value: OBSERVABLE TIME_S EXPECTED ABS_TOL      a value the valid result must have.
//
// Every case also goes through the report, the CSV and the JSON, which must hold no NaN or
// infinity.
#include <catch2/catch.hpp>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "fuzz/exercise.hpp"
#include "netfold/parse.hpp"
#include "netfold/report.hpp"
#include "netfold/solve.hpp"

namespace fs = std::filesystem;

namespace {

/// More CSV rows than this are not built by the test (a case that asks for 1e15 rows must be
/// refused by the engine; until it is, the test does not try to build them).
constexpr double kMaxRows = 1e7;

struct ValueCheck {
  std::string observable;
  double time = 0.0, expected = 0.0, tolerance = 0.0;
};

/// The header of one catalogue file.
struct Case {
  fs::path path;
  bool expect_error = true;
  std::string substring;             ///< of the error message, or of a warning
  std::optional<std::uint32_t> line; ///< of the diagnostic
  bool pending = false;
  std::vector<ValueCheck> values;
  std::string header_problem;        ///< why the header could not be read ("" when fine)
};

std::string after_prefix(const std::string& line, const std::string& prefix) {
  std::string rest = line.substr(prefix.size());
  while (!rest.empty() && (rest.back() == ' ' || rest.back() == '\r')) rest.pop_back();
  return rest;
}

Case read_case(const fs::path& path) {
  Case c;
  c.path = path;
  std::ifstream in(path);
  std::vector<std::string> lines;
  for (std::string l; std::getline(in, l);) lines.push_back(l);
  if (lines.size() < 2) {
    c.header_problem = "fewer than two lines";
    return c;
  }
  if (lines[0].rfind("# expect: ", 0) == 0) {
    c.substring = after_prefix(lines[0], "# expect: ");
  } else if (lines[0].rfind("# expect-ok:", 0) == 0) {
    c.expect_error = false;
    c.substring = after_prefix(lines[0], "# expect-ok:");
    if (!c.substring.empty() && c.substring.front() == ' ') c.substring.erase(0, 1);
  } else {
    c.header_problem = "line 1 is not '# expect: ...' or '# expect-ok: ...'";
    return c;
  }
  if (lines[1].rfind("# line: ", 0) != 0) {
    c.header_problem = "line 2 is not '# line: N'";
    return c;
  }
  std::string n = after_prefix(lines[1], "# line: ");
  if (n != "-") {
    try {
      c.line = static_cast<std::uint32_t>(std::stoul(n));
    } catch (const std::exception&) {
      c.header_problem = "line 2 has no line number";
      return c;
    }
  }
  if (c.expect_error && (!c.line || c.substring.empty())) c.header_problem = "an error case needs a message and a line";
  c.pending = lines.size() > 2 && lines[2].rfind("# pending: lead", 0) == 0;
  for (const auto& l : lines) {
    if (l.rfind("# value: ", 0) != 0) continue;
    std::istringstream v(after_prefix(l, "# value: "));
    ValueCheck check;
    if (!(v >> check.observable >> check.time >> check.expected >> check.tolerance))
      c.header_problem = "a '# value:' line is not 'OBSERVABLE TIME EXPECTED TOLERANCE'";
    c.values.push_back(check);
  }
  return c;
}

std::vector<Case> catalogue() {
  std::vector<fs::path> paths;
  for (const auto& entry : fs::directory_iterator("tests/degenerate"))
    if (entry.path().extension() == ".nf") paths.push_back(entry.path());
  std::sort(paths.begin(), paths.end());
  std::vector<Case> cases;
  for (const auto& p : paths) cases.push_back(read_case(p));
  return cases;
}

/// What running a case gave.
struct Outcome {
  bool refused = false;
  std::string message;             ///< the first diagnostic's message (refused) or ""
  std::uint32_t line = 0;          ///< the first diagnostic's line
  std::string formatted;           ///< every diagnostic, as printed
  std::vector<std::string> warnings;
  std::vector<std::string> failures;  ///< what went wrong against the expectation
};

Outcome run_case(const Case& c) {
  Outcome out;
  try {
    netfold::Circuit circuit = netfold::parse_netlist_file(c.path);
    netfold::Solution solution = netfold::solve(circuit);
    netfold::SolveReport report = netfold::build_solve_report(solution);
    out.warnings = report.warnings;
    if (auto p = netfold_fuzz::check_figures(solution, report)) out.failures.push_back(*p);
    const double rows = (solution.window().to - solution.window().from) / solution.resolution();
    if (!(rows <= kMaxRows)) {
      out.failures.push_back("the CSV would have " + std::to_string(rows) + " rows: not written");
    } else if (auto p = netfold_fuzz::check_csv(netfold::waveform_csv(solution))) {
      out.failures.push_back(*p);
    }
    if (auto p = netfold_fuzz::check_json(netfold::solve_json(report))) out.failures.push_back(*p);
    for (const auto& v : c.values) {
      netfold::Observable obs = netfold::parse_observable_argument(circuit, v.observable, "# value");
      double got = solution.value(obs, v.time);
      if (!(std::fabs(got - v.expected) <= v.tolerance))
        out.failures.push_back(v.observable + " at " + std::to_string(v.time) + " s is " + std::to_string(got) +
                               ", expected " + std::to_string(v.expected) + " ± " + std::to_string(v.tolerance));
    }
  } catch (const netfold::InputError& e) {
    out.refused = true;
    out.message = e.diagnostics().empty() ? std::string(e.what()) : e.diagnostics().front().message;
    out.line = e.diagnostics().empty() ? 0 : e.diagnostics().front().loc.line;
    for (const auto& d : e.diagnostics()) out.formatted += d.format() + "\n";
  } catch (const netfold::Error& e) {
    // Exit 3 for a circuit the user wrote is an engine failure, not a diagnostic.
    out.failures.push_back(std::string("internal error (exit 3) instead of a diagnostic: ") + e.what());
    return out;
  }
  if (c.expect_error) {
    if (!out.refused) {
      out.failures.push_back("the circuit solved; expected an error containing \"" + c.substring + "\"");
    } else {
      if (out.message.find(c.substring) == std::string::npos)
        out.failures.push_back("the message does not contain \"" + c.substring + "\"");
      if (c.line && out.line != *c.line)
        out.failures.push_back("the message is at line " + std::to_string(out.line) + ", expected line " +
                               std::to_string(*c.line));
    }
    if (out.message.find("nan") != std::string::npos || out.message.find("inf ") != std::string::npos)
      out.failures.push_back("the message prints a non-finite number");
  } else {
    if (out.refused) {
      out.failures.push_back("the circuit was refused; expected a valid result");
    } else if (!c.substring.empty()) {
      bool found = std::any_of(out.warnings.begin(), out.warnings.end(),
                               [&](const std::string& w) { return w.find(c.substring) != std::string::npos; });
      if (!found) out.failures.push_back("no warning contains \"" + c.substring + "\"");
    }
  }
  return out;
}

std::string describe(const Case& c, const Outcome& o) {
  std::string s = c.path.string() + ":\n";
  for (const auto& f : o.failures) s += "  - " + f + "\n";
  if (o.refused) s += "  got:\n" + o.formatted;
  for (const auto& w : o.warnings) s += "  warning: " + w + "\n";
  return s;
}

}  // namespace

TEST_CASE("the degenerate catalogue holds at least twenty cases, each with a readable header", "[degenerate]") {
  std::vector<Case> cases = catalogue();
  CHECK(cases.size() >= 20);
  for (const auto& c : cases) {
    INFO(c.path.string());
    CHECK(c.header_problem.empty());
  }
}

TEST_CASE("every degenerate circuit gives its catalogued message at the element's line", "[degenerate]") {
  std::vector<std::string> pending_failing, pending_passing;
  for (const auto& c : catalogue()) {
    if (!c.header_problem.empty()) continue;  // reported by the test above
    Outcome o = run_case(c);
    if (c.pending) {
      (o.failures.empty() ? pending_passing : pending_failing).push_back(describe(c, o));
      continue;
    }
    INFO(describe(c, o));
    CHECK(o.failures.empty());
  }
  if (!pending_failing.empty()) {
    std::string list;
    for (const auto& s : pending_failing) list += s;
    WARN("degenerate cases waiting for the engine (# pending: lead), not counted as failures:\n" << list);
  }
  if (!pending_passing.empty()) {
    std::string list;
    for (const auto& s : pending_passing) list += s;
    FAIL_CHECK("these cases marked '# pending: lead' now pass: remove the mark\n" << list);
  }
}
