// Tests of diodes and of contacts that act at a current or voltage zero (spec v2, "State-dependent
// events") in the closed form: event times against textbook formulas, the consistent
// configuration, the periodic steady state before t = 0, and the errors in circuit terms.
#include <algorithm>
#include <cmath>
#include <memory>
#include <numbers>
#include <string>

#include <catch2/catch.hpp>

#include "netfold/parse.hpp"
#include "netfold/solve.hpp"
#include "netfold/verify.hpp"
#include "response/test_seams.hpp"

using namespace netfold;

namespace {
constexpr double kPi = std::numbers::pi;

struct Solved {
  std::unique_ptr<Circuit> circuit;
  std::unique_ptr<Solution> solution;
  const Solution* operator->() const { return solution.get(); }
};

Solved solve_text(const std::string& text) {
  Solved s;
  s.circuit = std::make_unique<Circuit>(parse_netlist(text, "test.nf"));
  s.solution = std::make_unique<Solution>(solve(*s.circuit));
  return s;
}

double value(const Solved& s, const std::string& obs, double t) {
  return s->value(parse_observable_argument(*s.circuit, obs, "test"), t);
}

// The times of the solved events of one kind on one element, in order.
std::vector<double> event_times(const Solved& s, const std::string& element, EventKind kind) {
  std::vector<double> out;
  const ElementId id = *s.circuit->find_element(element);
  for (const auto& ev : s->schedule().events)
    if (ev.element == id && ev.kind == kind) out.push_back(ev.time);
  return out;
}

std::string solve_error(const std::string& text) {
  try {
    solve_text(text);
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

#define CHECK_REL(actual, expected, rel)                                   \
  do {                                                                     \
    const double a_ = (actual), e_ = (expected);                           \
    INFO("actual " << a_ << ", expected " << e_ << ", rel tol " << (rel)); \
    CHECK(std::fabs(a_ - e_) <= (rel) * std::fabs(e_));                    \
  } while (0)
}  // namespace

TEST_CASE("a flyback diode ends a coil's current at t = (L/R)·ln(1 + I0·R/Vf)", "[solve][diode]") {
  // Source: a coil L, R freewheeling through a diode of drop Vf (on = 0) obeys
  // L·di/dt = −R·i − Vf, so i reaches 0 at t = (L/R)·ln(1 + I0·R/Vf) (textbook, from memory).
  const double L = 0.5, R = 100.0, V = 24.0, Vf = 0.7, I0 = V / R;
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 24 V\nK1: switch a -> b, opens at 10 ms\n"
      "coil_r: resistor b -> c, 100 ohm\ncoil_l: inductor c -> gnd, 500 mH\n"
      "d1: diode gnd -> b, forward 0.7 V\nwindow 0 .. 40 ms\n");
  const auto blocks = event_times(s, "d1", EventKind::diode_blocks);
  REQUIRE(blocks.size() == 1);
  CHECK_REL(blocks.front() - 10e-3, (L / R) * std::log(1.0 + I0 * R / Vf), 1e-12);
  // While it freewheels the diode carries the coil's current; afterwards nothing flows.
  CHECK_REL(value(s, "d1.i", 10e-3 + 1e-6), I0 * std::exp(-1e-6 * R / L) - Vf / R * (1 - std::exp(-1e-6 * R / L)),
            1e-9);
  CHECK(std::fabs(value(s, "coil_l.i", 30e-3)) < 1e-15);
}

TEST_CASE("a diode and a zener release a coil faster: t = (L/R)·ln(1 + I0·R/(Vf + Vz)) ≈ L·I0/(Vf + Vz)",
          "[solve][diode]") {
  // Source: with a zener of Vz in series the clamp is Vf + Vz: L·di/dt = −R·i − (Vf + Vz), so
  // t = (L/R)·ln(1 + I0·R/(Vf + Vz)), about L·I0/(Vz + Vf) when Vz ≫ I0·R (textbook, from memory;
  // the approximation is the first term of ln(1 + x) ≈ x, about x/2 = 3 % off at x = 0.06). The
  // zener's current reaches zero at that time; then the 90 MΩ of its leaks take the coil's last
  // nanoamperes within a few of their L/R = 5.5 ns, and d1 stops.
  const double L = 0.5, R = 100.0, V = 12.0, Vf = 0.7, Vz = 200.0, I0 = V / R;
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 12 V\nK1: switch a -> b, opens at 10 ms\n"
      "coil_r: resistor b -> c, 100 ohm\ncoil_l: inductor c -> gnd, 500 mH\n"
      "d1: diode m -> b, forward 0.7 V\nz1: diode m -> gnd, breakdown 200 V, off 100 Mohm\n"
      "d1_leak: resistor m -> gnd, 1 Gohm\nwindow 0 .. 20 ms\n");
  const auto blocks = event_times(s, "z1", EventKind::diode_blocks);
  REQUIRE(!blocks.empty());
  const double exact = (L / R) * std::log(1.0 + I0 * R / (Vf + Vz));
  // The 1 GΩ leak takes 0.2 µA of the clamp current: the zener stops that much early, 0.2 µA ÷
  // 401 A/s = 0.5 ns, 1.7e-6 of the time.
  CHECK_REL(blocks.front() - 10e-3, exact, 1e-5);
  const auto d1_blocks = event_times(s, "d1", EventKind::diode_blocks);
  REQUIRE(d1_blocks.size() == 1);
  CHECK(d1_blocks.front() - blocks.front() < 20 * 5.5e-9);
  CHECK_REL(blocks.front() - 10e-3, L * I0 / (Vf + Vz), 0.04);
  // The flyback with the zener ends faster than with the diode alone (ln(1 + 2.4/0.7) ≫ 0.0687).
  CHECK(blocks.front() - 10e-3 < 0.1 * (L / R) * std::log(1.0 + I0 * R / Vf));
  // The breakdown was entered when the contact opened.
  CHECK(value(s, "z1.i", 10e-3 + 1e-7) < -0.1);
}

