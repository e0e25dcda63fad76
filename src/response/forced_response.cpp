#include "response/forced_response.hpp"

#include <numbers>

namespace netfold::detail {

std::vector<ForcedPhasor> forced_phasors(const Segment& s, const Drive& drive) {
  std::vector<ForcedPhasor> out;
  out.reserve(drive.phasors.size());
  for (const auto& p : drive.phasors) {
    ForcedPhasor f;
    f.frequency = p.frequency;
    f.omega_tau = 2.0 * std::numbers::pi * p.frequency * s.tau;
    f.response = {p.frequency, {0.0, 0.0}};
    for (const auto& q : s.state.phasors)
      if (q.frequency == p.frequency) f.response.value += q.value;
    f.gain = p.value != std::complex<double>(0.0, 0.0) ? f.response.value / p.value
                                                       : 1.0 / std::complex<double>(1.0, f.omega_tau);
    out.push_back(f);
  }
  return out;
}

}  // namespace netfold::detail
