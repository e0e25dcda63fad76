#pragma once
/// \file mna.hpp
/// Stage 2 of the pipeline: the modified nodal analysis (MNA) equations of the circuit in
/// one switch configuration,
///
///     G · x = B · u
///
/// x: unknowns — node voltages (V; the reference, pinned nodes and nodes whose voltage ideal
///    branches to the reference fix are excluded) then branch currents (A) of the elements
///    that need one (floating voltage sources, vcvs, ccvs, ideal closed switches, the
///    capacitor port, and elements whose current another element senses);
/// u: inputs — u[0 .. n−1] are the n storage elements' states in file order (capacitor voltage
///    in V, inductor current in A), u[n + k] the present value of the k-th independent source
///    (a circuit with no storage element keeps u[0] unused, so its sources start at u[1]);
///    a circuit with diodes has one more input after the sources, the constant 1 (unit_input),
///    which carries every conducting diode's forward drop or breakdown voltage;
/// G: the nodal matrix (S and dimensionless entries); B: how each input enters.
///
/// Every storage element is a port: a capacitor becomes a voltage source holding its state, an
/// inductor a current source driving its state. Within one configuration the network is
/// resistive, so every voltage and current is an exact linear function of u.

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include <Eigen/Dense>
#include <Eigen/SparseCore>

#include "netfold/netlist.hpp"

namespace netfold {

/// Which switches are closed: one flag per switch, in the order of Circuit::elements().
/// What a diode does in one configuration (spec v2, "State-dependent events").
enum class DiodeState : std::uint8_t {
  blocking,  ///< i = v/off, or 0 with the default open `off`
  forward,   ///< conducting: v = forward + on·i
  reverse,   ///< in breakdown: v = −breakdown + on·i (i < 0)
};

/// The configuration of the switching parts: one flag per switch and one state per diode, each
/// in the order of Circuit::elements().
struct SwitchPositions {
  std::vector<bool> closed;
  std::vector<DiodeState> diodes;
  bool operator==(const SwitchPositions& other) const { return closed == other.closed && diodes == other.diodes; }
};

/// The switch positions before t = 0 (each switch opposite to its first event; every diode
/// blocking, the first guess of the configuration search).
SwitchPositions positions_before_zero(const Circuit& circuit);

/// The independent sources, in element order; input u[n + k] is sources[k]'s value (n the
/// number of states, at least 1).
std::vector<ElementId> independent_sources(const Circuit& circuit);

/// How a storage element enters the equations.
enum class PortMode : std::uint8_t {
  port,  ///< as a source holding the state (the normal case)
  /// An inductor whose loop is open and whose current is therefore held at 0: its voltage
  /// L·di/dt is 0 too, so it becomes a 0 V branch (which also gives the isolated side a
  /// defined voltage); its current comes out of KCL as 0.
  held_at_zero,
};

/// Options of build_nodal_system.
struct BuildOptions {
  /// The mode of every storage element not given in `port_modes`.
  PortMode mode = PortMode::port;
  /// An extra ideal voltage source between two nodes (first = +), driven by an extra last
  /// input; used to find the Thevenin equivalent at any pair of nodes.
  std::optional<std::pair<NodeId, NodeId>> test_port;
  /// Per storage element (file order), where they differ from `mode`.
  std::vector<PortMode> port_modes;
  /// The mode of the k-th storage element.
  PortMode mode_of(std::size_t k) const;
};

/// A linear function of the unknowns and the inputs: y = Σ c_i·x_i + Σ d_j·u_j.
struct LinearForm {
  std::vector<std::pair<std::uint32_t, double>> unknowns;  ///< (index into x, coefficient)
  std::vector<std::pair<std::uint32_t, double>> inputs;    ///< (index into u, coefficient)
  /// False when the quantity has no defined value in this configuration (a floating node).
  bool defined = true;
};

/// Something structurally wrong with the network in one configuration, found before any
/// factorization. The engine turns it into a message in circuit terms.
struct TopologyProblem {
  enum class Kind : std::uint8_t {
    voltage_loop,      ///< a loop of ideal voltage sources / vcvs / closed ideal switches
    test_port_loop,    ///< the test port is in such a loop: the port is shorted (R_th = 0)
    capacitor_loop,    ///< a capacitor port is in such a loop: R_th = 0 (impulsive or dependent)
    current_cut_set,   ///< current sources are the only connection of a floating sub-network
    inductor_open,     ///< inductors are the only connection: their currents are forced (to 0 for one)
  };
  Kind kind = Kind::voltage_loop;
  std::vector<ElementId> elements;  ///< the loop, or the cut-set
  std::vector<NodeId> nodes;        ///< the floating sub-network (cut-sets)
};

/// The MNA system of one configuration.
class NodalSystem {
 public:
  /// Number of unknowns (rows of G).
  std::uint32_t unknown_count() const { return unknown_count_; }
  /// Number of inputs (columns of B): max(1, states) + number of independent sources.
  std::uint32_t input_count() const { return input_count_; }
  /// The nodal matrix G, column-major compressed.
  const Eigen::SparseMatrix<double>& matrix() const { return g_; }
  /// The input matrix B.
  const Eigen::SparseMatrix<double>& inputs() const { return b_; }
  /// A readable name of unknown i: "v(a)" or "i(K1)".
  std::string label(std::uint32_t i) const;
  /// Structural problems found while building (empty for a well-posed network).
  const std::vector<TopologyProblem>& problems() const { return problems_; }
  /// True when `node` belongs to a sub-network with no path to the reference.
  bool node_floating(NodeId node) const { return floating_[node]; }
  /// Index of the floating sub-network a node belongs to (0 = the reference's).
  std::uint32_t component_of(NodeId node) const { return component_[node]; }