TEST_CASE("a capacitor disconnected at a current zero keeps the peak of its steady-state voltage",
          "[solve][switch-zero]") {
  // Source: common practice, no source — the current of a capacitor is C·dv/dt, so it is zero
  // where the capacitor's voltage is at its crest; a contact that breaks at a current zero leaves
  // the crest on it. The crest of the steady state is |V|/√(1 + (ωRC)²).
  const double V = 325.0, f = 50.0, R = 1.0, C = 10e-6;
  auto s = solve_text(
      "mains: voltage-source l -> gnd, cosine 325 V 50 Hz\n"
      "K1: switch l -> a, opens at current zero after 5 ms\nr1: resistor a -> b, 1 ohm\n"
      "c1: capacitor b -> gnd, 10 uF\nwindow 0 .. 40 ms\n");
  const auto opens = event_times(s, "K1", EventKind::switch_opens);
  REQUIRE(opens.size() == 1);
  CHECK(opens.front() >= 5e-3);
  CHECK(opens.front() < 5e-3 + 1.0 / (2 * f) + 1e-9);  // within half a cycle
  const double crest = V / std::sqrt(1.0 + std::pow(2 * kPi * f * R * C, 2));
  CHECK_REL(std::fabs(value(s, "c1.v", 30e-3)), crest, 1e-9);
  CHECK(std::fabs(value(s, "K1.i", opens.front())) < 1e-9);
}

TEST_CASE("an inductive load broken at a current zero has no voltage spike; an ideal contact has one",
          "[solve][switch-zero]") {
  // Source: common practice, no source — a contact whose arc carries the current to its zero
  // leaves no stored energy in the coil, so nothing drives a spike; breaking at the crest of the
  // current forces L·di/dt through the contact's off resistance.
  const std::string body =
      "mains: voltage-source l -> gnd, cosine 325 V 50 Hz\nload_r: resistor a -> b, 10 ohm\n"
      "load_l: inductor b -> gnd, 100 mH\nwindow 0 .. 60 ms\n";
  auto real = solve_text(body + "K1: switch l -> a, closes at 0 s, opens at current zero after 30 ms, off 100 kohm\n");
  auto ideal = solve_text(body + "K1: switch l -> a, closes at 0 s, opens at 30 ms, off 100 kohm\n");
  const Observable k1v = parse_observable_argument(*real.circuit, "K1.v", "test");
  const double spike_real = compute_figures(*real.solution, k1v).peak;
  const double spike_ideal = compute_figures(*ideal.solution, parse_observable_argument(*ideal.circuit, "K1.v", "test")).peak;
  CHECK(spike_real <= 325.0 * (1 + 1e-9));  // no more than the supply's own crest across the gap
  CHECK(spike_ideal > 10.0 * 325.0);        // the ideal break drives the coil's current into 100 kΩ
  const auto opens = event_times(real, "K1", EventKind::switch_opens);
  REQUIRE(opens.size() == 1);
  CHECK(std::fabs(value(real, "load_l.i", opens.front())) < 1e-9);
}

