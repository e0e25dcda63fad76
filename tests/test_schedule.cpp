// Tests of the events stage: the Scenario applied once in the user's terms, and the Schedule of
// events and segments built from the circuit, the scenario and the window.
#include <cmath>
#include <numbers>

#include "engine_helpers.hpp"
#include "netfold/schedule.hpp"

using namespace netfold;
using namespace netfold::testing;

namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kDeg = kPi / 180.0;

Circuit circuit_of(const std::string& text) { return parse_netlist(text, "schedule.nf"); }

ElementId id(const Circuit& c, const char* name) { return *c.find_element(name); }

// The sum of a waveform's sinusoids at t (its DC part and steps left out).
double sinusoids_at(const Waveform& w, double t) {
  double v = 0.0;
  for (const auto& s : w.sinusoids) v += s.amplitude * std::cos(2.0 * kPi * s.frequency * t + s.phase);
  return v;
}

}  // namespace

TEST_CASE("a schedule lists switch events and steps in time order, one segment between each", "[events]") {
  // "Every switch event and every step at t > 0 is an event ... simultaneous events are one boundary."
  Circuit c = circuit_of(
      "V1: voltage-source a -> gnd, dc 5 V + step 2 V at 10 ms + step 1 V at -1 ms\n"
      "K1: switch a -> b, closes at 0 s, opens at 35 ms\n"
      "K2: switch b -> c, closes at 35 ms\n"
      "R1: resistor b -> gnd, 1 kohm\nR2: resistor c -> gnd, 1 kohm\nC1: capacitor b -> gnd, 1 uF\n"
      "window 0 .. 60 ms\n");
  Schedule s = build_schedule(apply_scenario(c, {}), *c.window());
  REQUIRE(s.events.size() == 4);  // the step at -1 ms is part of the level before t = 0
  CHECK(s.events[0].time == 0.0);
  CHECK(s.events[0].kind == EventKind::switch_closes);
  CHECK(s.events[1].time == 10e-3);
  CHECK(s.events[1].kind == EventKind::source_steps);
  CHECK(s.events[1].step == 2.0);
  CHECK(s.events[2].element == id(c, "K1"));
  CHECK(s.events[3].element == id(c, "K2"));
  REQUIRE(s.segments.size() == 3);
  CHECK(s.segments[0].from == 0.0);
  CHECK(s.segments[0].to == 10e-3);
  CHECK(s.segments[1].to == 35e-3);
  CHECK(s.segments[2].to == 60e-3);
  CHECK(s.segments[0].positions.closed == std::vector<bool>{true, false});
  CHECK(s.segments[1].positions.closed == std::vector<bool>{true, false});
  CHECK(s.segments[2].positions.closed == std::vector<bool>{false, true});
  REQUIRE(s.segments[2].changes.size() == 2);
  CHECK(event_text(c, s.segments[2].changes[0]) == "K1 opens");
  CHECK(event_text(c, s.segments[2].changes[1]) == "K2 closes");
  CHECK(event_text(c, s.segments[1].changes.at(0)) == "V1 steps by 2 V");
  CHECK(s.resolution == 60e-3 / 4000.0);
  CHECK(s.ignored_events().empty());
  CHECK(s.segment_index_at(35e-3) == 2);  // an event time belongs to the segment it starts
  CHECK(s.segment_index_at(34.9e-3) == 1);
}

TEST_CASE("events at or after the window's end split nothing and are listed as ignored", "[events]") {
  Circuit c = circuit_of(
      "V1: voltage-source a -> gnd, dc 5 V\nK1: switch a -> b, closes at 1 ms, opens at 20 ms\n"
      "R1: resistor b -> gnd, 1 kohm\nwindow 0 .. 20 ms\n");
  Schedule s = build_schedule(apply_scenario(c, {}), *c.window());
  REQUIRE(s.segments.size() == 2);
  CHECK(s.segments[1].to == 20e-3);
  REQUIRE(s.ignored_events().size() == 1);
  CHECK(s.ignored_events()[0].time == 20e-3);
}

