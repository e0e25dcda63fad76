#pragma once
// Test helpers: circuits assembled through CircuitBuilder, one call per element, so that the
// integrator's and the cross-check's tests do not depend on the parser.

#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "netfold/netlist.hpp"

namespace nftest {

using netfold::ElementId;
using netfold::ElementKind;
using netfold::Waveform;

/// A DC waveform.
inline Waveform dc(double level) {
  Waveform w;
  w.dc = level;
  return w;
}
/// amplitude·cos(2π·frequency·t + phase), phase in rad.
inline Waveform cosine(double amplitude, double frequency, double phase = 0.0) {
  Waveform w;
  w.sinusoids.push_back({amplitude, frequency, phase, {}});
  return w;
}
/// 0 before `time`, `level` from `time` on.
inline Waveform step(double level, double time) {
  Waveform w;
  w.steps.push_back({level, time, {}});
  return w;
}
/// Superposition.
inline Waveform operator+(Waveform a, const Waveform& b) {
  a.dc += b.dc;
  a.sinusoids.insert(a.sinusoids.end(), b.sinusoids.begin(), b.sinusoids.end());
  a.steps.insert(a.steps.end(), b.steps.begin(), b.steps.end());
  return a;
}

/// A switch event.
inline netfold::SwitchEvent closes(double t) { return {t, true, {}}; }
inline netfold::SwitchEvent opens(double t) { return {t, false, {}}; }

/// Builds a circuit element by element; node names are created on first use, `gnd` is the reference.
class Net {
 public:
  Net() : b_(std::make_shared<netfold::SourceText>("test.nf", "")) { b_.node("gnd"); }

  ElementId resistor(const std::string& name, const std::string& a, const std::string& b, double r) {
    return add(name, ElementKind::resistor, a, b, r);
  }
  ElementId capacitor(const std::string& name, const std::string& a, const std::string& b, double c,
                      std::optional<double> initial = std::nullopt) {
    ElementId id = add(name, ElementKind::capacitor, a, b, c);
    b_.element(id).initial = initial;
    return id;
  }
  ElementId inductor(const std::string& name, const std::string& a, const std::string& b, double l,
                     std::optional<double> initial = std::nullopt) {
    ElementId id = add(name, ElementKind::inductor, a, b, l);
    b_.element(id).initial = initial;
    return id;
  }
  ElementId voltage_source(const std::string& name, const std::string& a, const std::string& b, Waveform w) {
    ElementId id = add(name, ElementKind::voltage_source, a, b, 0.0);
    b_.element(id).waveform = std::move(w);
    return id;
  }
  ElementId current_source(const std::string& name, const std::string& a, const std::string& b, Waveform w) {
    ElementId id = add(name, ElementKind::current_source, a, b, 0.0);
    b_.element(id).waveform = std::move(w);
    return id;
  }
  ElementId switch_(const std::string& name, const std::string& a, const std::string& b,
                    std::vector<netfold::SwitchEvent> events, double r_on = 0.0,
                    double r_off = netfold::kInfinity) {
    ElementId id = add(name, ElementKind::switch_, a, b, 0.0);
    auto& e = b_.element(id);
    e.events = std::move(events);
    e.r_on = r_on;
    e.r_off = r_off;
    return id;
  }
  /// Voltage-controlled voltage source: v(a) − v(b) = gain·(v(sa) − v(sb)).
  ElementId vcvs(const std::string& name, const std::string& a, const std::string& b, double gain,
                 const std::string& sa, const std::string& sb) {
    ElementId id = add(name, ElementKind::vcvs, a, b, gain);
    b_.element(id).sense_pos = b_.node(sa);
    b_.element(id).sense_neg = b_.node(sb);
    return id;
  }
  /// Current-controlled current source: gain × the current through `sensed`, from a to b.
  ElementId cccs(const std::string& name, const std::string& a, const std::string& b, double gain,
                 const std::string& sensed) {
    ElementId id = add(name, ElementKind::cccs, a, b, gain);
    b_.element(id).sense_element = *b_.find_element(sensed);
    return id;
  }

  /// `watch NAME.v` / `NAME.i` / `NAME.p`.
  void watch_element(const std::string& name, char what) {
    netfold::Observable o;
    o.kind = what == 'v'   ? netfold::ObservableKind::element_voltage
             : what == 'i' ? netfold::ObservableKind::element_current
                           : netfold::ObservableKind::element_power;
    o.element = *b_.find_element(name);
    o.text = name + "." + what;
    b_.add_watch(o);
  }
  /// `watch @node`.
  void watch_node(const std::string& node) {
    netfold::Observable o;
    o.kind = netfold::ObservableKind::node_voltage;
    o.node_a = b_.node(node);
    o.text = "@" + node;
    b_.add_watch(o);
  }
  void window(double from, double to) { b_.set_window({from, to, {}}); }
  void resolution(double dt) { b_.set_resolution(dt); }

  netfold::Circuit build() && { return std::move(b_).build(); }

 private:
  netfold::CircuitBuilder b_;

  ElementId add(const std::string& name, ElementKind kind, const std::string& a, const std::string& b, double value) {
    netfold::Element e;
    e.name = name;
    e.kind = kind;
    e.pos = b_.node(a);
    e.neg = b_.node(b);
    e.value = value;
    return *b_.add_element(std::move(e));
  }
};

}  // namespace nftest
