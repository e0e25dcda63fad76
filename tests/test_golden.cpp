// Tests of golden waveform comparison: a change of 0.1 % in one component value is caught,
// the tolerance is relative to each column's peak, mismatched shapes are explained, and
// --update-golden rewrites the file atomically.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <memory>
#include <sstream>
#include <string>

#include <fmt/format.h>

#include "temp_dir.hpp"
#include "netfold/golden.hpp"
#include "netfold/parse.hpp"
#include "netfold/report.hpp"
#include "netfold/solve.hpp"

using namespace netfold;
namespace fs = std::filesystem;
using netfold_test::TempDir;
using netfold_test::read_file;
using netfold_test::write_file;

namespace {

// A valve-like RL circuit switched on and off; `r` is the coil resistance in ohm.
std::string coil(double r, const std::string& extra = "") {
  return fmt::format(
      "supply: voltage-source l -> gnd, cosine 24 V 50 Hz\n"
      "K1: switch l -> a, closes at 0 s, opens at 35 ms\n"
      "coil_r: resistor a -> b, {} ohm\n"
      "coil_l: inductor b -> gnd, 120 mH\n"
      "free_r: resistor a -> gnd, 470 ohm\n"
      "watch coil_l.i, @a\n"
      "window 0 .. 60 ms\n"
      "resolution 50 us\n{}",
      r, extra);
}

std::string csv_of(const std::string& text) {
  Circuit c = parse_netlist(text, "golden.nf");
  Solution s = solve(c);
  return waveform_csv(s);
}

}  // namespace

TEST_CASE("a waveform compared with itself passes", "[golden]") {
  std::string csv = csv_of(coil(18.0));
  GoldenResult r = compare_golden(csv, csv, kDefaultGoldenTolerance, "coil.golden.csv");
  INFO(r.message);
  CHECK(r.passed);
  CHECK(r.message.find("1201 rows × 3 columns") != std::string::npos);
}

TEST_CASE("a 0.1 % change in one resistor fails the golden comparison", "[golden]") {
  TempDir dir;
  const fs::path nf = dir.path() / "coil.nf";
  // The golden file is written from the circuit as accepted...
  write_file(dir.path() / "coil.golden.csv", csv_of(coil(18.0)));
  // ...then the coil resistance moves by 0.1 % in the text.
  write_file(nf, coil(18.0 * 1.001));
  Circuit c = parse_netlist_file(nf);
  Solution s = solve(c);
  std::optional<GoldenResult> r = check_golden(s, nf, false);
  REQUIRE(r);
  INFO(r->message);
  CHECK_FALSE(r->passed);
  CHECK_FALSE(r->updated);
  // The coil current changes by about 0.1 %, far above 1e-6 of its peak.
  CHECK(r->message.find("column 'coil_l.i' differs") != std::string::npos);
  CHECK(r->golden_path == (dir.path() / "coil.golden.csv").generic_string());

  // The unchanged circuit still matches its golden file.
  write_file(nf, coil(18.0));
  Circuit same = parse_netlist_file(nf);
  Solution same_solution = solve(same);
  std::optional<GoldenResult> ok = check_golden(same_solution, nf, false);
  REQUIRE(ok);
  INFO(ok->message);
  CHECK(ok->passed);
}

TEST_CASE("the golden-tolerance directive loosens the comparison of its file", "[golden]") {
  TempDir dir;
  const fs::path nf = dir.path() / "coil.nf";
  write_file(dir.path() / "coil.golden.csv", csv_of(coil(18.0)));
  // 0.1 % in R moves the current by less than 1 % of its peak: a 1 % tolerance passes...
  write_file(nf, coil(18.0 * 1.001, "golden-tolerance 1 %\n"));
  Circuit loose = parse_netlist_file(nf);
  REQUIRE(loose.golden_tolerance());
  CHECK(*loose.golden_tolerance() == Approx(0.01));
  Solution s = solve(loose);
  std::optional<GoldenResult> r = check_golden(s, nf, false);
  REQUIRE(r);
  INFO(r->message);
  CHECK(r->passed);
  // ...and 1e-5 does not.
  write_file(nf, coil(18.0 * 1.001, "golden-tolerance 1e-5\n"));
  Circuit tight = parse_netlist_file(nf);
  Solution st = solve(tight);
  std::optional<GoldenResult> t = check_golden(st, nf, false);
  REQUIRE(t);
  CHECK_FALSE(t->passed);
}

