// Every input the fuzzer found a problem with (tests/fuzz/regressions/), and every seed of its
// corpus, fed through the fuzz target's own path (tests/fuzz/exercise.hpp): parse, solve over
// a bounded window, report, CSV, JSON, SVG, text and derivation. Each must be refused with a
// netfold::Error or go through with every printed number finite; any other exception fails.
//
// tests/fuzz/regressions/pending.txt lists inputs whose fix is still to come (one file name a
// line, then its reason): they are not run, and the test lists them with WARN.
#include <catch2/catch.hpp>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "fuzz/exercise.hpp"

namespace fs = std::filesystem;

namespace {

std::string read_bytes(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

const fs::path kRegressions = "tests/fuzz/regressions";

std::set<std::string> pending_inputs() {
  std::set<std::string> names;
  std::ifstream in(kRegressions / "pending.txt");
  for (std::string line; std::getline(in, line);) {
    if (line.empty() || line[0] == '#') continue;
    names.insert(line.substr(0, line.find_first_of(" \t")));
  }
  return names;
}

std::vector<fs::path> files_in(const fs::path& dir, bool nf_only) {
  std::vector<fs::path> files;
  if (!fs::exists(dir)) return files;
  for (const auto& e : fs::directory_iterator(dir))
    if (e.is_regular_file() && (!nf_only || e.path().extension() == ".nf")) files.push_back(e.path());
  std::sort(files.begin(), files.end());
  return files;
}

}  // namespace

TEST_CASE("every fuzzer regression input is refused cleanly or solves with finite outputs", "[fuzz]") {
  const std::set<std::string> pending = pending_inputs();
  std::string skipped;
  int run = 0;
  for (const auto& file : files_in(kRegressions, false)) {
    const std::string name = file.filename().string();
    if (name == "pending.txt" || name == "README.md") continue;
    if (pending.count(name)) {
      skipped += "  " + name + "\n";
      continue;
    }
    INFO(file.string());
    std::optional<std::string> problem;
    CHECK_NOTHROW(problem = netfold_fuzz::exercise_netlist(read_bytes(file)));
    CHECK(problem.value_or("") == "");
    ++run;
  }
  for (const auto& name : pending) {
    INFO("pending.txt names " << name);
    CHECK(fs::exists(kRegressions / name));
  }
  if (!skipped.empty()) WARN("fuzz regressions waiting for a fix (tests/fuzz/regressions/pending.txt):\n" << skipped);
  CHECK(run + static_cast<int>(pending.size()) >= 1);
}

TEST_CASE("every seed of the fuzz corpus goes through the fuzz path without a problem", "[fuzz]") {
  std::vector<fs::path> seeds = files_in("netlists", true);
  for (const auto& f : files_in("netlists/bad", true)) seeds.push_back(f);
  REQUIRE(seeds.size() > 20);
  for (const auto& file : seeds) {
    INFO(file.string());
    std::optional<std::string> problem;
    CHECK_NOTHROW(problem = netfold_fuzz::exercise_netlist(read_bytes(file)));
    CHECK(problem.value_or("") == "");
  }
}

TEST_CASE("the fuzz path counts a refused input and a sound circuit as no problem", "[fuzz]") {
  // A refused input is not a problem ...
  CHECK_FALSE(netfold_fuzz::exercise_netlist("R1: resistor a -> , 1k\n").has_value());
  CHECK_FALSE(netfold_fuzz::exercise_netlist(std::string("\0\xff\xfe", 3)).has_value());
  // ... and a sound circuit goes through.
  CHECK_FALSE(netfold_fuzz::exercise_netlist("V1: voltage-source a -> gnd, dc 1 V\nR1: resistor a -> b, 1k\n"
                                             "C1: capacitor b -> gnd, 1u\n")
                  .has_value());
}
