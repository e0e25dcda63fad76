// Every observable kind through every command path (issue 12, "Done when"): solve (the closed
// form), CSV, claims, worst, equiv and the numerical cross-check. The table below has one row per
// kind; a kind the format gains fails the first test until it has a row, and a row is checked on
// every path (a path a kind cannot take says why in its row).
#include <cmath>
#include <cstdint>
#include <functional>
#include <optional>
#include <sstream>
#include <string>

#include <fmt/format.h>

#include "engine_helpers.hpp"
#include "netfold/claims.hpp"
#include "netfold/report.hpp"
#include "netfold/verify.hpp"
#include "netfold/worst.hpp"

using namespace netfold;
using namespace netfold::testing;

namespace {

// A gate drive with a load: a 12 V step through 10 Ω onto 1 nF with 1 kΩ across it.
// Source: Thevenin's theorem and the first-order step response (textbook, from memory):
// R_th = 10 Ω ∥ 1 kΩ, τ = R_th·C, v_g(t) = v∞ + (v0 − v∞)·e^{−t/τ} with v∞ = 12 V·1000/1010.
const std::string kCircuit =
    "drive: voltage-source d -> gnd, step 12 V at 0 s\n"
    "r_g: resistor d -> g, 10 ohm\n"
    "c_gs: capacitor g -> gnd, 1 nF\n"
    "r_l: resistor g -> gnd, 1 kohm\n"
    "window 0 .. 200 ns\n";
const double kRth = 10.0 * 1000.0 / 1010.0, kTau = kRth * 1e-9, kFinal = 12.0 * 1000.0 / 1010.0;
double v_gate(double t, double v0) { return kFinal + (v0 - kFinal) * std::exp(-t / kTau); }

struct KindRow {
  ObservableKind kind;
  std::string text;                                       // as written in a `watch`
  std::function<double(double t, double v0)> exact;       // the hand-derived value
  std::optional<std::pair<std::string, std::string>> port;  // equiv: the port whose v_oc it is
  const char* no_port_reason = "";                        // why equiv does not apply
};

const KindRow kRows[] = {
    {ObservableKind::node_voltage, "@g", [](double t, double v0) { return v_gate(t, v0); },
     std::make_pair("g", "gnd")},
    {ObservableKind::node_difference, "@d - @g", [](double t, double v0) { return 12.0 - v_gate(t, v0); },
     std::make_pair("d", "g")},
    {ObservableKind::element_voltage, "r_g.v", [](double t, double v0) { return 12.0 - v_gate(t, v0); },
     std::make_pair("d", "g")},
    {ObservableKind::element_current, "r_g.i", [](double t, double v0) { return (12.0 - v_gate(t, v0)) / 10.0; },
     std::nullopt, "a port is a pair of nodes: a current has none"},
    {ObservableKind::element_power, "r_g.p",
     [](double t, double v0) { return std::pow(12.0 - v_gate(t, v0), 2) / 10.0; }, std::nullopt,
     "a port is a pair of nodes: a power has none"},
};

std::string watched() {
  std::string w = "watch ";
  for (const auto& r : kRows) w += (&r == kRows ? "" : ", ") + r.text;
  return w + "\n";
}

}  // namespace

TEST_CASE("coverage: every observable kind of the format has a row", "[coverage]") {
  int kinds = 0;
  for (int k = 0; k < 256; ++k) {
    const auto kind = static_cast<ObservableKind>(k);
    if (observable_kind_name(kind).empty()) continue;
    ++kinds;
    bool found = false;
    for (const auto& r : kRows) found |= r.kind == kind;
    INFO("observable kind " << observable_kind_name(kind) << " has no row in tests/test_coverage.cpp");
    CHECK(found);
  }
  CHECK(kinds == static_cast<int>(std::size(kRows)));
}

TEST_CASE("coverage: every observable kind through solve's closed form", "[coverage]") {
  auto s = solve_text(kCircuit + watched());
  for (const auto& r : kRows)
    for (double t : {0.0, 3e-9, 10e-9, 60e-9}) {
      INFO(r.text << " at " << t);
      CHECK_REL(s->value(observable(s, r.text), t), r.exact(t, 0.0), 1e-11);
    }
}

