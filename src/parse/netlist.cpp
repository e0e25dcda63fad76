#include "netfold/netlist.hpp"

#include <cmath>
#include <numbers>

namespace netfold {

std::string_view kind_keyword(ElementKind kind) {
  switch (kind) {
    case ElementKind::resistor: return "resistor";
    case ElementKind::capacitor: return "capacitor";
    case ElementKind::inductor: return "inductor";
    case ElementKind::voltage_source: return "voltage-source";
    case ElementKind::current_source: return "current-source";
    case ElementKind::switch_: return "switch";
    case ElementKind::vcvs: return "vcvs";
    case ElementKind::vccs: return "vccs";
    case ElementKind::ccvs: return "ccvs";
    case ElementKind::cccs: return "cccs";
    case ElementKind::diode: return "diode";
  }
  return "element";
}

std::string_view observable_kind_name(ObservableKind kind) {
  // No default: a new kind is a compile error under -Werror (-Wswitch) until it is named here,
  // and tests/test_coverage.cpp then requires it on every command path.
  switch (kind) {
    case ObservableKind::element_voltage: return "element voltage (X.v)";
    case ObservableKind::element_current: return "element current (X.i)";
    case ObservableKind::element_power: return "element power (X.p)";
    case ObservableKind::node_voltage: return "node voltage (@n)";
    case ObservableKind::node_difference: return "node difference (@a - @b)";
  }
  return "";
}

Observable element_observable(const Circuit& c, ElementId id, ObservableKind kind) {
  Observable o;
  o.kind = kind;
  o.element = id;
  o.text = c.element(id).name + (kind == ObservableKind::element_voltage   ? ".v"
                                 : kind == ObservableKind::element_current ? ".i"
                                                                           : ".p");
  o.loc = c.element(id).loc;
  return o;
}

bool is_storage(ElementKind kind) { return kind == ElementKind::capacitor || kind == ElementKind::inductor; }

bool is_independent_source(ElementKind kind) {
  return kind == ElementKind::voltage_source || kind == ElementKind::current_source;
}

double Waveform::level_at(double t) const {
  double v = dc;
  for (const auto& s : steps)
    if (t >= s.time) v += s.level;
  return v;
}

double Waveform::value_at(double t) const {
  double v = level_at(t);
  for (const auto& s : sinusoids) v += s.amplitude * std::cos(2.0 * std::numbers::pi * s.frequency * t + s.phase);
  return v;
}

Dimension Observable::dimension() const {
  switch (kind) {
    case ObservableKind::element_current: return Dimension::current;
    case ObservableKind::element_power: return Dimension::power;
    case ObservableKind::element_voltage:
    case ObservableKind::node_voltage:
    case ObservableKind::node_difference: return Dimension::voltage;
  }
  return Dimension::voltage;  // not reached: every kind is named above
}

std::optional<ElementId> Circuit::find_element(std::string_view name) const {
  ElementId id = element_index_.find(name, [this](ElementId i) { return element_name(i); });
  if (id == kNone) return std::nullopt;
  return id;
}

std::optional<NodeId> Circuit::find_node(std::string_view name) const {
  NodeId id = node_index_.find(name, [this](NodeId i) { return node_name(i); });
  if (id == kNone) return std::nullopt;
  return id;
}

std::vector<ElementId> Circuit::storage_elements() const {
  std::vector<ElementId> ids;
  for (ElementId i = 0; i < elements_.size(); ++i)
    if (is_storage(elements_[i].kind)) ids.push_back(i);
  return ids;
}

Diagnostic Circuit::diagnostic(SourceLoc loc, std::string message) const {
  return make_diagnostic(*source_, loc, std::move(message));
}

CircuitBuilder::CircuitBuilder(std::shared_ptr<const SourceText> source) { circuit_.source_ = std::move(source); }

NodeId CircuitBuilder::node(std::string_view name) {
  auto name_of = [this](NodeId i) { return circuit_.node_name(i); };
  NodeId id = circuit_.node_index_.find(name, name_of);
  if (id != kNone) return id;
  id = static_cast<NodeId>(circuit_.nodes_.size());
  circuit_.nodes_.emplace_back(name);
  circuit_.node_index_.insert(name, id, name_of);
  return id;
}

std::optional<NodeId> CircuitBuilder::find_node(std::string_view name) const { return circuit_.find_node(name); }

std::optional<ElementId> CircuitBuilder::add_element(Element element) {
  auto name_of = [this](ElementId i) { return circuit_.element_name(i); };
  if (circuit_.element_index_.find(element.name, name_of) != kNone) return std::nullopt;
  auto id = static_cast<ElementId>(circuit_.elements_.size());
  circuit_.elements_.push_back(std::move(element));
  circuit_.element_index_.insert(circuit_.elements_.back().name, id, name_of);
  return id;
}

std::optional<ElementId> CircuitBuilder::find_element(std::string_view name) const {
  return circuit_.find_element(name);
}

void CircuitBuilder::set_ground(std::string_view name, SourceLoc loc) {
  circuit_.ground_ = node(name);
  circuit_.ground_loc_ = loc;
  ground_set_ = true;
}

Circuit CircuitBuilder::build() && {
  if (!ground_set_) circuit_.ground_ = node("gnd");
  return std::move(circuit_);
}

}  // namespace netfold
