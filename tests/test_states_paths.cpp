// Several storage elements through every path that is not the closed form itself: claims
// (tau[k], frequency[k], damping[k], rth refused), solve --json (storage_elements, state_start by
// name, modes), equiv at a port with the states held, the figures of the report, and `worst`
// (phase and residual-state sweeps) and the CSV against the independent numerical integration.
#include <algorithm>
#include <cmath>
#include <numbers>
#include <sstream>

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include "engine_helpers.hpp"
#include "netfold/claims.hpp"
#include "netfold/port_equivalent.hpp"
#include "netfold/report.hpp"
#include "netfold/verify.hpp"
#include "netfold/worst.hpp"

using namespace netfold;
using namespace netfold::testing;

namespace {

// Series RLC on a 50 Hz cosine, closed at 1 ms: R = 5 Ω, L = 10 mH, C = 100 µF, so
// α = R/2L = 250 1/s (τ = 4 ms), ω₀ = 1/√(LC) = 1000 rad/s, ζ = α/ω₀ = 0.25 and
// f_d = ω₀·√(1 − ζ²)/2π (textbook series RLC).
const char* kSeriesRlc =
    "src: voltage-source a -> gnd, cosine 10 V 50 Hz\n"
    "K1:  switch a -> b, closes at 1 ms\n"
    "R1:  resistor b -> c, 5 ohm\n"
    "L1:  inductor c -> d, 10 mH\n"
    "C1:  capacitor d -> gnd, 100 uF\n"
    "watch L1.i, C1.v\n"
    "window 0 .. 40 ms\n";

const double kFd = 1000.0 * std::sqrt(1.0 - 0.0625) / (2.0 * std::numbers::pi);

}  // namespace

TEST_CASE("tau, frequency and damping claims of a segment read its natural modes", "[claims][states]") {
  Solved s = solve_text(std::string(kSeriesRlc) + "expect tau[2] = 4 ms ± 0.0001%\n"
                                                  "expect frequency[2] = " + std::to_string(kFd) + " Hz ± 0.0001%\n"
                                                  "expect damping[2] = 0.25 ± 0.0001%\n"
                                                  "expect tau[1] > 1 s\n"
                                                  "expect frequency[1] = 1 Hz ± 1%\n"
                                                  "expect rth[2] = 5 ohm ± 1%\n");
  const auto results = evaluate_claims(*s.circuit, *s);
  REQUIRE(results.size() == 6);
  CHECK(results[0].passed);
  CHECK(results[1].passed);
  CHECK(results[2].passed);
  // Segment 1: K1 open, C1 floating (λ = 0: τ = ∞) and L1 held at 0 A: no oscillatory mode.
  CHECK(results[3].passed);
  CHECK_FALSE(results[4].passed);
  CHECK(results[4].message.find("no oscillatory mode") != std::string::npos);
  CHECK_FALSE(results[5].passed);
  CHECK(results[5].message.find("several storage elements") != std::string::npos);
}

TEST_CASE("solve --json lists every storage element, its state by name and the modes of each segment",
          "[report][states]") {
  Solved s = solve_text(kSeriesRlc);
  const auto j = nlohmann::json::parse(solve_json(build_solve_report(*s)));
  REQUIRE(j["storage_elements"].size() == 2);
  CHECK(j["storage_elements"][0]["name"] == "L1");
  CHECK(j["storage_elements"][1]["unit"] == "F");
  CHECK(j["storage"].is_null());
  const auto& seg2 = j["segments"][1];
  CHECK(seg2["rth"].is_null());
  REQUIRE(seg2["modes"].size() == 1);  // one complex pair, listed once
  CHECK(seg2["modes"][0]["kind"] == "oscillatory");
  CHECK_REL(seg2["modes"][0]["frequency"].get<double>(), kFd, 1e-12);
  CHECK_REL(seg2["modes"][0]["natural_frequency"].get<double>(), 1000.0 / (2.0 * std::numbers::pi), 1e-12);
  CHECK_REL(seg2["modes"][0]["damping"].get<double>(), 0.25, 1e-12);
  CHECK_REL(seg2["modes"][0]["tau"].get<double>(), 4e-3, 1e-12);
  // The state at the start of segment 2 by name: both still 0 (K1 was open, C1 started from 0).
  CHECK(seg2["state_start"]["C1"].get<double>() == 0.0);
  CHECK(seg2["state_start"]["L1"].get<double>() == 0.0);
}

