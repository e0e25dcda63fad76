// The cross-check with diodes and contacts that act at a current or voltage zero (verify.hpp,
// integrate.hpp, format v2 "State-dependent events"): the numerical path locates the events
// itself with CVODE's root finding, and its waveforms and event instants agree with the closed
// form's; a closed form falsified through the engine's test seams fails; an event time of the
// integrator agrees with a textbook relation.

#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>

#include <nlohmann/json.hpp>

#include "netfold/integrate.hpp"
#include "netfold/parse.hpp"
#include "netfold/report.hpp"
#include "netfold/verify.hpp"
#include "response/test_seams.hpp"

using namespace netfold;

namespace {

VerifyReport check(const Circuit& c) {
  Solution s = solve(c);
  VerifyReport r = verify_closed_form(s);
  INFO(r.message);
  for (const auto& n : r.notes) INFO(n);
  REQUIRE(std::isfinite(r.max_rel_error));
  return r;
}

std::size_t count_kind(const NumericalRun& run, EventKind kind) {
  return static_cast<std::size_t>(
      std::count_if(run.events.begin(), run.events.end(), [&](const ScheduledEvent& e) { return e.kind == kind; }));
}

// A 12 V, 50 Hz supply switched at its peak onto a half-wave rectifier with a 470 µF capacitor
// and a 100 Ω load.
const char* const kHalfWave = R"(title "half-wave rectifier"
mains: voltage-source l -> gnd, cosine 12 V 50 Hz
K1: switch l -> a, closes at 0 s
r_s: resistor a -> b, 1 ohm
d1: diode b -> p, forward 0.7 V, on 10 mohm
c1: capacitor p -> gnd, 470 uF
r_load: resistor p -> gnd, 100 ohm
watch c1.v, d1.i
window 0 .. 60 ms
)";

// A bridge of four diodes with their leakage, switched on at 2 ms onto 220 µF and 2.2 kΩ.
const char* const kBridge = R"(title "bridge rectifier inrush"
mains:  voltage-source l -> gnd, cosine 325 V 50 Hz
K1:     switch l -> a, closes at 2 ms
r_in:   resistor a -> c, 4.7 ohm
d1:     diode c -> p, forward 0.9 V, on 20 mohm, off 10 Mohm
d2:     diode m -> c, forward 0.9 V, on 20 mohm, off 10 Mohm
d3:     diode gnd -> p, forward 0.9 V, on 20 mohm, off 10 Mohm
d4:     diode m -> gnd, forward 0.9 V, on 20 mohm, off 10 Mohm
c_bulk: capacitor p -> m, 220 uF
r_load: resistor p -> m, 2.2 kohm
watch r_in.i, c_bulk.v, d1.i, d4.i
window 0 .. 60 ms
)";

// A 24 V relay coil (240 Ω, 500 mH) released by its contact at 10 ms, the coil current taken by
// a flyback diode with its leakage (a diode that blocks with an open `off` would leave the coil's
// loop open once its current has decayed).
const char* const kFlyback = R"(title "relay coil with a flyback diode"
supply: voltage-source p -> gnd, dc 24 V
coil_r: resistor p -> m, 240 ohm
coil_l: inductor m -> d, 500 mH
d_fly:  diode d -> p, forward 0.8 V, on 10 mohm, off 10 Mohm
K1:     switch d -> gnd, opens at 10 ms
watch coil_l.i, @d
window 0 .. 30 ms
)";

// The same coil released into a diode in series with a 47 V zener (the fast release): the coil
// drives d1 forward and d_z into reverse breakdown; both with 10 MΩ leakage.
const char* const kZener = R"(title "relay coil with a diode and zener"
supply: voltage-source p -> gnd, dc 24 V
coil_r: resistor p -> m, 240 ohm
coil_l: inductor m -> d, 500 mH
d1:     diode d -> x, forward 0.7 V, on 10 mohm, off 10 Mohm
d_z:    diode p -> x, forward 0.7 V, breakdown 47 V, on 0.5 ohm, off 10 Mohm
K1:     switch d -> gnd, opens at 5 ms
watch coil_l.i, @d, d_z.i
window 0 .. 20 ms
)";

