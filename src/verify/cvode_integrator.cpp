#include "verify/cvode_integrator.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <limits>

#include <cvode/cvode.h>
#include <fmt/format.h>
#include <sunlinsol/sunlinsol_dense.h>
#include <sunmatrix/sunmatrix_dense.h>

#include "netfold/units.hpp"

namespace netfold::integration {

namespace {

// dx/dt = f(t, x); with n more components, dq/dt = x (the integral of the state).
int state_rhs(sunrealtype t, N_Vector y, N_Vector ydot, void* user_data) {
  try {
    auto* eq = static_cast<StateEquation*>(user_data);
    const auto n = static_cast<sunindextype>(eq->size());
    const double* x = N_VGetArrayPointer(y);
    double* r = N_VGetArrayPointer(ydot);
    eq->rate(t, x, r);
    bool finite = true;
    for (sunindextype k = 0; k < n; ++k) finite = finite && std::isfinite(r[k]);
    if (N_VGetLength(y) > n)
      for (sunindextype k = 0; k < n; ++k) r[n + k] = x[k];
    return finite ? 0 : 1;  // 1: recoverable, CVODE retries with a smaller step
  } catch (...) {
    return -1;
  }
}

// ∂f/∂x = A of the configuration (exact: the network is linear); with the integrals, the
// block [[A, 0], [I, 0]].
int state_jacobian(sunrealtype /*t*/, N_Vector y, N_Vector /*fy*/, SUNMatrix jac, void* user_data, N_Vector /*tmp1*/,
                   N_Vector /*tmp2*/, N_Vector /*tmp3*/) {
  const auto* eq = static_cast<StateEquation*>(user_data);
  const Eigen::MatrixXd& a = eq->config().a;
  const auto n = static_cast<sunindextype>(a.rows());
  SUNMatZero(jac);
  for (sunindextype j = 0; j < n; ++j)
    for (sunindextype i = 0; i < n; ++i) SM_ELEMENT_D(jac, i, j) = a(i, j);
  if (N_VGetLength(y) > n)
    for (sunindextype k = 0; k < n; ++k) SM_ELEMENT_D(jac, n + k, k) = 1.0;
  return 0;
}

// The watched root functions (StateEquation::roots).
int state_roots(sunrealtype t, N_Vector y, sunrealtype* gout, void* user_data) {
  try {
    static_cast<StateEquation*>(user_data)->roots(t, N_VGetArrayPointer(y), gout);
    return 0;
  } catch (...) {
    return -1;
  }
}

std::string flag_name(int flag) {
  char* name = CVodeGetReturnFlagName(flag);
  std::string out = name ? name : fmt::format("flag {}", flag);
  std::free(name);
  return out;
}

}  // namespace

Integrator::Integrator(StepBudget& budget, std::size_t states, bool quadrature)
    : budget_(&budget), n_(std::max<std::size_t>(states, 1)), quadrature_(quadrature) {
  const auto n = static_cast<sunindextype>(quadrature ? 2 * n_ : n_);
  if (SUNContext_Create(nullptr, &ctx_) != 0) throw NumericError("cross-check: SUNContext_Create failed");
  y_ = N_VNew_Serial(n, ctx_);
  atol_ = y_ ? N_VNew_Serial(n, ctx_) : nullptr;
  a_ = atol_ ? SUNDenseMatrix(n, n, ctx_) : nullptr;
  ls_ = a_ ? SUNLinSol_Dense(y_, a_, ctx_) : nullptr;
  mem_ = ls_ ? CVodeCreate(CV_BDF, ctx_) : nullptr;
  if (!mem_) {
    release();
    throw NumericError("cross-check: CVODE could not be created (out of memory)");
  }
  check(CVodeSetErrHandlerFn(mem_, &Integrator::on_error, this), "CVodeSetErrHandlerFn");
}

Integrator::~Integrator() { release(); }

void Integrator::start(StateEquation& eq, double t0, const Eigen::VectorXd& x0, double tstop, double rtol,
                       const Eigen::VectorXd& atol, double hmax) {
  const auto n = static_cast<Eigen::Index>(n_);
  double* y = N_VGetArrayPointer(y_);
  double* tol = N_VGetArrayPointer(atol_);
  for (Eigen::Index k = 0; k < n; ++k) {
    y[k] = k < x0.size() ? x0[k] : 0.0;
    tol[k] = k < atol.size() ? atol[k] : 1.0;
    // The integral's absolute tolerance: the state's over the span of the run.
    if (quadrature_) {
      y[n + k] = 0.0;
      tol[n + k] = std::max(tol[k] * (tstop - t0), tol[k]);
    }
  }
  if (!initialized_) {
    check(CVodeInit(mem_, state_rhs, t0, y_), "CVodeInit");
    check(CVodeSetLinearSolver(mem_, ls_, a_), "CVodeSetLinearSolver");
    check(CVodeSetJacFn(mem_, state_jacobian), "CVodeSetJacFn");
    // A Newton matrix I − γ·A rebuilt at every step (γ current): for this linear equation one
    // Newton iteration then solves the corrector to rounding, so the sampled state satisfies
    // the BDF formula (see advance_to).
    check(CVodeSetLSetupFrequency(mem_, 1), "CVodeSetLSetupFrequency");
    initialized_ = true;
  } else {
    check(CVodeReInit(mem_, t0, y_), "CVodeReInit");
  }
  check(CVodeSetUserData(mem_, &eq), "CVodeSetUserData");
  check(CVodeSVtolerances(mem_, rtol, atol_), "CVodeSVtolerances");
  check(CVodeSetMaxStep(mem_, hmax), "CVodeSetMaxStep");
  if (roots_ > 0) {
    check(CVodeRootInit(mem_, 0, nullptr), "CVodeRootInit");
    roots_ = 0;
  }
  eq_ = &eq;
  t0_ = t0;
  tstop_ = tstop;
  t_ = t0;
  x0_ = Eigen::Map<const Eigen::VectorXd>(y, n);
  x_ = x0_;
  q_ = Eigen::VectorXd::Zero(n);
  base_ = counters();
  ++total_.restarts;
}

// Every output is a step's end (CVodeSetStopTime at t), never an interpolation between steps:
// the interpolant is accurate in the state only to rtol, and in a stiff segment an observable
// that is a small difference of large terms (the capacitor current while v_C tracks its source,
// ωτ ≪ 1) would amplify that by 1/(ωτ). At a step's end the state satisfies the corrector,
// whose error along the fast mode is damped by the step itself.
bool Integrator::advance_to(double t, Eigen::VectorXd& x) {
  t = std::min(t, tstop_);
  if (t <= t_) {
    x = t <= t0_ ? x0_ : x_;
    return true;
  }
  // CVODE refuses a first output closer to t0 than a few ulps of t (CV_TOO_CLOSE); over such a
  // gap one Euler step is exact to rounding.
  const double ulps = 4.0 * std::numeric_limits<double>::epsilon() * std::max(std::fabs(t_), std::fabs(t));
  if (t_ == t0_ && t - t0_ <= ulps) {
    Eigen::VectorXd r(x0_.size());
    eq_->rate(t0_, x0_.data(), r.data());
    x = x0_ + r * (t - t0_);
    return true;
  }
  const long remaining = budget_->limit - budget_->used - (counters().steps - base_.steps);
  if (remaining <= 0) return stop_for_budget(t);
  check(CVodeSetMaxNumSteps(mem_, remaining), "CVodeSetMaxNumSteps");
  check(CVodeSetStopTime(mem_, t), "CVodeSetStopTime");
  sunrealtype tret = t_;
  const int flag = CVode(mem_, t, y_, &tret, CV_NORMAL);
  if (flag == CV_TOO_MUCH_WORK) return stop_for_budget(t);
  if (flag < 0) {
    sunrealtype tcur = t_;
    CVodeGetCurrentTime(mem_, &tcur);
    status_ = IntegrationStatus::failed;
    message_ = fmt::format("CVODE stopped at t = {} on its way to {} with {} ({}){}{}", format_si(tcur, "s"),
                           format_si(t, "s"), flag_name(flag), flag, last_error_.empty() ? "" : ": ", last_error_);
    return false;
  }
  const auto n = static_cast<Eigen::Index>(n_);
  const double* y = N_VGetArrayPointer(y_);
  if (quadrature_) q_ = Eigen::Map<const Eigen::VectorXd>(y + n, n);
  t_ = t;
  x_ = Eigen::Map<const Eigen::VectorXd>(y, n);
  x = x_;
  return true;
}

void Integrator::watch_roots() {
  const std::vector<Watch>& w = eq_->watches();
  roots_ = static_cast<int>(w.size());
  check(CVodeRootInit(mem_, roots_, roots_ > 0 ? state_roots : nullptr), "CVodeRootInit");
  if (roots_ == 0) return;
  std::vector<int> direction;
  for (const Watch& x : w) direction.push_back(x.direction);
  check(CVodeSetRootDirection(mem_, direction.data()), "CVodeSetRootDirection");
  // A function that is zero at the start and stays zero is no root (CVODE's own test): no
  // warning either.
  check(CVodeSetNoInactiveRootWarn(mem_), "CVodeSetNoInactiveRootWarn");
}

Integrator::Reached Integrator::advance_until(double t, Eigen::VectorXd& x, double& at, std::vector<int>& fired) {
  at = std::min(t, tstop_);
  fired.clear();
  if (roots_ == 0 || at <= t_ || (t_ == t0_ && at - t0_ <= 4.0 * std::numeric_limits<double>::epsilon() *
                                                               std::max(std::fabs(t_), std::fabs(at))))
    return advance_to(t, x) ? Reached::target : Reached::stopped;
  const long remaining = budget_->limit - budget_->used - (counters().steps - base_.steps);
  if (remaining <= 0) return stop_for_budget(at) ? Reached::target : Reached::stopped;
  check(CVodeSetMaxNumSteps(mem_, remaining), "CVodeSetMaxNumSteps");
  check(CVodeSetStopTime(mem_, at), "CVodeSetStopTime");
  sunrealtype tret = t_;
  const int flag = CVode(mem_, at, y_, &tret, CV_NORMAL);
  if (flag == CV_TOO_MUCH_WORK) return stop_for_budget(at) ? Reached::target : Reached::stopped;
  if (flag < 0) {
    sunrealtype tcur = t_;
    CVodeGetCurrentTime(mem_, &tcur);
    status_ = IntegrationStatus::failed;
    message_ = fmt::format("CVODE stopped at t = {} on its way to {} with {} ({}){}{}", format_si(tcur, "s"),
                           format_si(at, "s"), flag_name(flag), flag, last_error_.empty() ? "" : ": ", last_error_);
    return Reached::stopped;
  }
  const auto n = static_cast<Eigen::Index>(n_);
  const double* y = N_VGetArrayPointer(y_);
  t_ = flag == CV_ROOT_RETURN ? tret : at;
  x_ = Eigen::Map<const Eigen::VectorXd>(y, n);
  x = x_;
  if (flag != CV_ROOT_RETURN) return Reached::target;
  fired.assign(static_cast<std::size_t>(roots_), 0);
  check(CVodeGetRootInfo(mem_, fired.data()), "CVodeGetRootInfo");
  at = tret;
  return Reached::root;
}

void Integrator::finish() {
  const IntegrationStats now = counters();
  total_.steps += now.steps - base_.steps;
  total_.rhs_evals += now.rhs_evals - base_.rhs_evals;
  total_.error_test_failures += now.error_test_failures - base_.error_test_failures;
  total_.nonlinear_conv_failures += now.nonlinear_conv_failures - base_.nonlinear_conv_failures;
  total_.linear_setups += now.linear_setups - base_.linear_setups;
  budget_->used += now.steps - base_.steps;
  base_ = now;
}

void Integrator::release() {
  if (mem_) CVodeFree(&mem_);
  if (ls_) SUNLinSolFree(ls_);
  if (a_) SUNMatDestroy(a_);
  if (atol_) N_VDestroy(atol_);
  if (y_) N_VDestroy(y_);
  if (ctx_) SUNContext_Free(&ctx_);
  mem_ = nullptr;
  ls_ = nullptr;
  a_ = nullptr;
  atol_ = nullptr;
  y_ = nullptr;
}

void Integrator::check(int flag, const char* what) {
  if (flag < 0)
    throw NumericError(fmt::format("cross-check: {} failed with {} ({}){}{}", what, flag_name(flag), flag,
                                   last_error_.empty() ? "" : ": ", last_error_));
}

IntegrationStats Integrator::counters() const {
  IntegrationStats s;
  if (!initialized_) return s;
  CVodeGetNumSteps(mem_, &s.steps);
  CVodeGetNumRhsEvals(mem_, &s.rhs_evals);
  CVodeGetNumErrTestFails(mem_, &s.error_test_failures);
  CVodeGetNumNonlinSolvConvFails(mem_, &s.nonlinear_conv_failures);
  CVodeGetNumLinSolvSetups(mem_, &s.linear_setups);
  return s;
}

bool Integrator::stop_for_budget(double t) {
  sunrealtype tcur = t0_;
  if (initialized_) CVodeGetCurrentTime(mem_, &tcur);
  status_ = IntegrationStatus::budget_exhausted;
  message_ = fmt::format("the step budget of {} CVODE steps was spent at t = {}, on the way to {}", budget_->limit,
                         format_si(tcur, "s"), format_si(t, "s"));
  return false;
}

void Integrator::on_error(int code, const char* /*module*/, const char* function, char* msg, void* self) {
  if (code == CV_WARNING) return;  // e.g. "t + h = t": CVODE copes, the error test decides
  static_cast<Integrator*>(self)->last_error_ = fmt::format("{}: {}", function ? function : "CVODE", msg ? msg : "");
}

}  // namespace netfold::integration
