#include "response/solve_states.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include <Eigen/Dense>
#include <fmt/format.h>
#include <fmt/ranges.h>

#include "netfold/units.hpp"
#include "reduce/state_space.hpp"
#include "response/modal.hpp"
#include "response/solve_support.hpp"
#include "response/test_seams.hpp"

namespace netfold {

using namespace detail;
using response::ModalResponse;
using response::Response;

namespace {

// A state whose size is below this share of the largest state so far counts as zero (an
// inductor may then be held at zero when its path opens).
constexpr double kZeroState = 1e-12;
// A mode with |λ| below this share of ‖A‖ is a λ = 0 mode (a capacitor with no DC path).
constexpr double kZeroEigenvalue = 1e-12;

}  // namespace

namespace detail {

std::vector<Drive> input_drives(const Solution& s, bool before_zero, double from) {
  std::vector<Drive> out;
  for (ElementId id : s.sources()) {
    const Waveform& w = s.applied().waveform(id);
    Drive d;
    d.dc = before_zero ? level_before_zero(w) : w.level_at(from);
    for (const auto& sn : w.sinusoids) d.add_phasor(sn.frequency, std::polar(sn.amplitude, sn.phase));
    out.push_back(std::move(d));
  }
  if (has_diodes(s.circuit())) out.push_back(Drive{1.0, {}});  // the unit input of the diodes' drops
  return out;
}

bool has_diodes(const Circuit& c) {
  return std::any_of(c.elements().begin(), c.elements().end(),
                     [](const Element& e) { return e.kind == ElementKind::diode; });
}

bool has_state_events(const Circuit& c) {
  return has_diodes(c) || std::any_of(c.elements().begin(), c.elements().end(), [](const Element& e) {
           return std::any_of(e.events.begin(), e.events.end(),
                              [](const SwitchEvent& ev) { return ev.trigger != EventTrigger::time; });
         });
}

NaturalMode natural_mode(const response::Mode& m) {
  NaturalMode out;
  out.oscillatory = m.oscillatory;
  out.eigenvalue = m.eigenvalue;
  out.multiplicity = m.multiplicity;
  out.tau = m.time_constant;
  out.frequency = m.damped_frequency;
  out.natural_frequency = m.natural_frequency;
  out.damping = m.damping_ratio;
  return out;
}

// The slowest decay: the largest positive time constant; +∞ with a mode at Re λ = 0; the
// fastest growth (negative τ) when a mode grows.
double slowest_tau(const std::vector<NaturalMode>& modes) {
  double slowest = 0.0, growing = 0.0;
  for (const auto& m : modes) {
    if (m.tau < 0.0) growing = growing == 0.0 ? m.tau : std::max(growing, m.tau);
    else slowest = std::max(slowest, m.tau);
  }
  return growing < 0.0 ? growing : slowest;
}

// The steady state before t = 0 of dx/dt = A·x + B·u (DC and one phasor per frequency), at
// t = 0. States the network leaves undetermined (a λ = 0 mode: a floating capacitor, an isolated
// inductor) take the least-squares choice, which starts a decoupled one from 0; a network with
// no steady state at all (a growing mode, a DC source driving a λ = 0 mode, a source at a
// lossless resonance) starts every state from 0.
SteadyStart steady_start(const StateSpace& ss, const std::vector<Drive>& u, const std::vector<NaturalMode>& modes) {
  const Eigen::Index n = ss.a.rows();
  SteadyStart out{Eigen::VectorXd::Zero(n), std::vector<bool>(static_cast<std::size_t>(n), false), {}};
  auto none = [&](std::string why) {
    out.x.setZero();
    out.undetermined.assign(static_cast<std::size_t>(n), true);
    out.why = std::move(why);
    out.exists = false;
    return out;
  };
  if (std::any_of(modes.begin(), modes.end(), [](const NaturalMode& m) { return m.tau < 0.0; }))
    return none("the network before t = 0 is unstable (a growing mode) and has no steady state");
  const double norm = ss.a.cwiseAbs().rowwise().sum().maxCoeff();
  Eigen::VectorXd u_dc(static_cast<Eigen::Index>(u.size()));
  for (std::size_t k = 0; k < u.size(); ++k) u_dc(static_cast<Eigen::Index>(k)) = u[k].dc;
  const Eigen::VectorXd rhs = -(ss.b * u_dc);
  Eigen::CompleteOrthogonalDecomposition<Eigen::MatrixXd> cod(ss.a);
  cod.setThreshold(kZeroEigenvalue);
  Eigen::VectorXd x = cod.solve(rhs);
  if ((ss.a * x - rhs).norm() > 1e-9 * (norm * x.norm() + rhs.norm()))
    return none("a DC source drives a state that has no DC path before t = 0, so it has no steady state");
  if (cod.rank() < n) {
    // The states that move along the null space of A are undetermined.
    const Eigen::MatrixXd kernel = cod.matrixZ().transpose().rightCols(n - cod.rank());
    const Eigen::MatrixXd null = cod.colsPermutation() * kernel;
    for (Eigen::Index i = 0; i < n; ++i)
      if (null.row(i).norm() > 1e-8) out.undetermined[static_cast<std::size_t>(i)] = true;
    out.why = "no resistance fixes them before t = 0";
  }
  // Phasors, frequency by frequency.
  std::vector<double> frequencies;
  for (const auto& d : u)
    for (const auto& p : d.phasors) frequencies.push_back(p.frequency);
  std::sort(frequencies.begin(), frequencies.end());
  frequencies.erase(std::unique(frequencies.begin(), frequencies.end()), frequencies.end());
  for (double f : frequencies) {
    Eigen::VectorXcd uf = Eigen::VectorXcd::Zero(static_cast<Eigen::Index>(u.size()));
    for (std::size_t k = 0; k < u.size(); ++k)
      for (const auto& p : u[k].phasors)
        if (p.frequency == f) uf(static_cast<Eigen::Index>(k)) = p.value;
    const std::complex<double> jw(0.0, 2.0 * std::numbers::pi * f);
    const Eigen::MatrixXcd m = jw * Eigen::MatrixXcd::Identity(n, n) - ss.a.cast<std::complex<double>>();
    Eigen::FullPivLU<Eigen::MatrixXcd> lu(m);
    if (lu.rcond() < 1e-13)
      return none(fmt::format("a source drives a lossless resonance at {} before t = 0, so there is no steady state",
                              format_si(f, "Hz")));
    const Eigen::VectorXcd xf = lu.solve(ss.b.cast<std::complex<double>>() * uf);
    x += xf.real();  // Re(X·e^{jω·0})
  }
  out.x = x;
  return out;
}

}  // namespace detail

namespace {

// Fails with a message in circuit terms for a structural problem of a segment with several
// storage elements. Dependent states (a loop of capacitors and voltage sources, a cut set of
// inductors and current sources) are refused here, naming the elements.
[[noreturn]] void report_states_problem(const Solution& s, const TopologyProblem& p, const std::string& where,
                                        const Eigen::VectorXd& x, double from) {
  const Circuit& c = s.circuit();
  const auto& el = c.elements();
  std::vector<ElementId> storages;
  for (ElementId id : p.elements)
    if (is_storage(el[id].kind)) storages.push_back(id);
  std::sort(storages.begin(), storages.end());
  if (p.kind == TopologyProblem::Kind::capacitor_loop) {
    const ElementId first = storages.front();
    std::vector<ElementId> loop = p.elements;
    std::sort(loop.begin(), loop.end());  // file order reads naturally
    fail(c, el[first].loc,
         fmt::format("{} form a loop with no resistance in {}: the capacitor voltages around it cannot change "
                     "independently (dependent states, which this build does not reduce), and where they differ "
                     "when the loop closes the current is an impulse; add the series resistance that is really "
                     "there (ESR, wiring, the source's internal resistance) to one of them",
                     names_of(c, loop), where));
  }
  if (p.kind == TopologyProblem::Kind::inductor_open) {
    std::vector<std::string> carrying;
    for (ElementId id : storages) {
      const auto at = std::find(s.storage_elements().begin(), s.storage_elements().end(), id);
      const double current = x(static_cast<Eigen::Index>(at - s.storage_elements().begin()));
      carrying.push_back(fmt::format("{} carries {}", el[id].name, format_si(current, "A")));
    }
    fail(c, el[storages.front()].loc,
         fmt::format("{} at the start of {} (at {}), but then {} no path for {} current (R_th = ∞): it would "
                     "have to jump to zero; add a freewheel resistor across {} or an 'off' resistance to the "
                     "switch that opens",
                     fmt::join(carrying, ", "), where, format_si(from, "s"), storages.size() > 1 ? "have" : "has",
                     storages.size() > 1 ? "their" : "its", el[storages.front()].name));
  }
  report_problem(s.applied(), p, where, storages.empty() ? kNone : storages.front(), 0.0, from);
}

// Inductors that are together the only connection of a part of the circuit carry dependent
// currents (two in series carry one current): this build does not reduce them.
[[noreturn]] void report_dependent_inductors(const Solution& s, const TopologyProblem& p, const std::string& where) {
  const Circuit& c = s.circuit();
  std::vector<ElementId> ids = p.elements;
  std::sort(ids.begin(), ids.end());
  fail(c, c.element(ids.front()).loc,
       fmt::format("{} are together the only connection of node{} {} in {}: their currents are not independent "
                   "(in series they carry one current), which this build does not reduce; combine inductors in "
                   "series into one, or give the node a resistance to the reference (a winding's capacitance or "
                   "leakage)",
                   names_of(c, ids), p.nodes.size() > 1 ? "s" : "", node_names(c, p.nodes), where));
}

}  // namespace

// The states at t = 0−: `initial` or the scenario where given, else the steady state before
// t = 0 (with diodes, the consistent or periodic one: state_events.cpp). Returns the diodes'
// states at t = 0−.
std::vector<DiodeState> StateSolver::initial_states(Solution& s) {
  const Circuit& c = s.circuit();
  const auto& el = c.elements();
  const std::vector<ElementId>& states = s.storages_;
  const auto n = static_cast<Eigen::Index>(states.size());

  // The state at t = 0−: `initial` or the scenario where given, else the steady state before 0.
  Segment pre;
  pre.number = 0;  // "before t = 0" for the sources' levels
  pre.positions = positions_before_zero(c);
  SteadyStart steady{Eigen::VectorXd::Zero(n), std::vector<bool>(states.size(), true), {}, false};
  bool all_given = true;
  for (ElementId id : states) all_given &= s.applied_.initial_state(id).has_value() || el[id].initial.has_value();
  std::vector<DiodeState> diodes = pre.positions.diodes;
  if (has_diodes(c)) {
    DiodeStart start = diode_start(s, all_given);
    steady = std::move(start.steady);
    diodes = std::move(start.diodes);
  } else if (!all_given) {
    // Inductors whose loop is open before t = 0 start at 0 A, held there (as with one).
    std::vector<PortMode> pre_modes(states.size(), PortMode::port);
    for (const auto& p : s.cache_->get(pre.positions, pre_modes).system().problems())
      // One inductor alone in the cut: held at 0 A. Several: their currents are dependent (in
      // series they carry one current), which holding them at zero would falsify.
      if (p.kind == TopologyProblem::Kind::inductor_open && p.elements.size() == 1)
        for (ElementId id : p.elements)
          pre_modes[static_cast<std::size_t>(std::find(states.begin(), states.end(), id) - states.begin())] =
              PortMode::held_at_zero;
    const ReducedNetwork& net = s.cache_->get(pre.positions, pre_modes);
    if (!net.system().problems().empty()) {
      steady.why = "the network before t = 0 has a part these states cannot settle in (an open path or a loop)";
    } else if (net.rcond() < kSingularRcond) {
      steady.why = "the network before t = 0 is singular";
    } else {
      const StateSpace ss = state_space(c, net);
      std::vector<NaturalMode> modes;
      for (const auto& m : response::modes_of(ss.a)) modes.push_back(natural_mode(m));
      steady = steady_start(ss, input_drives(s, true, 0.0), modes);
      // An inductor held at zero before t = 0 (its loop open) is determined: 0 A.
      if (steady.exists)
        for (std::size_t k = 0; k < states.size(); ++k)
          if (pre_modes[k] == PortMode::held_at_zero) {
            steady.undetermined[k] = false;
            steady.x(static_cast<Eigen::Index>(k)) = 0.0;
          }
    }
  }
  s.initial_states_.assign(states.size(), 0.0);
  s.initial_sources_.assign(states.size(), InitialStateSource::steady_state);
  s.initial_notes_.assign(states.size(), std::string());
  std::vector<std::string> undetermined;
  for (std::size_t k = 0; k < states.size(); ++k) {
    const ElementId id = states[k];
    if (auto given = s.applied_.initial_state(id)) {
      s.initial_states_[k] = *given;
      s.initial_sources_[k] = InitialStateSource::option;
    } else if (el[id].initial) {
      s.initial_states_[k] = *el[id].initial;
      s.initial_sources_[k] = InitialStateSource::attribute;
    } else if (steady.undetermined[k]) {
      s.initial_states_[k] = steady.x(static_cast<Eigen::Index>(k));
      s.initial_sources_[k] = InitialStateSource::undetermined;
      s.initial_notes_[k] = steady.why;
      undetermined.push_back(el[id].name);
    } else {
      s.initial_states_[k] = steady.x(static_cast<Eigen::Index>(k));
    }
  }
  if (!undetermined.empty())
    s.warnings_.push_back(fmt::format("{}: the state{} of {} before t = 0 {} undetermined and start{} from 0",
                                      steady.why, undetermined.size() > 1 ? "s" : "", fmt::join(undetermined, ", "),
                                      undetermined.size() > 1 ? "are" : "is", undetermined.size() > 1 ? "" : "s"));
  s.initial_source_ = s.initial_sources_.front();

  s.initial_source_ = s.initial_sources_.empty() ? InitialStateSource::none : s.initial_sources_.front();
  return diodes;
}

// One segment in its configuration (seg.positions): the network, with inductors whose only
// path is open held at zero where they carry none (x is set to 0 for them), and the modal
// response from x over [seg.from, seg.to]. Fails in circuit terms for a structural problem.
void StateSolver::solve_segment(Solution& s, Segment& seg, Eigen::VectorXd& x, double scale) {
  const Circuit& c = s.circuit();
  const std::vector<ElementId>& states = s.storages_;
  const auto n = static_cast<Eigen::Index>(states.size());
  // Formatted only for a message: a rectifier's march solves hundreds of segments.
  auto where = [&] { return segment_text(c, seg); };
  seg.modes.clear();
  // Inductors whose only path is open are held at zero where they carry none.
  std::vector<PortMode> modes(states.size(), PortMode::port);
  const ReducedNetwork* net = &s.cache_->get(seg.positions, modes);
  for (const auto& p : net->system().problems()) {
    if (p.kind != TopologyProblem::Kind::inductor_open) report_states_problem(s, p, where(), x, seg.from);
    if (p.elements.size() > 1) report_dependent_inductors(s, p, where());
    for (ElementId id : p.elements) {
      const auto i = static_cast<std::size_t>(std::find(states.begin(), states.end(), id) - states.begin());
      if (std::fabs(x(static_cast<Eigen::Index>(i))) > kZeroState * scale) report_states_problem(s, p, where(), x, seg.from);
      modes[i] = PortMode::held_at_zero;
      x(static_cast<Eigen::Index>(i)) = 0.0;
    }
  }
  if (std::find(modes.begin(), modes.end(), PortMode::held_at_zero) != modes.end()) {
    net = &s.cache_->get(seg.positions, modes);
    seg.mode = PortMode::held_at_zero;
    for (const auto& p : net->system().problems()) report_states_problem(s, p, where(), x, seg.from);
  }
  if (net->rcond() < kSingularRcond) report_singular(c, *net, where());
  seg.rcond = net->rcond();
  seg.solver = net->solver_name();
  seg.network = net;
  seg.voc_defined = seg.isc_defined = false;
  seg.state_start = n > 0 ? x(0) : 0.0;
  seg.states_start.assign(x.data(), x.data() + n);

  StateSpace ss = state_space(c, *net);
  ss.a /= seams::engine_faults().tau_scale;  // the test seam: every time constant × tau_scale
  auto modal = std::make_shared<ModalResponse>(
      response::solve_modal(ss.a, ss.b, x, input_drives(s, seg.number == 0, seg.from), seg.from, seg.to));
  if (!modal->accuracy().ok)
    fail(c, c.element(anchor_element(s)).loc,
         fmt::format("the response of {} cannot be computed to an accuracy netfold can vouch for: {}; no figure "
                     "is given (check for elements of nearly equal value that make modes nearly coincide, or "
                     "values far apart)",
                     where(), modal->accuracy().reason));
  for (const auto& m : modal->modes()) seg.modes.push_back(natural_mode(m));
  seg.tau = slowest_tau(seg.modes);
  seg.rate = std::isfinite(seg.tau) && seg.tau != 0.0 ? -1.0 / seg.tau : 0.0;
  seg.modal = std::move(modal);
  if (seg.unstable()) {
    std::string warning = fmt::format("{} is unstable: a mode grows as e^(t/{}); a controlled source supplies more "
                                      "than the network absorbs",
                                      where(), format_si(-seg.tau, "s"));
    // A segment solved again after a state event cut it short says it once.
    if (s.warnings_.empty() || s.warnings_.back() != warning) s.warnings_.push_back(std::move(warning));
  }
}

void StateSolver::solve_segments(Solution& s) {
  const Circuit& c = s.circuit();
  const auto n = static_cast<Eigen::Index>(s.storages_.size());
  std::vector<DiodeState> diodes = initial_states(s);
  std::vector<ArmedEvent> armed = armed_events(s.applied_);
  const bool event_driven = !diodes.empty() || !armed.empty();

  Eigen::VectorXd x = Eigen::Map<const Eigen::VectorXd>(s.initial_states_.data(), n);
  double scale = n > 0 ? x.cwiseAbs().maxCoeff() : 0.0;
  Chatter chatter(s.window_.to - std::min(s.window_.from, 0.0));
  for (std::size_t k = 0; k < s.schedule_.segments.size(); ++k) {
    Segment seg = scheduled_segment(c, s.schedule_.segments[k], k);
    seg.positions.diodes = diodes;
    if (!diodes.empty()) settle_diodes(s, seg, x, scale);
    solve_segment(s, seg, x, scale);
    if (event_driven) {
      if (auto found = next_state_event(s, seg, armed)) {
        SwitchPositions after = seg.positions;
        if (found->switch_slot != kNone) after.closed[found->switch_slot] = !after.closed[found->switch_slot];
        if (found->armed != kNone) armed[found->armed].done = true;
        chatter.count(c, found->event, seg.from);
        if (!(found->event.time > seg.from)) {
          // A contact at its zero the instant it is armed: segment k changes at its start.
          s.schedule_.change_at_start(k, found->event, after);
          --k;
          continue;
        }
        s.schedule_.split_segment(k, found->event, after);
        seg.to = found->event.time;
        Eigen::VectorXd start = Eigen::Map<const Eigen::VectorXd>(seg.states_start.data(), n);
        solve_segment(s, seg, start, scale);
        diodes = seg.positions.diodes;
        if (found->diode_slot != kNone) diodes[found->diode_slot] = found->diode_after;
      } else {
        diodes = seg.positions.diodes;
      }
    }
    x = seg.modal->value(seg.to);
    if (!x.allFinite())
      fail(c, c.element(anchor_element(s)).loc,
           fmt::format("the response grows beyond any representable value in {}; shorten the window",
                       segment_text(c, seg)));
    if (n > 0) scale = std::max(scale, x.cwiseAbs().maxCoeff());
    s.segments_.push_back(std::move(seg));
  }
}

Piece StateSolver::piece(const Solution& s, const ObservableForm& form, const Segment& seg) {
  const ReducedNetwork& net = s.network(seg);
  const NodalSystem& sys = net.system();
  const auto n = static_cast<Eigen::Index>(sys.state_count());
  const auto m = static_cast<Eigen::Index>(sys.input_count() - sys.first_source_input() -
                                           (sys.test_port_input() == kNone ? 0u : 1u));
  auto terms = [&](const LinearForm& f) {
    const std::vector<double> coef = net.coefficients(f);
    Eigen::RowVectorXd cx = Eigen::RowVectorXd::Zero(n), du = Eigen::RowVectorXd::Zero(m);
    for (Eigen::Index i = 0; i < n; ++i) cx(i) = coef[static_cast<std::size_t>(i)];
    for (Eigen::Index j = 0; j < m; ++j) du(j) = coef[sys.first_source_input() + static_cast<std::size_t>(j)];
    auto r = std::make_shared<Response>(seg.modal->output(cx, du));
    return std::shared_ptr<const Response>(std::move(r));
  };
  Piece p;
  p.f = constant_wave(seg.from, seg.to, 0.0);
  p.terms_f = terms(form.value);
  if (form.current) p.terms_g = terms(*form.current);
  return p;
}

double StateSolver::last_slowest_tau(const AppliedScenario& applied, NetworkCache& cache, double last_event) {
  const ReducedNetwork& net = cache.get(positions_at(applied, last_event));
  if (!net.system().problems().empty() || net.rcond() < kSingularRcond) return 0.0;
  std::vector<NaturalMode> modes;
  for (const auto& m : response::modes_of(state_space(applied.circuit(), net).a)) modes.push_back(natural_mode(m));
  const double tau = slowest_tau(modes);
  return std::isfinite(tau) && tau > 0.0 ? tau : 0.0;
}

double terms_bound(const Piece& piece) {
  auto bound = [](const Response& r) {
    const double span = r.t1 - r.t0;
    double b = std::fabs(r.periodic.dc);
    for (const auto& p : r.periodic.phasors) b += std::abs(p.value);
    for (const auto& t : r.terms) {
      // |s^k·e^{z·s}·φ(d, s)| ≤ T^k·max(1, e^{Re z·T})·T·max(1, e^{Re d·T}) over [0, T].
      double f = std::abs(t.c) * std::pow(span, t.k) * std::max(1.0, std::exp(t.z.real() * span));
      if (t.has_phi) f *= span * std::max(1.0, std::exp(t.d.real() * span));
      b += f;
    }
    return b;
  };
  return piece.terms_g ? bound(*piece.terms_f) * bound(*piece.terms_g) : bound(*piece.terms_f);
}

}  // namespace netfold
