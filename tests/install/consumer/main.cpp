// Solves a circuit with the installed netfold library and prints a few of its figures.
//   consumer FILE.nf
#include <iostream>

#include "netfold/diagnostics.hpp"
#include "netfold/parse.hpp"
#include "netfold/solve.hpp"
#include "netfold/units.hpp"

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: consumer FILE.nf\n";
    return 2;
  }
  try {
    netfold::Circuit circuit = netfold::parse_netlist_file(argv[1]);
    netfold::Solution solution = netfold::solve(circuit);
    std::cout << "segments: " << solution.segments().size() << '\n';
    std::cout << "tau[1] = " << netfold::format_si(solution.segments().front().tau, "s") << '\n';
    for (const auto& observable : solution.observables()) {
      netfold::Peak peak = netfold::find_peak(solution, observable);
      std::cout << "peak " << observable.text << " = "
                << netfold::format_si(peak.value, netfold::dimension_symbol(observable.dimension())) << " at "
                << netfold::format_si(peak.time, "s") << '\n';
    }
  } catch (const netfold::Error& e) {
    std::cerr << e.what() << '\n';
    return static_cast<int>(e.exit_code());
  }
  return 0;
}
