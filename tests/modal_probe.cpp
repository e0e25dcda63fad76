// Test-only driver of the modal closed form for tests/scipy_modal_check.py: reads one problem as
// JSON on standard input, prints every state at the requested times as JSON on standard output.
//
//   in:  {"a": [[..]..], "b": [[..]..], "x0": [..], "t0": T0, "t1": T1, "times": [..],
//         "inputs": [{"dc": U, "phasors": [[f_Hz, re, im], ..]}, ..]}
//   out: {"ok": bool, "reason": "...", "estimated_error": e, "states": [[x(t) per state] per time],
//         "modes": [[re λ, im λ, multiplicity], ..]}
#include <iostream>

#include <nlohmann/json.hpp>

#include "response/modal.hpp"

namespace {

Eigen::MatrixXd matrix_of(const nlohmann::json& rows, Eigen::Index cols_if_empty) {
  const auto n = static_cast<Eigen::Index>(rows.size());
  const Eigen::Index m = n > 0 ? static_cast<Eigen::Index>(rows[0].size()) : cols_if_empty;
  Eigen::MatrixXd out(n, m);
  for (Eigen::Index i = 0; i < n; ++i)
    for (Eigen::Index j = 0; j < m; ++j)
      out(i, j) = rows[static_cast<std::size_t>(i)][static_cast<std::size_t>(j)].get<double>();
  return out;
}

}  // namespace

int main() {
  using namespace netfold;
  const nlohmann::json in = nlohmann::json::parse(std::cin);
  const Eigen::MatrixXd a = matrix_of(in.at("a"), 0);
  const Eigen::MatrixXd b = matrix_of(in.at("b"), 0);
  Eigen::VectorXd x0(a.rows());
  for (Eigen::Index i = 0; i < a.rows(); ++i) x0(i) = in.at("x0")[static_cast<std::size_t>(i)].get<double>();
  std::vector<Drive> inputs;
  for (const auto& u : in.at("inputs")) {
    Drive d;
    d.dc = u.value("dc", 0.0);
    for (const auto& p : u.value("phasors", nlohmann::json::array()))
      d.add_phasor(p[0].get<double>(), {p[1].get<double>(), p[2].get<double>()});
    inputs.push_back(d);
  }
  const auto m = response::solve_modal(a, b, x0, inputs, in.at("t0").get<double>(), in.at("t1").get<double>());
  nlohmann::json out;
  out["ok"] = m.accuracy().ok;
  out["reason"] = m.accuracy().reason;
  out["estimated_error"] = m.accuracy().estimated_error;
  out["states"] = nlohmann::json::array();
  for (const auto& t : in.at("times")) {
    const Eigen::VectorXd x = m.value(t.get<double>());
    out["states"].push_back(std::vector<double>(x.data(), x.data() + x.size()));
  }
  out["modes"] = nlohmann::json::array();
  for (const auto& mode : m.modes())
    out["modes"].push_back({mode.eigenvalue.real(), mode.eigenvalue.imag(), mode.multiplicity});
  std::cout << out.dump() << "\n";
  return 0;
}
