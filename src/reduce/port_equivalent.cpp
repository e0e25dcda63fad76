#include "netfold/port_equivalent.hpp"

#include <cstdint>
#include <utility>
#include <vector>

#include <fmt/format.h>

#include "netfold/diagnostics.hpp"
#include "netfold/mna.hpp"
#include "netfold/reduce.hpp"
#include "netfold/units.hpp"
#include "response/modal.hpp"

namespace netfold {

namespace {

// The storage element is held at its value at --at, so it adds a constant share to both the
// open-circuit voltage and the short-circuit current at the port: i_sc is the current that
// really flows in a short between the two nodes (the element's discharge included).
PortEquivalent hold_state(PortEquivalent eq) {
  if (eq.voc_defined) eq.voc.dc += eq.state_coefficient * eq.state_value;
  if (eq.isc_defined) eq.isc.dc += eq.isc_state_coefficient * eq.state_value;
  return eq;
}

// The drive of an input combination k at the port. With several storage elements each state is
// held at its value at `at` (a constant share), the sources start at input n; with one, the
// state's share is added by hold_state and Solution::drive_of reads the sources.
Drive port_drive(const Solution& sol, const std::vector<double>& k, const Segment& seg, double at) {
  if (!sol.modal_path()) return sol.drive_of(k, seg);
  const std::size_t n = sol.storage_elements().size();
  const Eigen::VectorXd x = seg.modal->value(at);
  Drive d;
  for (std::size_t i = 0; i < n; ++i) d.dc += k.at(i) * x(static_cast<Eigen::Index>(i));
  for (std::size_t j = 0; j < sol.sources().size(); ++j) {
    const double coef = k.at(n + j);
    if (coef == 0.0) continue;
    const Waveform& w = sol.applied().waveform(sol.sources()[j]);
    d.dc += coef * w.level_at(seg.from);
    for (const auto& sn : w.sinusoids) d.add_phasor(sn.frequency, coef * std::polar(sn.amplitude, sn.phase));
  }
  // The diodes' drops ride on the unit input (the constant 1) after the sources.
  const std::uint32_t unit = seg.network ? seg.network->system().unit_input() : kNone;
  if (unit != kNone) d.dc += k.at(unit);
  return d;
}

// The state's coefficient for hold_state: none with several (port_drive holds them already).
double state_share(const Solution& sol, const std::vector<double>& k) { return sol.modal_path() ? 0.0 : k[0]; }

// The storage element's own terminals: the segment's equivalent as solved.
PortEquivalent at_storage(const Solution& sol, PortEquivalent eq) {
  if (sol.modal_path())
    throw argument_error("equiv", "the circuit has several storage elements, so there is no single equivalent at "
                                  "one of them; name a port with --port A,B");
  if (sol.storage() == kNone)
    throw argument_error("equiv", "the circuit has no capacitor or inductor; name a port with --port A,B");
  const Segment& seg = *eq.segment;
  const Element& st = sol.circuit().element(sol.storage());
  eq.port = st.name;
  eq.node_a = st.pos;
  eq.node_b = st.neg;
  eq.rth = seg.equivalent.rth;
  eq.voc = seg.voc;
  eq.isc = seg.isc;
  eq.voc_defined = seg.voc_defined;
  eq.isc_defined = seg.isc_defined;
  eq.state_value = seg.state.value(eq.at);
  return eq;
}

void check_port(const Solution& sol, const Segment& seg, NodeId a, NodeId b) {
  const Circuit& c = sol.circuit();
  if (a == b) throw argument_error("--port", fmt::format("the port names node '{}' twice; give two different nodes", c.nodes()[a]));
  const NodalSystem& plain = sol.network(seg).system();
  for (NodeId n : {a, b})
    if (plain.node_floating(n))
      throw argument_error("--port", fmt::format("node '{}' is not connected to the rest of the network in segment {} "
                                                 "(from {}); choose a connected node",
                                                 c.nodes()[n], seg.number, format_si(seg.from, "s", 4)));
}

// v_oc as the plain network's node difference (the test current is zero or not defined).
PortEquivalent open_voltage(const Solution& sol, PortEquivalent eq) {
  const Segment& seg = *eq.segment;
  const NodalSystem& plain = sol.network(seg).system();
  std::vector<double> kv = sol.network(seg).coefficients(plain.node_difference(eq.node_a, eq.node_b));
  eq.voc = port_drive(sol, kv, seg, eq.at);
  eq.state_coefficient = state_share(sol, kv);
  return eq;
}

// Two nodes: a test source between them, and the network reduced once more with it.
PortEquivalent between_nodes(const Solution& sol, PortEquivalent eq, std::pair<NodeId, NodeId> port) {
  const Circuit& c = sol.circuit();
  const Segment& seg = *eq.segment;
  auto [a, b] = port;
  eq.at_storage = false;
  eq.node_a = a;
  eq.node_b = b;
  eq.port = c.nodes()[a] + "," + c.nodes()[b];
  check_port(sol, seg, a, b);
  eq.state_value = sol.modal_path() ? 0.0 : seg.state.value(eq.at);
  BuildOptions options;
  options.mode = seg.mode;
  // The same storage modes as the segment's network (an inductor held at zero stays so).
  for (std::size_t i = 0; i < sol.storage_elements().size(); ++i)
    options.port_modes.push_back(sol.network(seg).system().port_mode(i));
  options.test_port = port;
  ReducedNetwork tested(c, seg.positions, options);
  bool shorted = false;
  for (const auto& p : tested.system().problems()) shorted |= p.kind == TopologyProblem::Kind::test_port_loop;
  if (shorted) {
    // An ideal branch already joins the two nodes: R_th = 0, v_oc is that branch's voltage.
    eq.rth = 0.0;
    eq.isc_defined = false;
    return hold_state(open_voltage(sol, eq));
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
    if (!driven) return hold_state(open_voltage(sol, eq));  // i_sc = 0
    // Current sources push into an open port: its voltage is unbounded, a short's current is not.
    eq.voc_defined = false;
    eq.isc = port_drive(sol, k, seg, eq.at);
    eq.isc_state_coefficient = state_share(sol, k);
    return hold_state(eq);
  }
  eq.isc = port_drive(sol, k, seg, eq.at);
  eq.isc_state_coefficient = state_share(sol, k);
  eq.rth = -1.0 / ktt;
  std::vector<double> kv = k;
  for (double& v : kv) v = -v / ktt;
  eq.voc = port_drive(sol, kv, seg, eq.at);
  eq.state_coefficient = state_share(sol, kv);
  return hold_state(eq);
}

}  // namespace

PortEquivalent port_equivalent(const Solution& sol, std::optional<std::pair<NodeId, NodeId>> port, double at) {
  PortEquivalent eq;
  eq.at = at;
  eq.segment = &sol.segment_at(at);
  eq = port ? between_nodes(sol, std::move(eq), *port) : at_storage(sol, std::move(eq));
  eq.gth = eq.rth == 0.0 ? kInfinity : 1.0 / eq.rth;
  return eq;
}

}  // namespace netfold
