// The state at t = 0− on the numerical path, from the circuit alone (nothing of the closed form,
// not even its initial state).
//
// Given: the scenario's initial state, else the storage element's `initial`. Otherwise the
// steady state of the network before t = 0, dx/dt = f(t, x) = a·x + f_dc + f_ac(t), which by
// superposition (the network is linear) is the sum of
//   - the DC operating point x_dc = −f_dc/a, from two full nodal solves (a = ∂f/∂x < 0), and
//   - per group of harmonically related frequencies (harmonic_groups), the periodic response to
//     that group's sinusoids alone, found by shooting over the group's period T = 1/f₀.
// The format's rule where there is none: the state starts from 0 (a network that is degenerate,
// floating or growing before t = 0).
//
// Shooting on one group: two runs from t = −T to 0, each integrating Q = ∫x dt as well,
//   - the unforced deviation w = x_h − 1 of the response from x_h(−T) = 1, giving α = x_h(0) =
//     1 + w(0) and Q_h = T + ∫w (α − 1 keeps its digits when T ≪ τ);
//   - the forced response y from y(−T) = 0, giving β = y(0) and Q_y.
// The periodic response x* = y + c·x_h with c = x*(−T) satisfies both
//   periodicity  x*(0) = x*(−T):  c = β/(1 − α), and
//   zero mean    ∫x* dt = 0 (a·∫x* = −∫f_ac = 0 over whole periods):  c = −Q_y/Q_h, x*(0) = β + α·c.
// Each is well conditioned where the other is not: with |a|·T ≥ 1, 1 − α ≥ 1 − 1/e and the
// periodicity is used; below, 1 − α → |a|·T would amplify β's error (β is a small remainder of
// the period's swing when τ ≫ T), whereas Q_h → T, and the zero-mean condition is used. Either
// way x* inherits the runs' relative error at most about e-fold.
#include "verify/initial_state.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "netfold/units.hpp"