TEST_CASE("equiv at a port holds every state at its value at --at", "[reduce][states]") {
  Solved s = solve_text(kSeriesRlc);
  const Circuit& c = *s.circuit;
  const double at = 5e-3;
  const PortEquivalent eq = port_equivalent(*s, std::make_pair(*c.find_node("c"), c.ground()), at);
  // Seen from c: R1 to the source, L1 a current source holding i_L(at) out of c (Thevenin).
  CHECK_REL(eq.rth, 5.0, 1e-12);
  const double i_l = s->value(observable(s, "L1.i"), at);
  CHECK_REL(eq.voc.dc, -5.0 * i_l, 1e-9);
  REQUIRE(eq.voc.phasors.size() == 1);
  CHECK_REL(std::abs(eq.voc.phasors[0].value), 10.0, 1e-12);
  // The equivalent reproduces the node voltage at `at`: v_oc(at) with no load current.
  CHECK_REL(eq.voc.value(at), s->value(observable(s, "@c"), at) + 0.0, 1e-9);
}

TEST_CASE("the figures of a several-state observable agree with its own closed form", "[response][states]") {
  Solved s = solve_text(kSeriesRlc);
  const Figures f = figures(s, "C1.v");
  CHECK_REL(std::fabs(s->value(observable(s, "C1.v"), f.t_peak)), f.peak, 1e-14);
  const Peak p = find_peak(*s, observable(s, "C1.v"));
  CHECK(p.value == f.peak);
  REQUIRE(f.steady);
  // Steady state of the last segment: the RLC's phasor response at 50 Hz (handbook phasor law).
  const std::complex<double> jw(0.0, 2.0 * std::numbers::pi * 50.0);
  const std::complex<double> vc = 10.0 / (5.0 + jw * 10e-3 + 1.0 / (jw * 100e-6)) / (jw * 100e-6);
  REQUIRE(f.amplitude);
  CHECK_REL(*f.amplitude, std::abs(vc), 1e-9);
}

namespace {

// The largest |y| of each observable over a numerical run of `text` under `scenario` (the
// verify path's CVODE integration of the full nodal equations; nothing of the closed form).
std::vector<double> numerical_peaks(const std::string& text, const Scenario& scenario) {
  SolveOptions options;
  options.scenario = scenario;
  Solved s = solve_text(text, options);
  const NumericalRun run = integrate_inputs(*s, IntegrateOptions{1e-11, 0.0, 5'000'000});
  REQUIRE(run.status == IntegrationStatus::ok);
  std::vector<double> peaks;
  for (const auto& v : run.values) {
    double p = 0.0;
    for (double x : v) p = std::max(p, std::fabs(x));
    peaks.push_back(p);
  }
  return peaks;
}

// A sampled maximum lies below the true peak by at most about (ω·Δt)²/8 of it; with Δt = 2 µs
// and the fastest angular frequency ~1000 rad/s that is 5e-7 (calculus, common practice).
constexpr double kSampledPeakTolerance = 2e-6;

}  // namespace