// An inductive load (10 Ω, 100 mH) on 325 V, 50 Hz, whose contact parts at 25 ms and opens at
// the next current zero.
const char* const kCurrentZero = R"(title "inductive load broken at current zero"
mains: voltage-source l -> gnd, cosine 325 V 50 Hz
K1:    switch l -> a, closes at 0 s, opens at current zero after 25 ms
r1:    resistor a -> b, 10 ohm
l1:    inductor b -> gnd, 100 mH
r_p:   resistor a -> gnd, 10 kohm
watch l1.i, @a
window 0 .. 60 ms
)";

// A 40 µF capacitor on the mains, disconnected at a current zero after 5 ms and reconnected at
// the first voltage zero across the contact after 30 ms.
const char* const kVoltageZero = R"(title "capacitor disconnected and reclosed at a zero"
mains: voltage-source l -> gnd, cosine 325 V 50 Hz
K1:    switch l -> a, opens at current zero after 5 ms, closes at voltage zero after 30 ms
r1:    resistor a -> b, 0.5 ohm
c1:    capacitor b -> gnd, 40 uF
r_d:   resistor b -> gnd, 100 kohm
watch c1.v, r1.i
window 0 .. 80 ms
)";

// A capacitive dropper (470 nF, 100 Ω) plugged into 325 V, 50 Hz, feeding a 12 V zener and a
// rectifier diode into 100 µF and 2.2 kΩ: the zener breaks down on its own each negative half
// cycle once the capacitor has charged (roots of its voltage against −12 V).
const char* const kDropper = R"(title "capacitive dropper with a zener"
ground n
mains: voltage-source l -> n, cosine 325 V 50 Hz
K0: switch l -> l2, closes at 0 s
c_x: capacitor l2 -> a, 470 nF
r_s: resistor a -> b, 100 ohm
d_z: diode n -> b, forward 0.7 V, breakdown 12 V, on 2 ohm, off 10 Mohm
d_r: diode b -> p, forward 0.7 V, on 1 ohm, off 10 Mohm
c_o: capacitor p -> n, 100 uF
r_o: resistor p -> n, 2.2 kohm
watch c_o.v, d_z.i, c_x.v
window 0 .. 100 ms
)";

}  // namespace

TEST_CASE("a capacitive dropper's zener breakdowns agree with the closed form", "[verify][diodes]") {
  VerifyReport r = check(parse_netlist(kDropper, "dropper.nf"));
  CHECK(r.passed);
  CHECK(count_kind(r.numerical, EventKind::diode_breaks_down) >= 2);
  CHECK(r.closed_events >= r.numerical.events.size() / 2);
  CHECK(r.max_event_time_error <= 1e-9);
}

TEST_CASE("a half-wave rectifier's waveforms and diode events agree with the closed form", "[verify][diodes]") {
  VerifyReport r = check(parse_netlist(kHalfWave, "halfwave.nf"));
  CHECK(r.passed);
  CHECK(r.max_rel_error < 1e-7);
  // Three periods: the diode stops and starts conducting about once per period each.
  CHECK(count_kind(r.numerical, EventKind::diode_blocks) >= 3);
  CHECK(count_kind(r.numerical, EventKind::diode_conducts) >= 2);
  CHECK(r.closed_events > 0);
  CHECK(r.max_event_time_error <= 1e-9);
}

TEST_CASE("a bridge of four diodes with leakage agrees with the closed form, event instants too", "[verify][diodes]") {
  VerifyReport r = check(parse_netlist(kBridge, "bridge.nf"));
  CHECK(r.passed);
  CHECK(r.max_rel_error < 1e-7);
  CHECK(count_kind(r.numerical, EventKind::diode_conducts) >= 8);
  CHECK(r.max_event_time_error <= 1e-9);
  // The pairs alternate: d1 and d4 conduct together, d2 and d3 together.
  for (const ScheduledEvent& e : r.numerical.events) {
    if (e.kind != EventKind::diode_conducts) continue;
    const auto partner =
        std::find_if(r.numerical.events.begin(), r.numerical.events.end(), [&](const ScheduledEvent& o) {
          return o.kind == EventKind::diode_conducts && std::fabs(o.time - e.time) <= 1e-9 && o.element != e.element;
        });
    CHECK(partner != r.numerical.events.end());
  }
}