TEST_CASE("a zero-crossing contact closes at the first zero of the voltage across it", "[solve][switch-zero]") {
  // Source: the closing instant of cos(ωt) after T is the next t with ωt = π/2 + kπ (the voltage
  // across an open contact in series with a resistive load is the supply's).
  auto s = solve_text(
      "mains: voltage-source l -> gnd, cosine 10 V 50 Hz\n"
      "K1: switch l -> a, closes at voltage zero after 7 ms\nload: resistor a -> gnd, 10 ohm\n"
      "r_s: resistor a -> b, 1 ohm\nc1: capacitor b -> gnd, 1 uF\nwindow 0 .. 40 ms\n");
  const auto closes = event_times(s, "K1", EventKind::switch_closes);
  REQUIRE(closes.size() == 1);
  CHECK_REL(closes.front(), 15e-3, 1e-12);  // the zeros of cos(2π·50·t) are at 5, 15, 25 ms
}

TEST_CASE("a half-wave rectifier's periodic steady state before t = 0 repeats after one period",
          "[solve][diode]") {
  // Source: the definition of the periodic steady state (spec v2): x(T) = x(0).
  auto s = solve_text(
      "mains: voltage-source l -> gnd, cosine 10 V 50 Hz\nr_s: resistor l -> b, 1 ohm\n"
      "d1: diode b -> p, forward 0.7 V, on 10 mohm\nc1: capacitor p -> gnd, 1000 uF\n"
      "r_l: resistor p -> gnd, 100 ohm\nwindow 0 .. 20 ms\n");
  const double x0 = s->initial_states().at(0);
  CHECK(x0 > 5.0);  // charged near the crest less the drop
  CHECK_REL(value(s, "c1.v", 20e-3), x0, 1e-11);
  // One charging pulse per period, so one turn-on and one turn-off within it.
  CHECK(event_times(s, "d1", EventKind::diode_conducts).size() == 1);
  CHECK(event_times(s, "d1", EventKind::diode_blocks).size() == 1);
}

TEST_CASE("a bridge rectifier's diodes conduct in pairs and never backwards", "[solve][diode]") {
  auto s = solve_text(
      "mains: voltage-source l -> gnd, cosine 325 V 50 Hz\nK1: switch l -> a, closes at 0 s\n"
      "r_in: resistor a -> c, 4.7 ohm\n"
      "d1: diode c -> p, forward 0.9 V, on 20 mohm, off 10 Mohm\nd2: diode m -> c, forward 0.9 V, on 20 mohm, off 10 Mohm\n"
      "d3: diode gnd -> p, forward 0.9 V, on 20 mohm, off 10 Mohm\nd4: diode m -> gnd, forward 0.9 V, on 20 mohm, off 10 Mohm\n"
      "bulk: capacitor p -> m, 220 uF\nload: resistor p -> m, 1 kohm\nwindow 0 .. 100 ms\n");
  for (const auto& seg : s->segments()) {
    const auto& d = seg.positions.diodes;
    // d1 with d4 (positive half-cycle) or d2 with d3; never two of one leg.
    CHECK(!(d[0] == DiodeState::forward && d[1] == DiodeState::forward));
    CHECK(!(d[2] == DiodeState::forward && d[3] == DiodeState::forward));
    const double mid = 0.5 * (seg.from + seg.to);
    for (const char* name : {"d1.i", "d2.i", "d3.i", "d4.i"}) {
      INFO(name << " at " << mid);
      CHECK(value(s, name, mid) > -1e-3);  // a blocking diode leaks at most 325 V / 10 MΩ
    }
  }
  // The bulk capacitor ends charged near the crest less two drops.
  const double v_end = value(s, "bulk.v", 100e-3);
  CHECK(v_end > 250.0);
  CHECK(v_end < 325.0 - 1.8);
}