TEST_CASE("worst over a phase sweep of a several-state circuit matches the numerical peak at every grid point",
          "[worst][states]") {
  const std::string text = std::string(kSeriesRlc) + "resolution 2 us\nsweep src.phase -180 deg .. 180 deg step 45 deg\n";
  Solved s = solve_text(text);
  const WorstReport r = find_worst_case(*s.circuit, s.circuit->sweeps(), WorstOptions{});
  REQUIRE(r.sweeps.size() == 1);
  const SweepResult& sw = r.sweeps.front();
  REQUIRE(sw.grid.size() == 9);
  const ElementId src = *s.circuit->find_element("src");
  for (std::size_t i = 0; i < sw.grid.size(); ++i) {
    Scenario sc;
    sc.source_phases.push_back({src, sw.grid[i]});
    const std::vector<double> numeric = numerical_peaks(text, sc);
    for (std::size_t k = 0; k < numeric.size(); ++k) {
      INFO("grid point " << i << " (" << sw.grid[i] << " rad), observable " << k);
      CHECK(numeric[k] <= sw.grid_peaks[k][i] * (1 + 1e-8));
      CHECK(numeric[k] >= sw.grid_peaks[k][i] * (1 - kSampledPeakTolerance));
    }
  }
  // The refined worst case is at least every grid point's peak, and the numerical run at its
  // argument reaches it.
  for (std::size_t k = 0; k < sw.observables.size(); ++k) {
    CHECK(sw.observables[k].worst >= *std::max_element(sw.grid_peaks[k].begin(), sw.grid_peaks[k].end()));
    Scenario sc;
    sc.source_phases.push_back({src, sw.observables[k].worst_at});
    const double numeric = numerical_peaks(text, sc)[k];
    CHECK(numeric <= sw.observables[k].worst * (1 + 1e-8));
    CHECK(numeric >= sw.observables[k].worst * (1 - kSampledPeakTolerance));
  }
}

TEST_CASE("worst over a residual-state sweep of a several-state circuit matches the numerical peak", "[worst][states]") {
  // C1 is floating before K1 closes (its state undetermined): the sweep sets its residual voltage.
  const std::string text =
      std::string(kSeriesRlc) + "resolution 2 us\nsweep C1.initial -20 V .. 20 V step 10 V\n";
  Solved s = solve_text(text);
  const WorstReport r = find_worst_case(*s.circuit, s.circuit->sweeps(), WorstOptions{});
  const SweepResult& sw = r.sweeps.front();
  REQUIRE(sw.grid.size() == 5);
  const ElementId c1 = *s.circuit->find_element("C1");
  for (std::size_t i = 0; i < sw.grid.size(); ++i) {
    Scenario sc;
    sc.residual_states.push_back({c1, sw.grid[i]});
    const std::vector<double> numeric = numerical_peaks(text, sc);
    for (std::size_t k = 0; k < numeric.size(); ++k) {
      INFO("C1 at " << sw.grid[i] << " V, observable " << k);
      CHECK(numeric[k] <= sw.grid_peaks[k][i] * (1 + 1e-8));
      CHECK(numeric[k] >= sw.grid_peaks[k][i] * (1 - kSampledPeakTolerance));
    }
  }
  // C1.v's largest peak is at an end of the range: the residual voltage adds to the ring.
  CHECK((sw.observables[1].worst_at == -20.0 || sw.observables[1].worst_at == 20.0));
}

TEST_CASE("the CSV of a several-state circuit agrees row by row with the numerical integration", "[report][states]") {
  Solved s = solve_text(std::string(kSeriesRlc) + "resolution 50 us\n");
  const std::string csv = waveform_csv(*s);
  const NumericalRun run = integrate_inputs(*s, IntegrateOptions{1e-12, 0.0, 5'000'000});
  REQUIRE(run.status == IntegrationStatus::ok);
  std::istringstream in(csv);
  std::string line;
  std::getline(in, line);
  CHECK(line == "t,L1.i,C1.v");
  std::vector<double> scale(run.values.size(), 0.0);
  for (std::size_t k = 0; k < run.values.size(); ++k)
    for (double x : run.values[k]) scale[k] = std::max(scale[k], std::fabs(x));
  std::size_t row = 0;
  while (std::getline(in, line)) {
    REQUIRE(row < run.times.size());
    std::istringstream fields(line);
    std::string field;
    std::getline(fields, field, ',');
    CHECK(std::stod(field) == Approx(run.times[row]).margin(1e-15));
    for (std::size_t k = 0; k < run.values.size(); ++k) {
      std::getline(fields, field, ',');
      INFO("row " << row << " t = " << run.times[row] << ", column " << k + 1);
      CHECK(std::fabs(std::stod(field) - run.values[k][row]) <= 1e-8 * scale[k]);
    }
    ++row;
  }
  CHECK(row == run.times.size());
  CHECK(row == 801);  // 0 .. 40 ms every 50 µs
}
