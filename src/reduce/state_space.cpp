#include "reduce/state_space.hpp"

namespace netfold {

StateSpace state_space(const Circuit& circuit, const ReducedNetwork& network) {
  const NodalSystem& sys = network.system();
  StateSpace ss;
  ss.states = sys.state_elements();
  const auto n = static_cast<Eigen::Index>(ss.states.size());
  const std::uint32_t first_source = sys.first_source_input();
  const std::uint32_t inputs = sys.input_count() - (sys.test_port_input() == kNone ? 0u : 1u);
  const auto m = static_cast<Eigen::Index>(inputs - first_source);
  ss.a = Eigen::MatrixXd::Zero(n, n);
  ss.b = Eigen::MatrixXd::Zero(n, m);
  for (Eigen::Index i = 0; i < n; ++i) {
    if (sys.port_mode(static_cast<std::size_t>(i)) != PortMode::port) continue;
    const LinearForm port = sys.port_quantity(static_cast<std::size_t>(i));
    const std::vector<double> c = network.coefficients(port);
    const double value = circuit.element(ss.states[static_cast<std::size_t>(i)]).value;
    for (std::uint32_t j = 0; j < inputs; ++j) {
      if (c[j] == 0.0 || network.negligible(port, j, c[j])) continue;
      if (j < first_source) {
        if (sys.port_mode(j) == PortMode::port) ss.a(i, j) = c[j] / value;
      } else {
        ss.b(i, j - first_source) = c[j] / value;
      }
    }
  }
  return ss;
}

}  // namespace netfold