TEST_CASE("blocking diodes with no off resistance that leave a part floating are an error asking for one",
          "[solve][diode][error]") {
  const std::string msg = solve_error(
      "mains: voltage-source l -> gnd, cosine 325 V 50 Hz\nK1: switch l -> a, closes at 0 s\n"
      "r_in: resistor a -> c, 4.7 ohm\n"
      "d1: diode c -> p, forward 0.9 V\nd2: diode m -> c, forward 0.9 V\n"
      "d3: diode gnd -> p, forward 0.9 V\nd4: diode m -> gnd, forward 0.9 V\n"
      "bulk: capacitor p -> m, 220 uF\nload: resistor p -> m, 1 kohm\nwindow 0 .. 40 ms\n");
  INFO(msg);
  CHECK(msg.find("'off' resistance") != std::string::npos);
  CHECK(msg.find("test.nf:") == 0);
}

TEST_CASE("a diode on DC with nothing to switch it conducts or blocks from t = 0 as the DC state says",
          "[solve][diode]") {
  // Source: Ohm's law — (12 V − 0.6 V)/(1 kΩ + 1 Ω) through the forward diode; the reversed one
  // carries nothing.
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 12 V\nr1: resistor a -> b, 1 kohm\nd1: diode b -> gnd, forward 0.6 V, on 1 ohm\n"
      "r2: resistor a -> c, 1 kohm\nd2: diode gnd -> c, forward 0.6 V, off 1 Gohm\nr3: resistor a -> e, 1 ohm\n"
      "c1: capacitor e -> gnd, 1 uF\n"
      "window 0 .. 1 ms\n");
  CHECK_REL(value(s, "d1.i", 0.5e-3), 11.4 / 1001.0, 1e-12);
  CHECK_REL(value(s, "d2.v", 0.5e-3), -12.0 * 1e9 / (1e9 + 1e3), 1e-12);
  CHECK(s->schedule().events.empty());
}

TEST_CASE("diodes work with several storage elements: an LC-filtered rectifier agrees with the integrator",
          "[solve][diode][states]") {
  // Source: the independent CVODE integration of the full nodal equations with its own root
  // finding (verify.hpp), which reads the circuit alone.
  auto s = solve_text(
      "mains: voltage-source l -> gnd, cosine 24 V 50 Hz\nK1: switch l -> a, closes at 2 ms\n"
      "r_s: resistor a -> b, 500 mohm\nd1: diode b -> c, forward 0.7 V, on 20 mohm, off 10 Mohm\n"
      "l_f: inductor c -> p, 2 mH\nc_f: capacitor p -> gnd, 470 uF\nr_load: resistor p -> gnd, 47 ohm\n"
      "watch l_f.i, c_f.v, d1.i\nwindow 0 .. 60 ms\n");
  REQUIRE(s->storage_elements().size() == 2);
  CHECK(!event_times(s, "d1", EventKind::diode_blocks).empty());
  const VerifyReport r = verify_closed_form(*s.solution);
  INFO(r.message);
  CHECK(r.passed);
  CHECK(r.max_event_time_error <= 1e-9);
}

TEST_CASE("a march whose events come ever closer together (a sliding mode) is refused as chattering, promptly",
          "[solve][diode][error]") {
  // The zener dropper of netlists/ with every time constant 1 % off (the cross-check's fault
  // seam): the states no longer agree with the clamp's threshold, and the closed form slides
  // along it with events nanoseconds apart. Before, the march followed millions of them.
  const std::string text =
      "ground n\nmains: voltage-source l -> n, cosine 230 Vrms 50 Hz\nplug: switch l -> a, closes at 0 s\n"
      "r_s: resistor a -> b, 100 ohm\nc_drop: capacitor b -> x, 470 nF\n"
      "z1: diode n -> x, forward 0.7 V, breakdown 12 V, on 1 ohm, off 10 Mohm\n"
      "d2: diode x -> out, forward 0.7 V, on 100 mohm, off 10 Mohm\n"
      "c_res: capacitor out -> n, 220 uF\nload: resistor out -> n, 1 kohm\nwindow 0 .. 400 ms\n";
  CHECK_NOTHROW(solve_text(text));
  seams::ScopedFaults fault({.tau_scale = 1.01});
  const std::string msg = solve_error(text);
  INFO(msg);
  CHECK(msg.find("chattering") != std::string::npos);
  CHECK(msg.find("z1") != std::string::npos);
  CHECK(msg.find("test.nf:") == 0);
}
