#pragma once
/// \file port_equivalent.hpp
/// Stage "reduce", seen from outside the storage element: the Thevenin/Norton equivalent of
/// the network at a port (the storage element's own terminals, or any two nodes) in the
/// segment that holds a chosen time, for `equiv`. At two nodes a test source is added between
/// them and the reduced network solved once for it (ReducedNetwork with
/// BuildOptions::test_port): R_th = −1/k_tt from the test current's own coefficient, v_oc and
/// i_sc from the others; the storage element is held at its value at that time.
///
/// It reads a solved Solution (the segment, its state and its drive), so it comes after the
/// closed form in the pipeline even though the arithmetic is the reduce stage's.

#include <optional>
#include <string>
#include <utility>

#include "netfold/closed_form.hpp"
#include "netfold/netlist.hpp"
#include "netfold/solve.hpp"

namespace netfold {

/// A Thevenin/Norton equivalent at a port, for `equiv`.
struct PortEquivalent {
  std::string port;            ///< "coil_l" or "a,b"
  NodeId node_a = kNone, node_b = kNone;  ///< the port's nodes, + then −
  const Segment* segment = nullptr;       ///< the segment holding `at` (owned by the Solution)
  double rth = 0.0;            ///< ohm (may be ∞ or 0)
  double gth = 0.0;            ///< S: 1/R_th (∞ when R_th = 0, 0 when R_th = ∞)
  Drive voc;                   ///< DC + phasors, V
  Drive isc;                   ///< A
  bool voc_defined = true;     ///< false when current sources drive an open port (R_th = ∞)
  bool isc_defined = true;     ///< false when an ideal branch shorts the port (R_th = 0)
  /// v_oc's share of the storage state, V per V or V per A; voc.dc includes it times state_value.
  double state_coefficient = 0.0;
  /// i_sc's share of the storage state, A per V or A per A; isc.dc includes it times state_value.
  double isc_state_coefficient = 0.0;
  double state_value = 0.0;        ///< the state at the chosen time, held for the equivalent
  double at = 0.0;                 ///< the chosen time
  bool at_storage = true;          ///< the port is the storage element's own terminals
};

/// The equivalent at the storage element (port empty) or between two nodes, in the segment
/// holding `at`. Throws InputError for a port that is not connected or names one node twice,
/// or when no port is named and the circuit has no storage element.
PortEquivalent port_equivalent(const Solution& solution, std::optional<std::pair<NodeId, NodeId>> port, double at);

}  // namespace netfold