TEST_CASE("a schedule needs no numerics: a circuit the engine refuses still has one", "[events]") {
  // Two capacitors straight in parallel: solve refuses the loop, the schedule does not look at values.
  Circuit c = circuit_of(
      "V1: voltage-source a -> gnd, dc 5 V\nK1: switch a -> b, closes at 2 ms\nR1: resistor b -> c, 1 kohm\n"
      "C1: capacitor c -> gnd, 1 uF\nC2: capacitor c -> gnd, 1 uF\nwindow 0 .. 5 ms\n");
  CHECK_THROWS_AS(solve(c), InputError);
  Schedule s = build_schedule(apply_scenario(c, {}), *c.window());
  REQUIRE(s.segments.size() == 2);
  CHECK(s.segments[0].positions.closed == std::vector<bool>{false});
  CHECK(s.segments[1].positions.closed == std::vector<bool>{true});
}

TEST_CASE("a scenario moves a switch's first closing only, and the positions follow", "[events]") {
  Circuit c = circuit_of(
      "V1: voltage-source a -> gnd, dc 5 V\nK1: switch a -> b, opens at 1 ms, closes at 2 ms, opens at 8 ms\n"
      "R1: resistor b -> gnd, 1 kohm\nwindow 0 .. 10 ms\n");
  Scenario sc;
  sc.first_closings.push_back({id(c, "K1"), 5e-3});
  AppliedScenario a = apply_scenario(c, sc);
  const auto& ev = a.events(id(c, "K1"));
  REQUIRE(ev.size() == 3);
  CHECK(ev[0].time == 1e-3);
  CHECK(ev[1].time == 5e-3);
  CHECK(ev[2].time == 8e-3);
  CHECK(c.element(id(c, "K1")).events[1].time == 2e-3);  // the circuit itself is untouched
  Schedule s = build_schedule(a, *c.window());
  REQUIRE(s.segments.size() == 4);
  CHECK(s.segments[2].from == 5e-3);
  for (const auto& seg : s.segments) CHECK(seg.positions == positions_at(a, seg.from));
  CHECK(positions_at(a, 4e-3).closed == std::vector<bool>{false});
  CHECK(positions_at(a, 5e-3).closed == std::vector<bool>{true});
}

TEST_CASE("an event found while solving splits its segment and its configuration carries on", "[events]") {
  Circuit c = circuit_of(
      "V1: voltage-source a -> gnd, dc 5 V\nK1: switch a -> b, closes at 0 s, opens at 40 ms\n"
      "K2: switch b -> c, closes at 0 s, opens at 30 ms\nR1: resistor c -> gnd, 1 kohm\nwindow 0 .. 50 ms\n");
  Schedule s = build_schedule(apply_scenario(c, {}), *c.window());
  REQUIRE(s.segments.size() == 3);  // 0, 30 ms, 40 ms
  // K1 found to open at 10 ms (a contact parting at a current zero, say).
  ScheduledEvent found{10e-3, id(c, "K1"), EventKind::switch_opens, 0.0};
  SwitchPositions after = s.segments[0].positions;
  after.closed[0] = false;
  s.split_segment(0, found, after);
  REQUIRE(s.segments.size() == 4);
  CHECK(s.segments[0].to == 10e-3);
  CHECK(s.segments[1].from == 10e-3);
  CHECK(s.segments[1].to == 30e-3);
  CHECK(s.segments[1].positions.closed == std::vector<bool>{false, true});
  CHECK(event_text(c, s.segments[1].changes.at(0)) == "K1 opens");
  // K1 stays open through K2's event at 30 ms; at 40 ms its own scheduled event sets it.
  CHECK(s.segments[2].positions.closed == std::vector<bool>{false, false});
  CHECK(s.segments[3].positions.closed == std::vector<bool>{false, false});
  CHECK(s.events.size() == 5);
  CHECK(s.events[2].time == 10e-3);  // after the two events at 0
  CHECK_THROWS(s.split_segment(0, ScheduledEvent{20e-3, id(c, "K1"), EventKind::switch_closes, 0.0}, after));
}