TEST_CASE("the tolerance is relative to each column's own peak", "[golden]") {
  // Column a peaks at 10 (allowed 1e-5), column b at 1e-3 (allowed 1e-9).
  const std::string golden = "t,a,b\n0,10,0.001\n1,-5,0.0005\n";
  CHECK(compare_golden("t,a,b\n0,10.000009,0.001\n1,-5,0.0005\n", golden, 1e-6, "g.csv").passed);
  GoldenResult big = compare_golden("t,a,b\n0,10.00002,0.001\n1,-5,0.0005\n", golden, 1e-6, "g.csv");
  CHECK_FALSE(big.passed);
  CHECK(big.message.find("column 'a' differs") != std::string::npos);
  CHECK(big.message.find("(row 2)") != std::string::npos);
  // 1e-8 on b is small in absolute terms but 1e-5 of b's peak.
  GoldenResult small = compare_golden("t,a,b\n0,10,0.001\n1,-5,0.00050001\n", golden, 1e-6, "g.csv");
  CHECK_FALSE(small.passed);
  CHECK(small.message.find("column 'b' differs") != std::string::npos);
  // A column that was all zero fails when it moves at all.
  CHECK_FALSE(compare_golden("t,z\n0,0\n1,1e-30\n", "t,z\n0,0\n1,0\n", 1e-6, "g.csv").passed);
  CHECK(compare_golden("t,z\n0,0\n1,0\n", "t,z\n0,0\n1,0\n", 1e-6, "g.csv").passed);
}

TEST_CASE("a golden file of another shape fails with a message saying what differs", "[golden]") {
  const std::string golden = "t,a\n0,1\n1,2\n";
  GoldenResult header = compare_golden("t,b\n0,1\n1,2\n", golden, 1e-6, "g.csv");
  CHECK_FALSE(header.passed);
  CHECK(header.message == "the columns differ: golden 't,a', now 't,b'");
  GoldenResult rows = compare_golden("t,a\n0,1\n1,2\n2,3\n", golden, 1e-6, "g.csv");
  CHECK_FALSE(rows.passed);
  CHECK(rows.message.find("the row count differs: golden 2 rows, now 3") == 0);
  GoldenResult times = compare_golden("t,a\n0,1\n1.5,2\n", golden, 1e-6, "g.csv");
  CHECK_FALSE(times.passed);
  CHECK(times.message.find("the sample times differ") == 0);
  GoldenResult text = compare_golden("t,a\n0,1\n1,2\n", "t,a\n0,1\n1,two\n", 1e-6, "g.csv");
  CHECK_FALSE(text.passed);
  CHECK(text.message.find("g.csv:3:3: expected a number, found 'two'") == 0);
  GoldenResult empty = compare_golden("t,a\n0,1\n", "", 1e-6, "g.csv");
  CHECK_FALSE(empty.passed);
  CHECK(empty.message.find("g.csv:1:1: expected a header line, found an empty file") == 0);
  // Windows line ends in a golden file are not a difference.
  CHECK(compare_golden("t,a\n0,1\n1,2\n", "t,a\r\n0,1\r\n1,2\r\n", 1e-6, "g.csv").passed);
}

TEST_CASE("no golden file beside the netlist means no comparison", "[golden]") {
  TempDir dir;
  const fs::path nf = dir.path() / "lonely.nf";
  write_file(nf, coil(18.0));
  Circuit c = parse_netlist_file(nf);
  Solution s = solve(c);
  CHECK_FALSE(check_golden(s, nf, false));
  // --update-golden rewrites golden files; it does not create them.
  CHECK_FALSE(check_golden(s, nf, true));
  CHECK_FALSE(fs::exists(dir.path() / "lonely.golden.csv"));
  CHECK(golden_path_for("lib/x/valve.nf") == fs::path("lib/x/valve.golden.csv"));
}

