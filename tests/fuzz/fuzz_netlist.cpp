// libFuzzer entry point: arbitrary bytes → parse_netlist → solve (bounded window) → every
// report writer. A netfold::Error is the expected refusal; any other exception, a sanitizer
// report, or a NaN/infinity in an output is a finding (see exercise.hpp).
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string_view>

#include "exercise.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  std::string_view bytes(reinterpret_cast<const char*>(data), size);
  if (auto problem = netfold_fuzz::exercise_netlist(bytes)) {
    std::fprintf(stderr, "netfold fuzz: %s\n", problem->c_str());
    std::abort();
  }
  return 0;
}