  /// v(node) against the reference.
  LinearForm node_voltage(NodeId node) const;
  /// v(a) − v(b); defined when both nodes are on the same connected part.
  LinearForm node_difference(NodeId a, NodeId b) const;
  /// v(pos) − v(neg) of element `id`.
  LinearForm element_voltage(ElementId id) const;
  /// Current through element `id` from its first node to its second.
  LinearForm element_current(ElementId id) const;
  /// Number of states n (storage elements, every one a port).
  std::size_t state_count() const { return states_.size(); }
  /// The storage elements in state order (file order).
  const std::vector<ElementId>& state_elements() const { return states_; }
  /// Index of element `id`'s state in u, or kNone when it is no storage element.
  std::uint32_t state_input(ElementId id) const { return state_input_[id]; }
  /// The k-th storage element's mode.
  PortMode port_mode(std::size_t k) const { return port_modes_.at(k); }
  /// Index in u of the first source (n, at least 1).
  std::uint32_t first_source_input() const { return states_.empty() ? 1u : static_cast<std::uint32_t>(states_.size()); }
  /// The k-th storage element's port quantity: its current (capacitor) or voltage (inductor),
  /// C·dv/dt or L·di/dt.
  LinearForm port_quantity(std::size_t k = 0) const;
  /// Current through the test port from its first node to its second (see BuildOptions).
  LinearForm test_port_current() const;
  /// Index in u of the constant 1 that carries the diodes' drops (kNone without diodes).
  std::uint32_t unit_input() const { return unit_input_; }
  /// The state of diode `id` in this configuration.
  DiodeState diode_state(ElementId id) const { return positions_.diodes.at(diode_index_[id]); }
  /// The circuit this system was built from.
  const Circuit& circuit() const { return *circuit_; }
  /// The configuration this system was built for.
  const SwitchPositions& positions() const { return positions_; }
  /// Index of the test port's input in u (kNone without a test port).
  std::uint32_t test_port_input() const { return test_input_; }
  /// True when G is symmetric positive definite (resistors and grounded ideal sources
  /// only, after elimination): a Cholesky factorization applies.
  bool symmetric_positive_definite() const { return symmetric_positive_definite_; }
  /// True when the node's voltage is a fixed sum of inputs (eliminated from the unknowns).
  bool node_fixed(NodeId node) const { return fixed_index_[node] != kNone; }
  /// coef·(v(p) − v(q)) as a form (q may be kNone for v(p) alone).
  LinearForm voltage_form(NodeId p, NodeId q, double coef) const;
  /// G and B as their element stamps, unsummed (repeated positions add up), for residuals
  /// computed without the rounding of the assembled sums.
  const std::vector<Eigen::Triplet<double>>& matrix_stamps() const { return g_stamps_; }
  const std::vector<Eigen::Triplet<double>>& input_stamps() const { return b_stamps_; }
  /// Right-hand side B·u.
  Eigen::VectorXd right_hand_side(const Eigen::VectorXd& u) const { return b_ * u; }