TEST_CASE("update-golden rewrites the golden file atomically and then it matches", "[golden]") {
  TempDir dir;
  const fs::path nf = dir.path() / "coil.nf";
  const fs::path golden = dir.path() / "coil.golden.csv";
  write_file(golden, "t,stale\n0,0\n");
  write_file(nf, coil(18.0));
  Circuit c = parse_netlist_file(nf);
  Solution s = solve(c);
  std::optional<GoldenResult> before = check_golden(s, nf, false);
  REQUIRE(before);
  CHECK_FALSE(before->passed);

  std::optional<GoldenResult> updated = check_golden(s, nf, true);
  REQUIRE(updated);
  CHECK(updated->passed);
  CHECK(updated->updated);
  CHECK(read_file(golden) == waveform_csv(s));
  // Nothing but the netlist and its golden file is left: the temporary file was renamed.
  std::size_t entries = 0;
  for ([[maybe_unused]] const auto& e : fs::directory_iterator(dir.path())) ++entries;
  CHECK(entries == 2);

  std::optional<GoldenResult> after = check_golden(s, nf, false);
  REQUIRE(after);
  INFO(after->message);
  CHECK(after->passed);
}

// Issue 12 item 10: "Golden files holding `inf` always pass." With inf in a column, its peak is
// inf, the allowance tolerance × peak is inf, and |fresh − golden| ≤ inf holds for every
// fresh value. A golden file is a CSV of finite numbers; anything else is refused at its line
// and column (docs/golden.md).
TEST_CASE("issue 12 item 10: a golden file holding a non-finite value is refused at its line and column",
          "[golden]") {
  const std::string fresh = "t,a\n0,1\n1,2\n";
  struct Bad {
    std::string golden;
    std::string message;
  };
  for (const Bad& bad : {Bad{"t,a\n0,1\n1,inf\n", "g.csv:3:3: expected a finite number, found 'inf'"},
                         Bad{"t,a\n0,1\n1,-inf\n", "g.csv:3:3: expected a finite number, found '-inf'"},
                         Bad{"t,a\n0,inf\n1,2\n", "g.csv:2:3: expected a finite number, found 'inf'"},
                         Bad{"t,a\n0,1\n1, infinity\n", "g.csv:3:4: expected a finite number, found 'infinity'"},
                         Bad{"t,a\n0,nan\n1,2\n", "g.csv:2:3: expected a finite number, found 'nan'"},
                         Bad{"t,a\ninf,1\n1,2\n", "g.csv:2:1: expected a finite number, found 'inf'"},
                         Bad{"t,a\n0,1\n1,1e999\n", "g.csv:3:3: expected a number double precision can carry, "
                                                    "found '1e999'"}}) {
    INFO(bad.golden);
    GoldenResult r = compare_golden(fresh, bad.golden, 1e-6, "g.csv");
    CHECK_FALSE(r.passed);
    CHECK(r.message == bad.message + "; rewrite it with --update-golden");
  }
  // The same through a file beside its netlist, as `check` reads it: a golden file whose
  // every value is inf passes no waveform.
  TempDir dir;
  const fs::path nf = dir.path() / "coil.nf";
  write_file(nf, coil(18.0));
  std::string golden = csv_of(coil(18.0));
  std::string all_inf = golden.substr(0, golden.find('\n') + 1);
  for (std::size_t row = 0; row < 1201; ++row) all_inf += fmt::format("{},inf,inf\n", static_cast<double>(row) * 50e-6);
  write_file(dir.path() / "coil.golden.csv", all_inf);
  std::optional<GoldenResult> r = check_golden(solve(parse_netlist_file(nf)), nf, false);
  REQUIRE(r);
  CHECK_FALSE(r->passed);
  CHECK(r->message.find((dir.path() / "coil.golden.csv").generic_string() + ":2:") == 0);
}