namespace netfold::integration {

namespace {

// Tightest tolerance asked of a shooting run: a few ulps.
constexpr double kTightestShootingRtol = 1e-15;
// Smallest absolute tolerance: far below any state in units of S, far above the denormals, so
// that CVODE's error weights 1/(rtol·|x| + atol) stay finite where the state is exactly 0.
constexpr double kAtolFloor = 1e-280;
// |a|·T at which the shooting changes condition (see the file comment): 1 − α = 1 − 1/e.
constexpr double kPeriodicityThreshold = 0.6321205588285577;

std::string unit_of_state(const Element& storage) { return storage.kind == ElementKind::capacitor ? "V" : "A"; }

// The periodic response at t = 0 to the sinusoids of one group, by shooting (file comment).
struct GroupShot {
  double value = 0.0;  // x*(0), scaled units
  bool ok = true;
};

GroupShot shoot_group(const Configuration& pre, double storage_value, const std::vector<SourceSignal>& signals,
                      const std::vector<double>& group, const std::vector<double>& d, Integrator& cv, double rtol) {
  GroupShot out;
  const double period = 1.0 / group.front();
  const double rtol_s = std::max(kTightestShootingRtol, 1e-2 * rtol);

  StateEquation deviation(pre, storage_value, signals, Forcing{{}, false, {}});
  deviation.set_offset(1.0);
  const double w_scale = std::min(1.0, std::fabs(d[0]) * period);
  cv.start(deviation, -period, 0.0, 0.0, rtol_s, std::max(rtol_s * kAtolFraction * w_scale, kAtolFloor), 0.0);
  double w = 0.0;
  out.ok = cv.advance_to(0.0, w);
  const double q_h = period + cv.quadrature();
  cv.finish();
  if (!out.ok) return out;

  StateEquation forced(pre, storage_value, signals, Forcing{{}, true, group});
  const std::vector<double> no_levels(signals.size(), 0.0);
  const double scale = forcing_scale(d, no_levels, signals, period);
  cv.start(forced, -period, 0.0, 0.0, rtol_s, std::max(rtol_s * kAtolFraction * scale, kAtolFloor),
           step_limit(group));
  double beta = 0.0;
  out.ok = cv.advance_to(0.0, beta);
  const double q_y = cv.quadrature();
  cv.finish();
  if (!out.ok) return out;

  const double one_minus_alpha = -w;
  if (one_minus_alpha >= kPeriodicityThreshold) {
    out.value = beta / one_minus_alpha;
  } else {
    const double c = -q_y / q_h;
    out.value = beta + (1.0 + w) * c;
  }
  return out;
}

// The periods shot over, for the note: "20 ms" or "20 ms, 16.67 ms and 2 more".
std::string periods_text(const std::vector<std::vector<double>>& groups) {
  std::string out;
  const std::size_t shown = std::min<std::size_t>(groups.size(), 3);
  for (std::size_t k = 0; k < shown; ++k) {
    if (k > 0) out += k + 1 == groups.size() ? " and " : ", ";
    out += format_si(1.0 / groups[k].front(), "s");
  }
  if (groups.size() > shown) out += fmt::format(" and {} more", groups.size() - shown);
  return out;
}

}  // namespace

std::vector<std::vector<double>> harmonic_groups(const std::vector<double>& frequencies) {
  std::vector<std::vector<double>> groups;
  std::vector<bool> taken(frequencies.size(), false);
  for (std::size_t i = 0; i < frequencies.size(); ++i) {
    if (taken[i]) continue;
    std::vector<double> group{frequencies[i]};
    for (std::size_t j = i + 1; j < frequencies.size(); ++j) {
      const double cycles = frequencies[j] / frequencies[i];
      if (taken[j] || cycles > kMaxShootingPeriods) continue;
      if (std::fabs(cycles - std::round(cycles)) <= 1e-12 * cycles) {
        group.push_back(frequencies[j]);
        taken[j] = true;
      }
    }
    groups.push_back(std::move(group));
  }
  return groups;
}

InitialState find_initial_state(const Solution& s, Configurations& configs, const std::vector<SourceSignal>& signals,
                                double scale, StepBudget& budget, double rtol) {
  InitialState out;
  const ElementId storage_id = storage_element(s.circuit());
  if (storage_id == kNone) return out;
  const Element& storage = s.circuit().element(storage_id);
  const std::string unit = unit_of_state(storage);
  const std::optional<double> given = given_initial_state(s, storage_id);
  if (given) {
    out.value = *given / scale;
    out.method = InitialStateMethod::given;
    out.note = fmt::format("{} at t = 0- is given: {}", storage.name, format_si(*given, unit));
    return out;
  }
  auto undetermined = [&](const std::string& why) {
    out.value = 0.0;
    out.method = InitialStateMethod::undetermined;
    out.note = fmt::format("{} at t = 0-: {}, so its steady state there is undetermined; started from 0 {}, as "
                           "the format prescribes",
                           storage.name, why, unit);
    return out;
  };

  std::string why;
  const Configuration* pre = configs.find(positions_before_zero(s.circuit()), PortMode::port, why);
  if (!pre) return undetermined("the network before t = 0 is degenerate (" + why + ")");
  std::vector<double> levels;
  for (const auto& sig : signals) levels.push_back(sig.level_before_zero());
  const std::vector<double> d = sensitivities(*pre, storage.value);
  if (d[0] == 0.0) return undetermined("it sees no resistance before t = 0 (∂f/∂x = 0)");
  if (!(d[0] < 0.0)) return undetermined(fmt::format("the network before t = 0 makes it grow (∂f/∂x = {:.3g} 1/s)", d[0]));
  // No source reaches the state before t = 0 (they are switched off, or absent): it rests at 0.
  if (forcing_scale(d, levels, signals, 1.0) == 0.0) {
    out.method = InitialStateMethod::dc_operating_point;
    out.note = fmt::format("{} at t = 0-: no source reaches it before t = 0, so it rests at 0 {}", storage.name, unit);
    return out;
  }

  StateEquation dc(*pre, storage.value, signals, Forcing{levels, false, {}});
  const double x_dc = -dc.rate(0.0, 0.0) / d[0];
  const std::vector<std::vector<double>> groups = harmonic_groups(source_frequencies(signals));
  out.value = x_dc;
  out.method = InitialStateMethod::dc_operating_point;
  if (groups.empty()) {
    out.note = fmt::format("{} at t = 0- from the DC operating point of the network before t = 0: {}", storage.name,
                           format_si(out.value * scale, unit));
    return out;
  }
  Integrator cv(budget, true);
  for (const auto& group : groups) {
    const GroupShot shot = shoot_group(*pre, storage.value, signals, group, d, cv, rtol);
    if (!shot.ok) {
      out.status = cv.status();
      out.message = cv.message();
      out.stats = cv.totals();
      return out;
    }
    out.value += shot.value;
  }
  out.stats = cv.totals();
  out.method = InitialStateMethod::shooting;
  out.note = fmt::format("{} at t = 0- from the steady state before t = 0: the DC operating point plus the periodic "
                         "response to {} group{} of harmonically related sinusoids, each by shooting over its period "
                         "({}; rtol {:.0e}): {}",
                         storage.name, groups.size(), groups.size() == 1 ? "" : "s", periods_text(groups),
                         std::max(kTightestShootingRtol, 1e-2 * rtol), format_si(out.value * scale, unit));
  return out;
}

}  // namespace netfold::integration
