// The one observable form (src/network/mna.cpp, observable_form) through every path that
// evaluates observables: the closed form, CSV, claims, the worst case, port equivalents and
// the numerical cross-check.
#include <cmath>
#include <sstream>
#include <string>

#include "engine_helpers.hpp"
#include "netfold/claims.hpp"
#include "netfold/report.hpp"
#include "netfold/verify.hpp"
#include "netfold/worst.hpp"

using namespace netfold;
using namespace netfold::testing;

namespace {

// A gate driven through its resistor: node d is held by a grounded source and node g by the
// gate capacitance (a port of the nodal equations), so both ends of `@d - @g` are held nodes.
// Source: first-order RC step response, v_C = V·(1 − e^{−t/RC}), so v(d) − v(g) = V·e^{−t/RC}
// (textbook, from memory). τ = 10 Ω · 1 nF = 10 ns.
const char* kGateDrive =
    "drive: voltage-source d -> gnd, step 12 V at 0 s\n"
    "r_g: resistor d -> g, 10 ohm\n"
    "c_gs: capacitor g -> gnd, 1 nF\n"
    "watch @d - @g, @g - @d, r_g.v\n"
    "window 0 .. 100 ns\n";
constexpr double kTau = 10e-9;
double gate_difference(double t) { return 12.0 * std::exp(-t / kTau); }

}  // namespace

TEST_CASE("issue 12 item 1: a difference of two held nodes keeps both nodes in the closed form", "[observables]") {
  auto s = solve_text(kGateDrive);
  const Observable dg = observable(s, "@d - @g");
  const Observable gd = observable(s, "@g - @d");
  for (double t : {0.0, 3e-9, 10e-9, 42e-9}) {
    CHECK_REL(s->value(dg, t), gate_difference(t), 1e-12);
    CHECK_REL(s->value(gd, t), -gate_difference(t), 1e-12);
    // The same voltage named as the resistor's own.
    CHECK_REL(s->value(observable(s, "r_g.v"), t), gate_difference(t), 1e-12);
  }
  Figures f = figures(s, "@d - @g");
  CHECK_REL(f.peak, 12.0, 1e-12);
  CHECK_REL(f.final_value, gate_difference(100e-9), 1e-9);
}

TEST_CASE("issue 12 item 1: the CSV column of a node difference holds the difference", "[observables]") {
  auto s = solve_text(kGateDrive);
  std::istringstream csv(waveform_csv(*s));
  std::string header, row;
  std::getline(csv, header);
  CHECK(header == "t,@d - @g,@g - @d,r_g.v");
  int checked = 0;
  while (std::getline(csv, row)) {
    double t = 0, a = 0, b = 0, c = 0;
    REQUIRE(std::sscanf(row.c_str(), "%lf,%lf,%lf,%lf", &t, &a, &b, &c) == 4);
    CHECK(std::fabs(a - gate_difference(t)) <= 1e-12 * 12.0);
    CHECK(std::fabs(b + gate_difference(t)) <= 1e-12 * 12.0);
    ++checked;
  }
  CHECK(checked > 100);
}

TEST_CASE("issue 12 item 1: claims on a held-node difference pass when true and fail when false", "[observables]") {
  // At t = τ the difference is 12 V/e = 4.4146 V.
  auto s = solve_text(std::string(kGateDrive) +
                      "expect @d - @g at 10 ns = 4.4146 V ± 0.01%\n"
                      "expect @d - @g at 10 ns = 12 V ± 1%\n"
                      "expect peak @g - @d = 12 V ± 0.01%\n");
  auto results = evaluate_claims(*s.circuit, *s);
  REQUIRE(results.size() == 3);
  CHECK(results[0].passed);
  CHECK_FALSE(results[1].passed);
  CHECK(results[2].passed);
}