 private:
  friend NodalSystem build_nodal_system(const Circuit&, const SwitchPositions&, const BuildOptions&);
  const Circuit* circuit_ = nullptr;
  std::vector<ElementId> states_;             ///< storage elements in state order
  std::vector<std::uint32_t> state_input_;    ///< per element: index into u, or kNone
  std::vector<PortMode> port_modes_;          ///< per state
  SwitchPositions positions_;
  std::uint32_t input_count_ = 1;
  std::uint32_t test_input_ = kNone;
  std::uint32_t unit_input_ = kNone;
  std::uint32_t test_branch_ = kNone;
  std::vector<std::uint32_t> node_unknown_;    ///< per node: index into x, or kNone (reference/pinned)
  std::vector<std::uint32_t> branch_unknown_;  ///< per element: index into x, or kNone
  std::vector<std::uint32_t> source_input_;    ///< per element: index into u, or kNone
  std::vector<std::uint32_t> switch_index_;    ///< per element: index into positions_, or kNone
  std::vector<std::uint32_t> diode_index_;     ///< per element: index into positions_.diodes, or kNone
  std::vector<bool> floating_;
  std::vector<std::uint32_t> component_;
  std::uint32_t unknown_count_ = 0;
  std::uint32_t node_unknown_count_ = 0;
  std::vector<ElementId> branch_owner_;        ///< element of each branch unknown, in order
  std::vector<TopologyProblem> problems_;
  std::vector<std::uint32_t> fixed_index_;    ///< per node: index into fixed_voltage_, or kNone (free)
  std::vector<LinearForm> fixed_voltage_;     ///< voltages of the fixed nodes as inputs (0: the reference)
  std::vector<std::uint32_t> tree_index_;     ///< per element: index into tree_currents_, or kNone
  std::vector<LinearForm> tree_currents_;     ///< currents of the eliminated ideal branches
  bool symmetric_positive_definite_ = false;
  Eigen::SparseMatrix<double> g_;
  Eigen::SparseMatrix<double> b_;
  std::vector<Eigen::Triplet<double>> g_stamps_;
  std::vector<Eigen::Triplet<double>> b_stamps_;

  LinearForm sensed_current(ElementId id) const;
  bool switch_closed(ElementId id) const;
};

/// Assembles G and B for `positions` (stamps through triplets), classifying the topology
/// first: floating sub-networks are pinned (one node held at 0 V) so that G stays
/// regular, and voltage loops / current cut-sets are recorded in problems().
/// The circuit must outlive the returned system.
NodalSystem build_nodal_system(const Circuit& circuit, const SwitchPositions& positions,
                               const BuildOptions& options = {});

/// Sorts a form's terms, merging repeated indices where their sum is exact, and drops zeros.
void compact(LinearForm& form);

/// An observable as linear forms of one configuration: its value is `value`, or the product
/// value·current for a power (`X.p` = v·i, with `value` the voltage).
struct ObservableForm {
  LinearForm value;                   ///< the observable itself, or the voltage of a power
  std::optional<LinearForm> current;  ///< powers only: the current factor
  /// False when the observable has no value in this configuration (a floating part).
  bool defined() const { return value.defined && (!current || current->defined); }
};

/// The one definition of every observable kind (`@n`, `@a - @b`, `X.v`, `X.i`, `X.p`) as
/// linear forms of `system`'s unknowns and inputs. Every path that evaluates an observable
/// from the nodal equations — the closed form, CSV, claims, worst case, equivalents — goes
/// through it.
ObservableForm observable_form(const NodalSystem& system, const Observable& observable);

/// Values of every input at time t for one storage element: u[0] = state, u[1 + k] = source
/// k's waveform at t.
Eigen::VectorXd input_values(const Circuit& circuit, const std::vector<ElementId>& sources,
                             double t, double state);

}  // namespace netfold
