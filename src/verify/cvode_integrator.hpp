#pragma once
// CVODE (BDF, Newton, a dense Newton matrix) on one StateEquation at a time, restarted at every
// event; private to src/verify/.

#include <cstdint>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include <nvector/nvector_serial.h>
#include <sundials/sundials_context.h>
#include <sundials/sundials_linearsolver.h>
#include <sundials/sundials_matrix.h>

#include "netfold/integrate.hpp"
#include "verify/state_equation.hpp"

namespace netfold::integration {

// The step budget shared by every run of one integration (shooting runs and segments).
struct StepBudget {
  long limit = 0;
  long used = 0;  // steps of the runs finished so far
};

// CVODE with a dense n×n Newton matrix I − γ·A (n states); its Jacobian is the configuration's
// A (Configuration::a, from full nodal solves with unit states: the network is linear, so it
// is exact). With `quadrature`, the system has n more components Q = ∫x dt from each start
// (dQ/dt = x, a 2n×2n Newton matrix; CVODE has no separate quadrature), under the same error
// control.
class Integrator {
 public:
  Integrator(StepBudget& budget, std::size_t states, bool quadrature);
  ~Integrator();
  Integrator(const Integrator&) = delete;
  Integrator& operator=(const Integrator&) = delete;

  // (Re)starts at x(t0) = x0 on `eq`, never stepping past tstop; hmax = 0: no step limit.
  // atol: one absolute tolerance per state (the quadrature's are the states' times the span).
  void start(StateEquation& eq, double t0, const Eigen::VectorXd& x0, double tstop, double rtol,
             const Eigen::VectorXd& atol, double hmax);
  // Advances to t (t0 ≤ t ≤ tstop) and gives x(t); false when the run had to stop (status()).
  bool advance_to(double t, Eigen::VectorXd& x);
  // Watches the equation's root functions (StateEquation::watches) from now until the next
  // start(); none: watches nothing.
  void watch_roots();
  // What advance_until met.
  enum class Reached : std::uint8_t { target, root, stopped };
  // Like advance_to, but stops at the first root of a watched function before t: then `at` is
  // its time, x the (interpolated) state there and `fired` says which functions crossed.
  Reached advance_until(double t, Eigen::VectorXd& x, double& at, std::vector<int>& fired);
  // ∫x dt from the start to the last output (quadrature runs only).
  const Eigen::VectorXd& quadrature() const { return q_; }
  // Adds the counters of the run since the last start() to the totals and to the budget.
  void finish();

  const IntegrationStats& totals() const { return total_; }
  IntegrationStatus status() const { return status_; }
  const std::string& message() const { return message_; }

 private:
  StepBudget* budget_;
  std::size_t n_;
  bool quadrature_;
  SUNContext ctx_ = nullptr;
  N_Vector y_ = nullptr, atol_ = nullptr;
  SUNMatrix a_ = nullptr;
  SUNLinearSolver ls_ = nullptr;
  void* mem_ = nullptr;
  bool initialized_ = false;
  StateEquation* eq_ = nullptr;
  double t0_ = 0.0, tstop_ = 0.0, t_ = 0.0;
  Eigen::VectorXd x0_, x_, q_;  // the start, and the last output
  IntegrationStats total_, base_;
  IntegrationStatus status_ = IntegrationStatus::ok;
  std::string message_, last_error_;

  void release();
  void check(int flag, const char* what);
  IntegrationStats counters() const;
  bool stop_for_budget(double t);
  int roots_ = 0;  // functions watched since the last watch_roots()
  static void on_error(int code, const char* module, const char* function, char* msg, void* self);
};

}  // namespace netfold::integration
