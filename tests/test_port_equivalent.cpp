// Tests of the Thevenin/Norton equivalent at a port (reduce stage, `equiv`): known answers of
// resistive dividers, the short and open cases, and the refusals.
#include <cmath>
#include <utility>

#include "engine_helpers.hpp"
#include "netfold/diagnostics.hpp"
#include "netfold/port_equivalent.hpp"

using namespace netfold;
using namespace netfold::testing;

TEST_CASE("a divider's equivalent at its middle node is R1 parallel R2 behind the divided voltage", "[reduce][equiv]") {
  // source: Thevenin's theorem, divider V·R2/(R1+R2) behind R1·R2/(R1+R2) (common practice, no source)
  auto s = solve_text(
      "supply: voltage-source a -> gnd, dc 12 V\n"
      "r1: resistor a -> m, 3 kohm\nr2: resistor m -> gnd, 1 kohm\n"
      "load: resistor m -> c, 10 kohm\nhold: capacitor c -> gnd, 1 uF\n"
      "window 0 .. 1 ms\n");
  const Circuit& c = *s.circuit;
  PortEquivalent eq = port_equivalent(*s, std::make_pair(*c.find_node("m"), c.ground()), 0.5e-3);
  // The capacitor (held at v_C) drives the middle node through the 10 kΩ load as well.
  const double vc = s->value(observable(s, "hold.v"), 0.5e-3);
  const double rth = 1.0 / (1.0 / 3e3 + 1.0 / 1e3 + 1.0 / 10e3);
  CHECK_REL(eq.rth, rth, 1e-12);
  CHECK_REL(eq.gth, 1.0 / rth, 1e-12);
  CHECK_REL(eq.voc.dc, rth * (12.0 / 3e3 + vc / 10e3), 1e-12);
  CHECK_REL(eq.isc.dc, 12.0 / 3e3 + vc / 10e3, 1e-12);
  CHECK_FALSE(eq.at_storage);
  CHECK(eq.port == "m,gnd");
}

TEST_CASE("the equivalent at the storage element is the segment's own", "[reduce][equiv]") {
  // source: R_th seen by the capacitor = 3 kΩ ∥ 1 kΩ = 750 Ω, v_oc = 12·1/4 = 3 V (divider, common practice)
  auto s = solve_text(
      "supply: voltage-source a -> gnd, dc 12 V\n"
      "r1: resistor a -> m, 3 kohm\nr2: resistor m -> gnd, 1 kohm\nhold: capacitor m -> gnd, 1 uF, initial 0 V\n"
      "window 0 .. 1 ms\n");
  PortEquivalent eq = port_equivalent(*s, std::nullopt, 0.2e-3);
  CHECK(eq.at_storage);
  CHECK(eq.port == "hold");
  CHECK_REL(eq.rth, 750.0, 1e-12);
  CHECK_REL(eq.voc.dc, 3.0, 1e-12);
  CHECK_REL(eq.state_value, 3.0 * -std::expm1(-0.2e-3 / 750e-6), 1e-9);
}

TEST_CASE("a port shorted by an ideal source has R_th = 0 and no Norton current", "[reduce][equiv]") {
  auto s = solve_text(
      "supply: voltage-source a -> gnd, dc 5 V\nr1: resistor a -> b, 1 kohm\nhold: capacitor b -> gnd, 1 uF\n"
      "window 0 .. 1 ms\n");
  const Circuit& c = *s.circuit;
  PortEquivalent eq = port_equivalent(*s, std::make_pair(*c.find_node("a"), c.ground()), 0.0);
  CHECK(eq.rth == 0.0);
  CHECK(std::isinf(eq.gth));
  CHECK_FALSE(eq.isc_defined);
  CHECK_REL(eq.voc.dc, 5.0, 1e-12);
}

TEST_CASE("a port that names one node twice, or no port in a circuit without storage, is refused", "[reduce][equiv]") {
  auto s = solve_text("supply: voltage-source a -> gnd, dc 5 V\nr1: resistor a -> gnd, 1 kohm\nwindow 0 .. 1 ms\n");
  const Circuit& c = *s.circuit;
  CHECK_THROWS_AS(port_equivalent(*s, std::make_pair(*c.find_node("a"), *c.find_node("a")), 0.0), InputError);
  CHECK_THROWS_AS(port_equivalent(*s, std::nullopt, 0.0), InputError);
}
