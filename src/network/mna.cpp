#include "netfold/mna.hpp"

#include <algorithm>
#include <cmath>
#include <deque>
#include <unordered_map>
#include <numeric>

namespace netfold {

namespace {

class DisjointSets {
 public:
  explicit DisjointSets(std::size_t n) : parent_(n) { std::iota(parent_.begin(), parent_.end(), 0u); }
  std::uint32_t find(std::uint32_t x) {
    while (parent_[x] != x) {
      parent_[x] = parent_[parent_[x]];
      x = parent_[x];
    }
    return x;
  }
  /// Returns false when a and b were already joined.
  bool join(std::uint32_t a, std::uint32_t b) {
    a = find(a);
    b = find(b);
    if (a == b) return false;
    parent_[std::max(a, b)] = std::min(a, b);
    return true;
  }

 private:
  std::vector<std::uint32_t> parent_;
};

/// How an element connects its two nodes in one configuration.
enum class Edge : std::uint8_t {
  none,        ///< open: no connection
  resistive,   ///< a finite, non-zero impedance (defines a voltage relation)
  stiff,       ///< an ideal voltage branch: fixes v(pos) − v(neg) with zero impedance
  soft,        ///< a voltage branch that may carry impedance through its control (ccvs)
  current,     ///< fixes the current, not the voltage (current sources, vccs, cccs, inductor port)
};

Edge edge_of(const Element& e, bool is_port, PortMode mode, bool closed, DiodeState diode) {
  switch (e.kind) {
    case ElementKind::resistor: return Edge::resistive;
    case ElementKind::capacitor: return is_port ? Edge::stiff : Edge::none;
    case ElementKind::inductor:
      if (!is_port) return Edge::none;
      return mode == PortMode::port ? Edge::current : Edge::stiff;
    case ElementKind::voltage_source: return Edge::stiff;
    case ElementKind::vcvs: return Edge::stiff;
    case ElementKind::ccvs: return Edge::soft;
    case ElementKind::current_source:
    case ElementKind::vccs:
    case ElementKind::cccs: return Edge::current;
    case ElementKind::switch_:
      if (closed) return e.r_on > 0.0 ? Edge::resistive : Edge::stiff;
      return std::isfinite(e.r_off) ? Edge::resistive : Edge::none;
    case ElementKind::diode:
      // Conducting: a voltage branch (v = drop + on·i), stiff when `on` is 0 so that loops it
      // closes are found; blocking: its `off` resistance, or open.
      if (diode != DiodeState::blocking) return e.r_on > 0.0 ? Edge::soft : Edge::stiff;
      return std::isfinite(e.r_off) ? Edge::resistive : Edge::none;
  }
  return Edge::none;
}

}  // namespace

SwitchPositions positions_before_zero(const Circuit& circuit) {
  SwitchPositions p;
  for (const auto& e : circuit.elements())
    if (e.kind == ElementKind::switch_) p.closed.push_back(e.closed_before_zero());
    else if (e.kind == ElementKind::diode) p.diodes.push_back(DiodeState::blocking);
  return p;
}

std::vector<ElementId> independent_sources(const Circuit& circuit) {
  std::vector<ElementId> ids;
  for (ElementId i = 0; i < circuit.elements().size(); ++i)
    if (is_independent_source(circuit.elements()[i].kind)) ids.push_back(i);
  return ids;
}

Eigen::VectorXd input_values(const Circuit& circuit, const std::vector<ElementId>& sources, double t,
                             double state) {
  Eigen::VectorXd u(static_cast<Eigen::Index>(1 + sources.size()));
  u[0] = state;
  for (std::size_t k = 0; k < sources.size(); ++k)
    u[static_cast<Eigen::Index>(k + 1)] = circuit.elements()[sources[k]].waveform.value_at(t);
  return u;
}

PortMode BuildOptions::mode_of(std::size_t k) const { return k < port_modes.size() ? port_modes[k] : mode; }

bool NodalSystem::switch_closed(ElementId id) const { return positions_.closed.at(switch_index_[id]); }

NodalSystem build_nodal_system(const Circuit& circuit, const SwitchPositions& positions, const BuildOptions& options) {
  NodalSystem sys;
  sys.circuit_ = &circuit;
  sys.positions_ = positions;
  const auto& elements = circuit.elements();
  const auto n_nodes = static_cast<std::uint32_t>(circuit.nodes().size());
  const auto n_elem = static_cast<std::uint32_t>(elements.size());
  // Inputs: the states first (one per storage element, in file order), then the sources.
  sys.states_ = circuit.storage_elements();
  sys.state_input_.assign(n_elem, kNone);
  std::vector<PortMode> port_mode(n_elem, PortMode::port);
  for (std::size_t k = 0; k < sys.states_.size(); ++k) {
    sys.state_input_[sys.states_[k]] = static_cast<std::uint32_t>(k);
    port_mode[sys.states_[k]] = options.mode_of(k);
  }
  sys.port_modes_.resize(sys.states_.size());
  for (std::size_t k = 0; k < sys.states_.size(); ++k) sys.port_modes_[k] = port_mode[sys.states_[k]];

  sys.switch_index_.assign(n_elem, kNone);
  sys.source_input_.assign(n_elem, kNone);
  // With no storage element, input 0 is still reserved (for a state that is not there), so that
  // a resistive circuit's sources keep the first edition's numbering.
  sys.diode_index_.assign(n_elem, kNone);
  std::uint32_t n_switch = 0, n_diode = 0;
  std::uint32_t n_input = static_cast<std::uint32_t>(std::max<std::size_t>(1, sys.states_.size()));
  for (ElementId i = 0; i < n_elem; ++i) {
    if (elements[i].kind == ElementKind::switch_) sys.switch_index_[i] = n_switch++;
    if (elements[i].kind == ElementKind::diode) sys.diode_index_[i] = n_diode++;
    if (is_independent_source(elements[i].kind)) sys.source_input_[i] = n_input++;
  }
  if (n_diode > 0) {
    if (positions.diodes.size() != n_diode) throw NumericError("a configuration without a state for every diode");
    sys.unit_input_ = n_input++;
  }
  if (options.test_port) sys.test_input_ = n_input++;
  sys.input_count_ = n_input;

  std::vector<Edge> edges(n_elem);
  std::vector<bool> sensed(n_elem, false);
  for (ElementId i = 0; i < n_elem; ++i) {
    const Element& e = elements[i];
    bool closed = e.kind == ElementKind::switch_ && positions.closed.at(sys.switch_index_[i]);
    const DiodeState diode = e.kind == ElementKind::diode ? positions.diodes[sys.diode_index_[i]] : DiodeState::blocking;
    edges[i] = edge_of(e, sys.state_input_[i] != kNone, port_mode[i], closed, diode);
    if (e.sense_element != kNone) sensed[e.sense_element] = true;
  }

  // Topology first: which nodes the reference reaches through voltage-defining branches,
  // and which ideal voltage branches close a loop among themselves.
  DisjointSets reach(n_nodes), stiff(n_nodes);
  // Ideal branches are few even in a huge network: keep their tree in a hash map.
  std::unordered_map<NodeId, std::vector<std::pair<NodeId, ElementId>>> stiff_tree;
  const ElementId test_port_id = n_elem;  // stands for the test port in loop lists
  auto record_loop = [&](ElementId closing, NodeId from, NodeId to) {
    // The loop: the closing branch plus the tree path between its ends.
    TopologyProblem problem;
    std::vector<std::pair<NodeId, ElementId>> came_from(n_nodes, {kNone, kNone});
    std::deque<NodeId> queue{from};
    came_from[from] = {from, kNone};
    while (!queue.empty()) {
      NodeId n = queue.front();
      queue.pop_front();
      if (n == to) break;
      auto found = stiff_tree.find(n);
      if (found == stiff_tree.end()) continue;
      for (auto [next, via] : found->second)
        if (came_from[next].first == kNone) {
          came_from[next] = {n, via};
          queue.push_back(next);
        }
    }
    problem.elements.push_back(closing);
    for (NodeId n = to; n != from && came_from[n].first != kNone; n = came_from[n].first)
      problem.elements.push_back(came_from[n].second);
    auto has = [&](ElementId id) {
      return std::find(problem.elements.begin(), problem.elements.end(), id) != problem.elements.end();
    };
    const bool has_capacitor = std::any_of(problem.elements.begin(), problem.elements.end(), [&](ElementId id) {
      return id < n_elem && elements[id].kind == ElementKind::capacitor && sys.state_input_[id] != kNone;
    });
    problem.kind = has(test_port_id)  ? TopologyProblem::Kind::test_port_loop
                   : has_capacitor ? TopologyProblem::Kind::capacitor_loop
                                   : TopologyProblem::Kind::voltage_loop;
    std::erase(problem.elements, test_port_id);
    sys.problems_.push_back(std::move(problem));
  };
  auto add_stiff = [&](ElementId id, NodeId p, NodeId q) {
    if (stiff.join(p, q)) {
      stiff_tree[p].push_back({q, id});
      stiff_tree[q].push_back({p, id});
    } else {
      record_loop(id, p, q);
    }
  };
  for (ElementId i = 0; i < n_elem; ++i) {
    const Element& e = elements[i];
    if (edges[i] == Edge::none || edges[i] == Edge::current) continue;
    reach.join(e.pos, e.neg);
    if (edges[i] == Edge::stiff) add_stiff(i, e.pos, e.neg);
  }
  if (options.test_port) {
    reach.join(options.test_port->first, options.test_port->second);
    add_stiff(test_port_id, options.test_port->first, options.test_port->second);
  }

  // Sub-networks the reference does not reach: each gets one node pinned at 0 V, which is
  // exact as long as no current enters it (checked next; otherwise it is a problem).
  const std::uint32_t ground_root = reach.find(circuit.ground());
  sys.floating_.assign(n_nodes, false);
  sys.component_.assign(n_nodes, 0);
  std::vector<std::uint32_t> component_of_root(n_nodes, kNone);
  std::vector<NodeId> pinned;
  std::uint32_t n_components = 1;
  for (NodeId n = 0; n < n_nodes; ++n) {
    std::uint32_t root = reach.find(n);
    if (root == ground_root) continue;
    sys.floating_[n] = true;
    if (component_of_root[root] == kNone) {
      component_of_root[root] = n_components++;
      pinned.push_back(n);
    }
    sys.component_[n] = component_of_root[root];
  }
  std::vector<std::vector<ElementId>> crossings(n_components);
  for (ElementId i = 0; i < n_elem; ++i) {
    if (edges[i] != Edge::current) continue;
    std::uint32_t a = sys.component_[elements[i].pos], b = sys.component_[elements[i].neg];
    if (a == b) continue;
    if (a != 0) crossings[a].push_back(i);
    if (b != 0) crossings[b].push_back(i);
  }
  for (std::uint32_t c = 1; c < n_components; ++c) {
    if (crossings[c].empty()) continue;
    TopologyProblem problem;
    // Only storage inductors cross: their currents are forced (to 0 for one alone).
    bool only_inductor = std::all_of(crossings[c].begin(), crossings[c].end(), [&](ElementId id) {
      return elements[id].kind == ElementKind::inductor && sys.state_input_[id] != kNone;
    });
    problem.kind = only_inductor ? TopologyProblem::Kind::inductor_open : TopologyProblem::Kind::current_cut_set;
    problem.elements = crossings[c];
    for (NodeId n = 0; n < n_nodes; ++n)
      if (sys.component_[n] == c) problem.nodes.push_back(n);
    sys.problems_.push_back(std::move(problem));
  }

  // Nodes whose voltage the reference fixes through a chain of ideal branches (grounded
  // sources, a grounded capacitor port, closed ideal switches) are eliminated: their voltage
  // is a sum of inputs and their KCL gives the branch currents instead. What remains, for a
  // network of resistors and grounded sources, is the symmetric positive definite nodal
  // matrix, which a Cholesky factorization solves; ideal branches elsewhere and controlled
  // sources keep their branch unknowns (general MNA).
  sys.fixed_index_.assign(n_nodes, kNone);
  sys.tree_index_.assign(n_elem, kNone);
  std::vector<ElementId> tree_edge{kNone};  // per fixed node (by fixed index): its branch to the reference
  std::vector<NodeId> fixed_order;
  {
    auto eliminable = [&](ElementId i) {
      const Element& e = elements[i];
      if (edges[i] != Edge::stiff || sensed[i]) return false;
      return e.kind == ElementKind::voltage_source || e.kind == ElementKind::capacitor ||
             e.kind == ElementKind::switch_ || e.kind == ElementKind::inductor;
    };
    std::unordered_map<NodeId, std::vector<ElementId>> ideal_at;
    for (ElementId i = 0; i < n_elem; ++i)
      if (eliminable(i)) {
        ideal_at[elements[i].pos].push_back(i);
        ideal_at[elements[i].neg].push_back(i);
      }
    sys.fixed_index_[circuit.ground()] = 0;
    sys.fixed_voltage_.emplace_back();
    std::deque<NodeId> queue{circuit.ground()};
    while (!queue.empty()) {
      NodeId n = queue.front();
      queue.pop_front();
      auto found = ideal_at.find(n);
      if (found == ideal_at.end()) continue;
      for (ElementId i : found->second) {
        const Element& e = elements[i];
        NodeId other = e.pos == n ? e.neg : e.pos;
        if (sys.fixed_index_[other] != kNone) continue;
        sys.fixed_index_[other] = static_cast<std::uint32_t>(sys.fixed_voltage_.size());
        tree_edge.push_back(i);
        fixed_order.push_back(other);
        // v(pos) − v(neg) = value of the branch.
        LinearForm f = sys.fixed_voltage_[sys.fixed_index_[n]];
        double sign = other == e.pos ? 1.0 : -1.0;
        if (e.kind == ElementKind::voltage_source) f.inputs.push_back({sys.source_input_[i], sign});
        if (e.kind == ElementKind::capacitor) f.inputs.push_back({sys.state_input_[i], sign});
        sys.fixed_voltage_.push_back(std::move(f));
        sys.tree_index_[i] = static_cast<std::uint32_t>(sys.tree_currents_.size());
        sys.tree_currents_.emplace_back();
        queue.push_back(other);
      }
    }
  }

  // Unknowns: free node voltages, then branch currents.
  sys.node_unknown_.assign(n_nodes, kNone);
  std::vector<bool> is_pinned(n_nodes, false);
  for (NodeId n : pinned) is_pinned[n] = true;
  std::uint32_t n_unknowns = 0;
  for (NodeId n = 0; n < n_nodes; ++n) {
    if (sys.fixed_index_[n] != kNone || is_pinned[n]) continue;
    sys.node_unknown_[n] = n_unknowns++;
  }
  sys.node_unknown_count_ = n_unknowns;
  sys.branch_unknown_.assign(n_elem, kNone);
  bool general = false;  // needs the general (unsymmetric) MNA
  for (ElementId i = 0; i < n_elem; ++i) {
    const Element& e = elements[i];
    bool branch = false;
    switch (edges[i]) {
      case Edge::stiff:
      case Edge::soft: branch = sys.tree_index_[i] == kNone; break;
      case Edge::resistive: branch = sensed[i]; break;
      case Edge::current:
        branch = sensed[i] && (e.kind == ElementKind::vccs || e.kind == ElementKind::cccs);
        general |= e.kind == ElementKind::vccs || e.kind == ElementKind::cccs;
        break;
      case Edge::none: break;
    }
    if (!branch) continue;
    general = true;
    sys.branch_unknown_[i] = n_unknowns++;
    sys.branch_owner_.push_back(i);
  }
  if (options.test_port) {
    general = true;
    sys.test_branch_ = n_unknowns++;
  }
  sys.symmetric_positive_definite_ = !general;

  // Stamps. KCL rows: the sum of currents leaving a node through its elements is zero; a
  // term in a fixed voltage moves to the right-hand side as inputs.
  sys.unknown_count_ = n_unknowns;
  const auto n_unknown = static_cast<Eigen::Index>(n_unknowns);
  std::vector<Eigen::Triplet<double>> g, b;
  g.reserve(static_cast<std::size_t>(4 * n_elem));
  auto add_g = [&](std::uint32_t row, std::uint32_t col, double v) {
    if (row != kNone && col != kNone) g.emplace_back(row, col, v);
  };
  auto add_b = [&](std::uint32_t row, std::uint32_t input, double v) {
    if (row != kNone) b.emplace_back(row, input, v);
  };
  // Adds coef·form to row `row`: unknown parts to G, input parts (negated) to B.
  auto add_form = [&](std::uint32_t row, const LinearForm& form, double coef) {
    if (row == kNone) return;
    for (auto [x, c] : form.unknowns) add_g(row, x, coef * c);
    for (auto [u, c] : form.inputs) add_b(row, u, -coef * c);
  };
  // coef·v(node) into row `row`, without building a form (the hot path of big networks).
  auto add_node = [&](std::uint32_t row, NodeId node, double coef) {
    if (row == kNone) return;
    if (sys.node_unknown_[node] != kNone) {
      g.emplace_back(row, sys.node_unknown_[node], coef);
    } else if (sys.fixed_index_[node] != kNone) {  // else pinned at 0 V
      for (auto [u, c] : sys.fixed_voltage_[sys.fixed_index_[node]].inputs) b.emplace_back(row, u, -coef * c);
    }
  };
  auto add_voltage = [&](std::uint32_t row, NodeId p, NodeId q, double coef) {
    add_node(row, p, coef);
    add_node(row, q, -coef);
  };

  for (ElementId i = 0; i < n_elem; ++i) {
    const Element& e = elements[i];
    const std::uint32_t rp = sys.node_unknown_[e.pos], rn = sys.node_unknown_[e.neg];
    const std::uint32_t j = sys.branch_unknown_[i];
    if (j != kNone) {
      add_g(rp, j, 1.0);
      add_g(rn, j, -1.0);
    }
    switch (edges[i]) {
      case Edge::none: break;
      case Edge::resistive: {
        double r = e.kind == ElementKind::resistor ? e.value
                   : e.kind == ElementKind::diode ? e.r_off
                                                  : (sys.switch_closed(i) ? e.r_on : e.r_off);
        if (j == kNone) {
          double gv = 1.0 / r;
          add_voltage(rp, e.pos, e.neg, gv);
          add_voltage(rn, e.pos, e.neg, -gv);
        } else {  // v(pos) − v(neg) − R·j = 0
          add_voltage(j, e.pos, e.neg, 1.0);
          add_g(j, j, -r);
        }
        break;
      }
      case Edge::stiff:
      case Edge::soft: {
        if (j == kNone) break;  // eliminated: its voltage is fixed, its current comes from KCL
        add_voltage(j, e.pos, e.neg, 1.0);
        if (e.kind == ElementKind::voltage_source) add_b(j, sys.source_input_[i], 1.0);
        if (e.kind == ElementKind::capacitor) add_b(j, sys.state_input_[i], 1.0);
        // An inductor held at zero current is a 0 V branch: nothing more to stamp.
        if (e.kind == ElementKind::vcvs) add_voltage(j, e.sense_pos, e.sense_neg, -e.value);
        if (e.kind == ElementKind::ccvs) add_form(j, sys.sensed_current(e.sense_element), -e.value);
        if (e.kind == ElementKind::diode) {  // v(pos) − v(neg) − on·j = drop·1
          add_g(j, j, -e.r_on);
          const bool forward = sys.diode_state(i) == DiodeState::forward;
          add_b(j, sys.unit_input_, forward ? e.forward : -*e.breakdown);
        }
        break;
      }
      case Edge::current: {
        LinearForm drive;
        if (e.kind == ElementKind::current_source) drive.inputs.push_back({sys.source_input_[i], 1.0});
        if (e.kind == ElementKind::inductor) drive.inputs.push_back({sys.state_input_[i], 1.0});
        if (e.kind == ElementKind::vccs) drive = sys.voltage_form(e.sense_pos, e.sense_neg, e.value);
        if (e.kind == ElementKind::cccs) {
          drive = sys.sensed_current(e.sense_element);
          for (auto& [x, c] : drive.unknowns) c *= e.value;
          for (auto& [u, c] : drive.inputs) c *= e.value;
        }
        if (j == kNone) {
          add_form(rp, drive, 1.0);
          add_form(rn, drive, -1.0);
        } else {  // j − drive = 0
          add_g(j, j, 1.0);
          add_form(j, drive, -1.0);
        }
        break;
      }
    }
  }
  if (options.test_port) {
    auto [p, q] = *options.test_port;
    const std::uint32_t j = sys.test_branch_;
    add_g(sys.node_unknown_[p], j, 1.0);
    add_g(sys.node_unknown_[q], j, -1.0);
    add_voltage(j, p, q, 1.0);
    add_b(j, sys.test_input_, 1.0);
  }
  sys.g_.resize(n_unknown, n_unknown);
  sys.g_.setFromTriplets(g.begin(), g.end());
  sys.b_.resize(n_unknown, n_input);
  sys.b_.setFromTriplets(b.begin(), b.end());
  // The stamps as they were, before the sums of setFromTriplets rounded them: a 10 GΩ leak
  // beside 10 mΩ is lost to 1e-4 in the summed diagonal, but not in its own stamp.
  sys.g_stamps_ = std::move(g);
  sys.b_stamps_ = std::move(b);

  // Currents of the eliminated branches, from the KCL of their far node, leaves first: the
  // current leaving a node through its tree branch balances what leaves through the rest.
  std::vector<std::vector<ElementId>> incident(sys.fixed_voltage_.size());
  for (ElementId i = 0; i < n_elem; ++i) {
    if (edges[i] == Edge::none) continue;
    for (NodeId n : {elements[i].pos, elements[i].neg})
      if (sys.fixed_index_[n] != kNone) incident[sys.fixed_index_[n]].push_back(i);
  }
  for (auto it = fixed_order.rbegin(); it != fixed_order.rend(); ++it) {
    NodeId n = *it;
    const std::uint32_t fx = sys.fixed_index_[n];
    ElementId edge = tree_edge[fx];
    LinearForm others;
    for (ElementId i : incident[fx]) {
      if (i == edge) continue;
      LinearForm f = sys.element_current(i);
      double sign = elements[i].pos == n ? 1.0 : -1.0;
      for (auto [x, c] : f.unknowns) others.unknowns.push_back({x, sign * c});
      for (auto [u, c] : f.inputs) others.inputs.push_back({u, sign * c});
    }
    if (options.test_port) {
      auto [p, q] = *options.test_port;
      if (p == n) others.unknowns.push_back({sys.test_branch_, 1.0});
      if (q == n) others.unknowns.push_back({sys.test_branch_, -1.0});
    }
    compact(others);
    double sign = elements[edge].pos == n ? -1.0 : 1.0;
    for (auto& [x, c] : others.unknowns) c *= sign;
    for (auto& [u, c] : others.inputs) c *= sign;
    sys.tree_currents_[sys.tree_index_[edge]] = std::move(others);
  }
  return sys;
}

void compact(LinearForm& f) {
  auto merge = [](auto& terms) {
    std::sort(terms.begin(), terms.end(), [](const auto& a, const auto& b) { return a.first < b.first; });
    std::size_t out = 0;
    for (std::size_t k = 0; k < terms.size(); ++k) {
      // Merged only where the sum is exact: −100 S and −1e-10 S of one input would round the
      // leak's share to 1e-4 (compensated evaluation then keeps both terms' digits).
      const bool same = out > 0 && terms[out - 1].first == terms[k].first;
      const double sum = same ? terms[out - 1].second + terms[k].second : 0.0;
      if (same && sum - terms[out - 1].second == terms[k].second && sum - terms[k].second == terms[out - 1].second) {
        terms[out - 1].second = sum;
      } else {
        terms[out++] = terms[k];
      }
    }
    terms.resize(out);
    std::erase_if(terms, [](const auto& t) { return t.second == 0.0; });
  };
  merge(f.unknowns);
  merge(f.inputs);
}

std::string NodalSystem::label(std::uint32_t i) const {
  if (i == test_branch_) return "i(test port)";
  if (i >= node_unknown_count_) return "i(" + circuit_->element(branch_owner_[i - node_unknown_count_]).name + ")";
  for (NodeId n = 0; n < node_unknown_.size(); ++n)
    if (node_unknown_[n] == i) return "v(" + circuit_->nodes()[n] + ")";
  return "?";
}

LinearForm NodalSystem::voltage_form(NodeId p, NodeId q, double coef) const {
  LinearForm f;
  auto add = [&](NodeId n, double k) {
    if (node_unknown_[n] != kNone) {
      f.unknowns.push_back({node_unknown_[n], k});
    } else if (fixed_index_[n] != kNone) {  // else pinned at 0 V
      for (auto [u, c] : fixed_voltage_[fixed_index_[n]].inputs) f.inputs.push_back({u, k * c});
    }
  };
  add(p, coef);
  if (q != kNone) add(q, -coef);
  if (q != kNone) compact(f);
  return f;
}

LinearForm NodalSystem::node_voltage(NodeId node) const {
  LinearForm f = voltage_form(node, kNone, 1.0);
  f.defined = !floating_[node];
  return f;
}

LinearForm NodalSystem::node_difference(NodeId a, NodeId b) const {
  LinearForm f = voltage_form(a, b, 1.0);
  f.defined = component_[a] == component_[b];
  return f;
}

ObservableForm observable_form(const NodalSystem& sys, const Observable& obs) {
  switch (obs.kind) {
    case ObservableKind::node_voltage: return {sys.node_voltage(obs.node_a), std::nullopt};
    case ObservableKind::node_difference: return {sys.node_difference(obs.node_a, obs.node_b), std::nullopt};
    case ObservableKind::element_voltage: return {sys.element_voltage(obs.element), std::nullopt};
    case ObservableKind::element_current: return {sys.element_current(obs.element), std::nullopt};
    case ObservableKind::element_power: return {sys.element_voltage(obs.element), sys.element_current(obs.element)};
  }
  throw NumericError("unknown observable kind");
}

LinearForm NodalSystem::element_voltage(ElementId id) const {
  const Element& e = circuit_->elements()[id];
  LinearForm f = voltage_form(e.pos, e.neg, 1.0);
  f.defined = component_[e.pos] == component_[e.neg];
  return f;
}

LinearForm NodalSystem::sensed_current(ElementId id) const {
  const Element& e = circuit_->elements()[id];
  LinearForm f;
  if (branch_unknown_[id] != kNone) {
    f.unknowns.push_back({branch_unknown_[id], 1.0});
    return f;
  }
  if (tree_index_[id] != kNone) return tree_currents_[tree_index_[id]];
  switch (e.kind) {
    case ElementKind::current_source: f.inputs.push_back({source_input_[id], 1.0}); break;
    case ElementKind::inductor:
      // A port in its normal mode drives its state; held at zero, its current came from KCL.
      if (state_input_[id] != kNone) f.inputs.push_back({state_input_[id], 1.0});
      break;
    // The others carry current through a branch unknown or an eliminated tree branch (above)
    // whenever they carry any: here they are open (an open switch or blocking diode with no
    // 'off', a capacitor that is no port) or their current is not sensed through this path.
    case ElementKind::resistor:
    case ElementKind::capacitor:
    case ElementKind::voltage_source:
    case ElementKind::switch_:
    case ElementKind::diode:
    case ElementKind::vcvs:
    case ElementKind::vccs:
    case ElementKind::ccvs:
    case ElementKind::cccs: break;
  }
  return f;
}

LinearForm NodalSystem::element_current(ElementId id) const {
  const Element& e = circuit_->elements()[id];
  if (branch_unknown_[id] != kNone || tree_index_[id] != kNone) return sensed_current(id);
  auto scaled_voltage = [&](double conductance) {
    LinearForm f = voltage_form(e.pos, e.neg, conductance);
    f.defined = true;  // a conductance's current is defined even where its voltage floats
    return f;
  };
  switch (e.kind) {
    case ElementKind::resistor: return scaled_voltage(1.0 / e.value);
    case ElementKind::switch_: {
      double r = switch_closed(id) ? e.r_on : e.r_off;
      if (!std::isfinite(r)) return LinearForm{};
      return scaled_voltage(1.0 / r);
    }
    case ElementKind::diode:  // conducting: its branch unknown (above); blocking: its leak
      if (!std::isfinite(e.r_off)) return LinearForm{};
      return scaled_voltage(1.0 / e.r_off);
    case ElementKind::vccs: {
      LinearForm f = voltage_form(e.sense_pos, e.sense_neg, e.value);
      f.defined = component_[e.sense_pos] == component_[e.sense_neg];
      return f;
    }
    case ElementKind::cccs: {
      LinearForm f = sensed_current(e.sense_element);
      for (auto& [x, c] : f.unknowns) c *= e.value;
      for (auto& [u, c] : f.inputs) c *= e.value;
      return f;
    }
    case ElementKind::capacitor:
    case ElementKind::inductor:
    case ElementKind::voltage_source:
    case ElementKind::current_source:
    case ElementKind::vcvs:
    case ElementKind::ccvs: return sensed_current(id);
  }
  throw NumericError("unknown element kind");
}

LinearForm NodalSystem::test_port_current() const {
  LinearForm f;
  if (test_branch_ != kNone) f.unknowns.push_back({test_branch_, 1.0});
  return f;
}

LinearForm NodalSystem::port_quantity(std::size_t k) const {
  if (k >= states_.size()) return LinearForm{};
  const ElementId id = states_[k];
  return circuit_->elements()[id].kind == ElementKind::capacitor ? element_current(id) : element_voltage(id);
}

}  // namespace netfold