TEST_CASE("issue 12 item 1: the worst case of a held-node difference over a residual charge", "[observables]") {
  // Starting from v_C(0) = V0, v(d) − v(g) = (12 − V0)·e^{−t/τ}: its peak over V0 ∈ [−5, 5] V is
  // 17 V at V0 = −5 V (from the RC law above).
  auto s = solve_text(std::string(kGateDrive) + "sweep c_gs.initial -5 V .. 5 V\n");
  WorstReport w = find_worst_case(*s.circuit, s.circuit->sweeps());
  REQUIRE(w.sweeps.size() == 1);
  const SweepExtreme& e = w.sweeps[0].observables.at(0);
  CHECK(e.name == "@d - @g");
  CHECK_REL(e.worst, 17.0, 1e-9);
  CHECK_REL(e.worst_at, -5.0, 1e-6);
  CHECK_REL(e.best, 7.0, 1e-9);
}

TEST_CASE("issue 12 item 1: the cross-check evaluates a held-node difference on its own path", "[observables][verify]") {
  auto s = solve_text(kGateDrive);
  VerifyReport r = verify_closed_form(*s);
  CHECK(r.passed);
  REQUIRE(r.observables.size() == 3);
  // Both sides show the 12 V at t = 0+: a form that dropped node g would peak at 12 V too, but
  // would hold 12 V to the end, where the true difference is 12·e^{−10} V.
  CHECK_REL(r.observables[0].max_closed, 12.0, 1e-9);
  CHECK_REL(r.observables[0].max_numeric, 12.0, 1e-6);
  REQUIRE_FALSE(r.numerical.times.empty());
  const double t_end = r.numerical.times.back();
  CHECK(std::fabs(r.numerical.values[0].back() - gate_difference(t_end)) <= 1e-6 * 12.0);
}

TEST_CASE("issue 12 item 2: the Norton current at a port includes the storage element's share", "[observables][equiv]") {
  // A 48 V DC link: the supply through 10 mΩ, the link capacitor behind its 5 mΩ ESR, port at
  // the link node. With the capacitor held at its voltage, a short at the port draws the
  // supply's 48/0.01 = 4.8 kA plus the capacitor's v_C/ESR (Kirchhoff's laws, exact).
  auto s = solve_text(
      "bus: voltage-source s -> gnd, dc 48 V\n"
      "r_s: resistor s -> link, 10 mohm\n"
      "esr: resistor link -> c, 5 mohm\n"
      "c_link: capacitor c -> gnd, 2.2 mF, initial 30 V\n"
      "window 0 .. 1 ms\n");
  const Circuit& c = *s.circuit;
  const double at = 20e-6;
  const double vc = s->value(observable(s, "c_link.v"), at);
  PortEquivalent eq = port_equivalent(*s, std::make_pair(*c.find_node("link"), c.ground()), at);
  CHECK_REL(eq.isc.dc, 48.0 / 0.010 + vc / 0.005, 1e-12);
  // R_th: 10 mΩ ∥ 5 mΩ; v_oc = i_sc·R_th (the same Thevenin/Norton pair).
  const double rth = 0.010 * 0.005 / 0.015;
  CHECK_REL(eq.rth, rth, 1e-12);
  CHECK_REL(eq.voc.dc, eq.isc.dc * rth, 1e-12);
  // And v_oc is the link voltage itself at that instant (no load at the port).
  CHECK_REL(eq.voc.dc, s->value(observable(s, "@link"), at), 1e-12);
}

TEST_CASE("issue 12 limits: an observable watched many times is evaluated and reported once", "[observables]") {
  // 50 000 repeats of one name cost 9.4 GB in the first edition; each repeat is the same column.
  std::string watch = "watch c_gs.v";
  for (int k = 0; k < 2000; ++k) watch += ", c_gs.v";
  auto s = solve_text(
      "drive: voltage-source d -> gnd, step 12 V at 0 s\nr_g: resistor d -> g, 10 ohm\n"
      "c_gs: capacitor g -> gnd, 1 nF\n" + watch + ", @d - @g\nwindow 0 .. 100 ns\n");
  REQUIRE(s->observables().size() == 2);
  CHECK(s->observables()[0].text == "c_gs.v");
  CHECK(s->observables()[1].text == "@d - @g");
  bool warned = false;
  for (const auto& w : s->warnings()) warned |= w.find("2000 repeated names in 'watch'") != std::string::npos;
  CHECK(warned);
  std::istringstream csv(waveform_csv(*s));
  std::string header;
  std::getline(csv, header);
  CHECK(header == "t,c_gs.v,@d - @g");
}