TEST_CASE("coverage: every observable kind through the CSV", "[coverage]") {
  auto s = solve_text(kCircuit + watched());
  std::istringstream csv(waveform_csv(*s));
  std::string line;
  std::getline(csv, line);
  std::string expected_header = "t";
  for (const auto& r : kRows) expected_header += "," + r.text;
  CHECK(line == expected_header);
  int rows = 0;
  while (std::getline(csv, line)) {
    std::istringstream cells(line);
    std::string cell;
    std::getline(cells, cell, ',');
    const double t = std::stod(cell);
    for (const auto& r : kRows) {
      std::getline(cells, cell, ',');
      const double exact = r.exact(t, 0.0);
      INFO(r.text << " at " << t);
      CHECK(std::fabs(std::stod(cell) - exact) <= 1e-11 * (std::fabs(exact) + 1.0));
    }
    ++rows;
  }
  CHECK(rows > 1000);
}

TEST_CASE("coverage: every observable kind through claims", "[coverage]") {
  std::string claims;
  for (const auto& r : kRows) {
    const double v = r.exact(20e-9, 0.0);
    claims += fmt::format("expect {} at 20 ns = {:.12g} ± 1e-6%\n", r.text, v);  // true
    claims += fmt::format("expect {} at 20 ns = {:.12g} ± 0.1%\n", r.text, v * 1.01);  // false
  }
  auto s = solve_text(kCircuit + watched() + claims);
  const auto results = evaluate_claims(*s.circuit, *s);
  REQUIRE(results.size() == 2 * std::size(kRows));
  for (std::size_t k = 0; k < results.size(); k += 2) {
    INFO(results[k].text << ": " << results[k].message);
    CHECK(results[k].passed);
    INFO(results[k + 1].text << ": " << results[k + 1].message);
    CHECK_FALSE(results[k + 1].passed);
  }
}

TEST_CASE("coverage: every observable kind through the worst case", "[coverage]") {
  // Over a residual charge v0 ∈ [−5, 5] V: the peak of |y(t; v0)| over the window, by brute
  // force over a grid of t and v0 here (the closed form's own search refines between points).
  auto s = solve_text(kCircuit + watched() + "sweep c_gs.initial -5 V .. 5 V\n");
  WorstReport w = find_worst_case(*s.circuit, s.circuit->sweeps());
  REQUIRE(w.sweeps.size() == 1);
  REQUIRE(w.sweeps[0].observables.size() == std::size(kRows));
  for (std::size_t k = 0; k < std::size(kRows); ++k) {
    const KindRow& r = kRows[k];
    double brute = 0.0;
    for (int i = 0; i <= 200; ++i)
      for (int j = 0; j <= 4000; ++j)
        brute = std::max(brute, std::fabs(r.exact(200e-9 * j / 4000.0, -5.0 + 10.0 * i / 200.0)));
    INFO(r.text);
    CHECK(w.sweeps[0].observables[k].name == r.text);
    CHECK_REL(w.sweeps[0].observables[k].worst, brute, 1e-6);
  }
}

TEST_CASE("coverage: every observable kind through equiv (or why it has no port)", "[coverage]") {
  auto s = solve_text(kCircuit + watched());
  const Circuit& c = *s.circuit;
  const double at = 15e-9;
  for (const auto& r : kRows) {
    INFO(r.text);
    if (!r.port) {
      CHECK(std::string(r.no_port_reason).size() > 10);
      continue;
    }
    // Nothing loads the port: its open-circuit voltage, the storage element held at its value
    // at `at`, is the observable itself at that instant.
    const NodeId a = r.port->first == "gnd" ? c.ground() : *c.find_node(r.port->first);
    const NodeId b = r.port->second == "gnd" ? c.ground() : *c.find_node(r.port->second);
    PortEquivalent eq = port_equivalent(*s, std::make_pair(a, b), at);
    CHECK_REL(eq.voc.dc, r.exact(at, 0.0), 1e-11);
  }
}

TEST_CASE("coverage: every observable kind through the numerical cross-check", "[coverage][verify]") {
  auto s = solve_text(kCircuit + watched());
  VerifyReport v = verify_closed_form(*s);
  CHECK(v.passed);
  REQUIRE(v.observables.size() == std::size(kRows));
  for (std::size_t k = 0; k < std::size(kRows); ++k) {
    INFO(kRows[k].text << ": " << v.message);
    CHECK(v.observables[k].name == kRows[k].text);
    CHECK(v.observables[k].max_rel_error < 1e-8);
    // The numerical side itself, at its last sample, against the hand value.
    const double t = v.numerical.times.back();
    CHECK(std::fabs(v.numerical.values[k].back() - kRows[k].exact(t, 0.0)) <= 1e-6 * 12.0);
  }
}