TEST_CASE("issue 12 item 3: a sine source's phase is set in the sine's own terms", "[events]") {
  // Spec (v2): "a sine source's 0° is the sine's zero crossing"; `sine A f phase p` is
  // `cosine A f phase (p − 90°)`.
  Circuit c = circuit_of(
      "V1: voltage-source a -> gnd, sine 325 V 50 Hz phase 30 deg\nV2: voltage-source b -> gnd, cosine 10 V 50 Hz "
      "phase 30 deg\nR1: resistor a -> b, 1 ohm\n");
  const ElementId v1 = id(c, "V1"), v2 = id(c, "V2");
  CHECK(written_phase(c, v1) == Approx(30 * kDeg).epsilon(1e-15));
  CHECK(written_phase(c, v2) == 30 * kDeg);
  for (double p : {0.0, 30.0, -90.0, 177.0}) {
    Scenario sc;
    sc.source_phases.push_back({v1, p * kDeg});
    sc.source_phases.push_back({v2, p * kDeg});
    AppliedScenario a = apply_scenario(c, sc);
    INFO("phase " << p << " deg");
    for (double t : {0.0, 1.3e-3, 7.7e-3}) {
      CHECK(sinusoids_at(a.waveform(v1), t) == Approx(325 * std::sin(2 * kPi * 50 * t + p * kDeg)).margin(1e-12 * 325));
      CHECK(sinusoids_at(a.waveform(v2), t) == Approx(10 * std::cos(2 * kPi * 50 * t + p * kDeg)).margin(1e-12 * 10));
    }
  }
  // The declared phase gives back the declared waveform bit for bit.
  Scenario same;
  same.source_phases.push_back({v1, 30 * kDeg});
  CHECK(apply_scenario(c, same).waveform(v1).sinusoids[0].phase == c.element(v1).waveform.sinusoids[0].phase);
}

TEST_CASE("issue 12 item 4: a phase of a source with harmonics is a shift of its time origin", "[events]") {
  // Spec (v2): "a sinusoid at k times the first one's frequency moves by k·Δ ... A DC part and
  // steps of that source do not move."
  Circuit c = circuit_of(
      "V1: voltage-source a -> gnd, dc 3 V + cosine 100 V 50 Hz phase 10 deg + sine 20 V 150 Hz phase 40 deg "
      "+ cosine 7 V 250 Hz + step 2 V at 3 ms\nR1: resistor a -> gnd, 1 ohm\n");
  const ElementId v1 = id(c, "V1");
  const Waveform& declared = c.element(v1).waveform;
  for (double p : {-120.0, 10.0, 64.0}) {
    Scenario sc;
    sc.source_phases.push_back({v1, p * kDeg});
    AppliedScenario a = apply_scenario(c, sc);
    const Waveform& w = a.waveform(v1);
    const double shift = (p - 10.0) * kDeg / (2 * kPi * 50.0);  // Δ of the first sinusoid as time
    INFO("phase " << p << " deg");
    CHECK(a.time_shift(v1) == Approx(shift).margin(1e-18));
    for (double t : {0.0, 0.4e-3, 2.9e-3, 11e-3})
      CHECK(sinusoids_at(w, t) == Approx(sinusoids_at(declared, t + shift)).margin(1e-12 * 127));
    CHECK(w.dc == declared.dc);
    REQUIRE(w.steps.size() == 1);
    CHECK(w.steps[0].time == 3e-3);
    CHECK(w.steps[0].level == 2.0);
  }
}

TEST_CASE("a scenario target an element cannot take is refused at the element's line", "[events]") {
  Circuit c = circuit_of(
      "V1: voltage-source a -> gnd, dc 5 V\nR1: resistor a -> b, 1 ohm\nK1: switch b -> gnd, opens at 1 ms\n");
  Scenario phase;
  phase.source_phases.push_back({id(c, "V1"), 0.0});
  Scenario state;
  state.residual_states.push_back({id(c, "R1"), 1.0});
  Scenario closing;
  closing.first_closings.push_back({id(c, "K1"), 1e-3});
  for (const auto& [sc, line] : {std::pair{phase, 1u}, std::pair{state, 2u}, std::pair{closing, 3u}}) {
    try {
      apply_scenario(c, sc);
      FAIL("expected an error");
    } catch (const InputError& e) {
      CHECK(e.diagnostics()[0].loc.line == line);
    }
  }
}