TEST_CASE("a relay coil released into a flyback diode agrees with the closed form", "[verify][diodes]") {
  VerifyReport r = check(parse_netlist(kFlyback, "flyback.nf"));
  CHECK(r.passed);
  // It starts conducting as the contact opens (a timed event: the configuration search, no
  // root) and stops at its current zero (a root).
  CHECK(count_kind(r.numerical, EventKind::diode_conducts) == 0);
  CHECK(count_kind(r.numerical, EventKind::diode_blocks) == 1);
  CHECK(r.max_event_time_error <= 1e-9);
}

TEST_CASE("a relay coil released into a diode and zener agrees with the closed form", "[verify][diodes]") {
  VerifyReport r = check(parse_netlist(kZener, "zener.nf"));
  CHECK(r.passed);
  // Both go into conduction as the contact opens (the configuration search at a timed event, no
  // root) and stop together at the coil's current zero (roots).
  CHECK(count_kind(r.numerical, EventKind::diode_blocks) == 2);
  REQUIRE_FALSE(r.numerical.events.empty());
  // Outside check: L·di/dt = −(R·i + V_z + V_f) while the pair conducts, so the current reaches
  // zero at (L/R)·ln(1 + I₀·R/(V_z + V_f)) after release (textbook RL decay against a constant
  // voltage, from memory; for V_z ≫ I₀·R about L·I₀/(V_z + V_f)); R = coil + both `on`
  // resistances. The 10 MΩ leakage moves it by less than 1e-5 of itself.
  const double l = 0.5, rr = 240.0 + 0.01 + 0.5, i0 = 24.0 / 240.0, v = 47.0 + 0.7;
  CHECK(r.numerical.events.front().time == Approx(0.005 + (l / rr) * std::log(1.0 + i0 * rr / v)).epsilon(1e-5));
  CHECK(r.max_event_time_error <= 1e-9);
}

TEST_CASE("a contact that opens at current zero on an inductive load agrees with the closed form", "[verify][diodes]") {
  VerifyReport r = check(parse_netlist(kCurrentZero, "current_zero.nf"));
  CHECK(r.passed);
  REQUIRE(count_kind(r.numerical, EventKind::switch_opens) == 1);
  const ScheduledEvent& e = r.numerical.events.front();
  CHECK(e.time > 0.025);
  CHECK(e.time < 0.035);  // the next current zero of a 50 Hz current: within half a period
  CHECK(r.closed_events == 1);
  CHECK(r.max_event_time_error <= 1e-9);
}

TEST_CASE("a contact that closes at voltage zero onto a charged capacitor agrees with the closed form",
          "[verify][diodes]") {
  VerifyReport r = check(parse_netlist(kVoltageZero, "voltage_zero.nf"));
  CHECK(r.passed);
  CHECK(count_kind(r.numerical, EventKind::switch_opens) == 1);
  CHECK(count_kind(r.numerical, EventKind::switch_closes) == 1);
  CHECK(r.closed_events == 2);
  CHECK(r.max_event_time_error <= 1e-9);
}

TEST_CASE("a wrong closed form of a diode circuit fails the cross-check", "[verify][diodes]") {
  const Circuit c = parse_netlist(kHalfWave, "halfwave.nf");
  const VerifyReport right = verify_closed_form(solve(c));
  REQUIRE(right.passed);
  seams::ScopedFaults fault({.tau_scale = 1.01});
  const Solution wrong = solve(c);
  const VerifyReport r = verify_closed_form(wrong);
  INFO(r.message);
  CHECK_FALSE(r.passed);
  CHECK(r.max_rel_error > 1e-4);
  // The integrator's own events do not move with the closed form's fault; the closed form's do.
  REQUIRE(r.numerical.events.size() == right.numerical.events.size());
  for (std::size_t k = 0; k < r.numerical.events.size(); ++k)
    CHECK(r.numerical.events[k].time == right.numerical.events[k].time);
  CHECK(r.max_event_time_error > 1e-7);
}

