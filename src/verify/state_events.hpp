#pragma once
// The numerical path's own handling of the format's state-dependent events (v2): diodes that
// change state and contacts that act at a zero of their current or voltage. CVODE locates each
// event with its root finding on the full nodal equations of the configuration in force; at a
// root the march picks the consistent configuration by its own search and restarts. Nothing of
// the closed form is read: not its events, segments, configurations or states. Private to
// src/verify/.

#include <functional>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "netfold/scenario.hpp"
#include "netfold/schedule.hpp"
#include "verify/cvode_integrator.hpp"
#include "verify/state_equation.hpp"

namespace netfold::integration {

// The march cannot go on (no consistent configuration, chattering): the run fails with this
// message (a disagreement with a closed form that went on is a failed cross-check, not a crash).
struct MarchError : std::runtime_error {
  using std::runtime_error::runtime_error;
};

// A contact that acts at a zero of its current (opens) or voltage (closes) from `after` on.
struct ArmedContact {
  ElementId element = kNone;
  std::size_t slot = 0;  // index into SwitchPositions::closed
  double after = 0.0;    // s
  bool closes = false;
  bool done = false;     // it has acted
  bool checked = false;  // its zero at `after` itself has been looked at
};

// True when the circuit has diodes or contacts that act at a zero: the run then needs the march.
bool has_state_events(const AppliedScenario& applied);

// Diode ids in element order (the order of SwitchPositions::diodes).
std::vector<ElementId> diode_elements(const Circuit& circuit);

class EventMarch {
 public:
  // `unit`: the value of the diodes' unit input in the run's units (1/S).
  EventMarch(const AppliedScenario& applied, Configurations& configs, const std::vector<SourceSignal>& signals,
             double unit, Integrator& cv, double rtol, Eigen::VectorXd atol, double hmax);

  // The states a candidate configuration has (fixed at an event; its DC steady state before
  // t = 0), or nullopt when it has none.
  using StatesOf = std::function<std::optional<Eigen::VectorXd>(const Configuration&)>;
  // The consistent configuration at t from `guess` (the diodes flipped where they violate their
  // state; see state_events.cpp) and its states. `dc`: judge without slopes (a DC steady state).
  std::pair<SwitchPositions, Eigen::VectorXd> settle(SwitchPositions guess, double t, const std::vector<double>& levels,
                                                     bool dc, const StatesOf& states_of, const std::string& where);

  // Called at each sample: the equation in force, t and the states there; false stops the run.
  using Sampler = std::function<bool(StateEquation&, double, const Eigen::VectorXd&)>;
  // Integrates from (t0, z, p) to t1 with the sources at `levels` plus their sinusoids,
  // locating and taking every state event on the way; calls `sample` at each of `samples`
  // (ascending, in [t0, t1]). z and p become the state and configuration at t1. False when the
  // integrator stopped (its status) or a sample refused; throws MarchError.
  bool run(double t0, double t1, const std::vector<double>& samples, Eigen::VectorXd& z, SwitchPositions& p,
           const std::vector<double>& levels, const Sampler& sample);

  // The schedule segment's switch positions with the contacts' own actions carried on until an
  // event of the segment changes that switch again.
  void carry_contacts(const ScheduledSegment& seg, SwitchPositions& p);

  void set_atol(Eigen::VectorXd atol) { atol_ = std::move(atol); }
  void set_rtol(double rtol) { rtol_ = rtol; }
  // Each state's scale (run's units): a state held at zero may carry this share 1e-9 of it.
  void set_state_scale(std::vector<double> scale) { scale_ = std::move(scale); }
  double unit() const { return unit_; }
  // Events found (diode changes at a root, contacts at their zero), in time order; `record`
  // false while shooting before t = 0.
  std::vector<ScheduledEvent> events;
  bool record = true;
  // Every configuration the march integrated in.
  std::vector<const Configuration*> used;
  const Configuration& configuration(const SwitchPositions& p, const std::string& where);

 private:
  const AppliedScenario& applied_;
  const Circuit& circuit_;
  Configurations& configs_;
  const std::vector<SourceSignal>& signals_;
  double unit_;
  Integrator& cv_;
  double rtol_;
  Eigen::VectorXd atol_;
  double hmax_;
  std::vector<ElementId> diodes_;
  std::vector<double> scale_;
  std::vector<ArmedContact> contacts_;
  std::vector<int> carried_;  // per switch slot: −1, or the position a contact left it in
  // Stalled events (not advancing time) in a row, and where.
  int stalled_ = 0;
  double last_event_ = -kInfinity;
  std::vector<ElementId> stalled_elements_;

  // The diodes (slots) that violate their state in a configuration, with where each goes.
  using Violations = std::vector<std::pair<std::size_t, DiodeState>>;
  struct Judging {
    double t = 0.0;
    const std::vector<double>* levels = nullptr;
    bool dc = false;
    const StatesOf& states_of;
  };
  // How configuration q fares at how.t (its states into z): nullopt when it cannot be judged (a
  // structural problem, no states, an inductor held at zero that carries current).
  std::optional<Violations> judge(const SwitchPositions& q, const Judging& how, Eigen::VectorXd& z);
  // Every configuration of the diodes, fewest conducting first (empty past the search's limits).
  std::vector<std::vector<DiodeState>> every_configuration() const;
  struct WatchOf {
    bool diode = true;
    std::size_t index = 0;  // diode slot or contact index
    DiodeState to = DiodeState::blocking;
  };
  std::vector<Watch> watches(const Configuration& cfg, const SwitchPositions& p, double t,
                             std::vector<WatchOf>& of) const;
  bool contact_zero_now(StateEquation& eq, const ArmedContact& a, double t, const Eigen::VectorXd& z) const;
  void take_event(double t, const std::vector<int>& fired, const std::vector<WatchOf>& of, Eigen::VectorXd& z,
                  SwitchPositions& p, const std::vector<double>& levels);
  void count_stall(double t, const std::vector<ElementId>& elements);
};

}  // namespace netfold::integration