TEST_CASE("solve reads the schedule: its segments are the schedule's, changes included", "[events]") {
  auto s = solve_text(
      "V1: voltage-source a -> gnd, cosine 10 V 50 Hz\nK1: switch a -> b, closes at 1 ms, opens at 9 ms\n"
      "R1: resistor b -> c, 10 ohm\nC1: capacitor c -> gnd, 100 uF\nwindow 0 .. 20 ms\nsweep K1.closes 1 ms .. 5 ms\n");
  SolveOptions o;
  o.scenario = scenario_at(s.circuit->sweeps()[0], 4e-3);
  Solution moved = solve(*s.circuit, o);
  const Schedule& plan = moved.schedule();
  REQUIRE(plan.segments.size() == moved.segments().size());
  for (std::size_t k = 0; k < plan.segments.size(); ++k) {
    CHECK(plan.segments[k].from == moved.segments()[k].from);
    CHECK(plan.segments[k].positions == moved.segments()[k].positions);
  }
  CHECK(moved.segments()[1].from == 4e-3);
  CHECK(moved.segments()[1].changes == std::vector<std::string>{"K1 closes"});
}

TEST_CASE("the sample grid runs from FROM by the resolution to TO with no row repeated or past TO", "[events]") {
  // source: netlist-format.md, "CSV rows are at FROM + k·resolution ... no row is repeated".
  auto g = sample_grid(Window{0.0, 1.0, {}}, 0.25);
  REQUIRE(g.size() == 5);
  CHECK(g.front() == 0.0);
  CHECK(g[1] == 0.25);
  CHECK(g.back() == 1.0);
  // 0.3 / 0.1 is 2.9999999999999996 in binary and 3 · 0.1 is 0.30000000000000004: the row at
  // TO is kept, and it is TO.
  auto r = sample_grid(Window{0.0, 0.3, {}}, 0.1);
  REQUIRE(r.size() == 4);
  CHECK(r.back() == 0.3);
  auto w = sample_grid(Window{1e-3, 2e-3, {}}, 1e-4);
  CHECK(w.size() == 11);
  CHECK(w.front() == 1e-3);
  CHECK(w.back() == 2e-3);
  // Far from t = 0 a step below the spacing of doubles would repeat rows: each is kept once.
  auto far = sample_grid(Window{1e6, 1e6 + 1e-8, {}}, 1e-11);
  REQUIRE(far.size() >= 2);
  for (std::size_t k = 1; k < far.size(); ++k) CHECK(far[k] > far[k - 1]);
  CHECK(far.back() <= 1e6 + 1e-8);
}

TEST_CASE("a degenerate sample grid is the row FROM and an oversized one is refused", "[events]") {
  CHECK(sample_grid(Window{0.5, 1.0, {}}, 0.0) == std::vector<double>{0.5});
  CHECK(sample_grid(Window{0.5, 1.0, {}}, std::nan("")) == std::vector<double>{0.5});
  CHECK(sample_grid(Window{2.0, 1.0, {}}, 0.1) == std::vector<double>{2.0});
  CHECK_THROWS_AS(sample_grid(Window{0.0, 1.0, {}}, 1e-8), NumericError);
}

TEST_CASE("the fastest source frequency is the highest of the sinusoids that have an amplitude", "[events]") {
  Circuit c = circuit_of(
      "V1: voltage-source a -> gnd, sine 325 V 50 Hz + cosine 2 V 150 Hz\n"
      "V2: voltage-source b -> gnd, cosine 0 V 10 kHz\nR1: resistor a -> b, 1 ohm\n");
  CHECK(fastest_source_frequency(c) == 150.0);  // the 10 kHz cosine drives nothing
  CHECK(fastest_source_frequency(circuit_of("V1: voltage-source a -> gnd, dc 5 V\nR1: resistor a -> gnd, 1 ohm\n")) ==
        0.0);
}