// Outside check. A coil of L and R carrying I₀ released into a diode of forward drop V_f: while
// the diode conducts, L·di/dt = −(R·i + V_f), so i(t) = (I₀ + V_f/R)·e^{−tR/L} − V_f/R, which
// reaches zero at t = (L/R)·ln(1 + I₀·R/V_f) (source: textbook first-order RL decay with a
// constant opposing voltage, from memory). R is the coil's resistance plus the diode's `on`.
// The integrator's own event time is checked, on its own path (no closed form at all).
TEST_CASE("the integrator's flyback diode stops conducting at (L/R)·ln(1 + I0·R/Vf) after release",
          "[verify][diodes]") {
  const Circuit c = parse_netlist(R"(title "flyback decay"
supply: voltage-source p -> gnd, dc 24 V
coil_r: resistor p -> m, 240 ohm
coil_l: inductor m -> d, 500 mH
d_fly:  diode d -> p, forward 0.8 V, on 10 mohm
K1:     switch d -> gnd, opens at 10 ms
watch coil_l.i, @d
window 0 .. 30 ms
)",
                                  "flyback_decay.nf");
  const Schedule schedule = build_schedule(apply_scenario(c, {}), Window{0.0, 0.030, {}});
  const NumericalRun run = integrate_network(c, schedule, {}, c.watches(), IntegrateOptions{1e-11, 0.0, 5'000'000});
  INFO(run.message);
  REQUIRE(run.status == IntegrationStatus::ok);
  const double l = 0.5, r = 240.0 + 0.01, i0 = 24.0 / 240.0, vf = 0.8;
  const double expected = 0.010 + (l / r) * std::log(1.0 + i0 * r / vf);
  REQUIRE(count_kind(run, EventKind::diode_blocks) == 1);
  const auto blocks = std::find_if(run.events.begin(), run.events.end(),
                                   [](const ScheduledEvent& e) { return e.kind == EventKind::diode_blocks; });
  CHECK(blocks->time == Approx(expected).epsilon(1e-8));
}

// The numerical path's own periodic steady state with diodes: a half-wave rectifier running
// before t = 0 (no event until 30 ms) must repeat itself after one period from t = 0 on.
TEST_CASE("the integrator's periodic steady state of a rectifier repeats after one period", "[verify][diodes]") {
  const Circuit c = parse_netlist(R"(title "rectifier in steady state"
mains: voltage-source l -> gnd, cosine 12 V 50 Hz phase 30 deg
r_s: resistor l -> b, 1 ohm
d1: diode b -> p, forward 0.7 V, on 10 mohm
c1: capacitor p -> gnd, 470 uF
r_load: resistor p -> gnd, 100 ohm
K2: switch p -> q, closes at 30 ms
r_extra: resistor q -> gnd, 50 ohm
watch c1.v, d1.i
window 0 .. 40 ms
resolution 1 ms
)",
                                  "steady.nf");
  const Schedule schedule = build_schedule(apply_scenario(c, {}), c.window().value_or(Window{0.0, 0.04, {}}));
  const NumericalRun run = integrate_network(c, schedule, {}, c.watches(), IntegrateOptions{1e-11, 0.0, 5'000'000});
  INFO(run.message << " / " << run.initial_note);
  REQUIRE(run.status == IntegrationStatus::ok);
  CHECK(run.initial_method == InitialStateMethod::shooting);
  REQUIRE(run.times.size() > 21);
  REQUIRE(run.times[20] == Approx(0.020));
  const double v0 = run.values[0][0], v1 = run.values[0][20];
  CHECK(v0 > 10.0);  // charged near the 12 V peak less the drop
  CHECK(std::fabs(v1 - v0) <= 1e-8 * std::fabs(v0));
  // One conduction interval per period: it stops and starts again within the first period.
  CHECK(count_kind(run, EventKind::diode_blocks) >= 1);
  CHECK(count_kind(run, EventKind::diode_conducts) >= 1);
  // The shooting's own events before t = 0 are not the run's.
  for (const ScheduledEvent& e : run.events) CHECK(e.time >= 0.0);
}

TEST_CASE("the verify JSON lists the integrator's events with their elements and kinds", "[verify][diodes][report]") {
  const Circuit c = parse_netlist(kCurrentZero, "current_zero.nf");
  const Solution s = solve(c);
  const VerifyReport r = verify_closed_form(s);
  const nlohmann::json j = nlohmann::json::parse(verify_json(r, c));
  REQUIRE(j["events"].size() == 1);
  CHECK(j["events"][0]["element"] == "K1");
  CHECK(j["events"][0]["kind"] == "switch_opens");
  CHECK(j["events"][0]["time"].get<double>() == r.numerical.events.front().time);
  CHECK(j["closed_events"] == 1);
  CHECK(j["max_event_time_error"].get<double>() <= j["event_time_tolerance"].get<double>());
  CHECK(j["event_time_tolerance"].get<double>() == Approx(1e-6 * 0.060));
}
