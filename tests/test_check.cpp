// Tests of `check`: finding the files, sharding, a broken file reported without stopping the
// run, error-gallery files, determinism over threads, JUnit XML read back by a real XML
// parser (Python's xml.etree), and the built binary run on the project's own library.
#include <catch2/catch.hpp>

#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "temp_dir.hpp"
#include "netfold/check.hpp"
#include "netfold/diagnostics.hpp"
#include "netfold/parse.hpp"

using namespace netfold;
namespace fs = std::filesystem;
using netfold_test::TempDir;
using netfold_test::read_file;
using netfold_test::write_file;

namespace {

// An RC of 1 kohm and 1 µF (tau = 1 ms) with one claim that holds and one of `extra`.
std::string rc(const std::string& extra = "") {
  return "V1: voltage-source s -> gnd, dc 5 V\n"
         "K1: switch s -> a, closes at 0 s\n"
         "R1: resistor a -> b, 1 kohm\n"
         "C1: capacitor b -> gnd, 1 uF\n"
         "expect tau = 1 ms ± 1%\n" +
         extra;
}

// Runs a shell command; returns its exit status (-1 when it did not exit normally).
int run(const std::string& command) {
  int status = std::system(command.c_str());
  if (status == -1 || !WIFEXITED(status)) return -1;
  return WEXITSTATUS(status);
}

std::string shell_quote(const std::string& s) {
  std::string out = "'";
  for (char c : s) out += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return out + "'";
}

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  for (std::string line; std::getline(in, line);) lines.push_back(line);
  return lines;
}

std::string text_of(const CheckReport& report) {
  std::ostringstream out;
  write_check_text(out, report);
  return out.str();
}

}  // namespace

TEST_CASE("netlists are found recursively, each once, sorted by path", "[check]") {
  TempDir dir;
  write_file(dir.path() / "b.nf", rc());
  write_file(dir.path() / "a.nf", rc());
  write_file(dir.path() / "sub" / "deeper" / "c.nf", rc());
  write_file(dir.path() / "notes.txt", "not a netlist");
  write_file(dir.path() / "a.golden.csv", "t\n0\n");
  const std::string d = dir.path().generic_string();
  std::vector<fs::path> files = find_netlists({d, d + "/a.nf", d + "/sub/"});
  REQUIRE(files.size() == 3);
  CHECK(files[0].generic_string() == d + "/a.nf");
  CHECK(files[1].generic_string() == d + "/b.nf");
  CHECK(files[2].generic_string() == d + "/sub/deeper/c.nf");
}

TEST_CASE("a path that does not exist or holds no netlist is bad input", "[check]") {
  TempDir dir;
  try {
    find_netlists({(dir.path() / "missing").string()});
    FAIL("no error");
  } catch (const InputError& e) {
    CHECK(e.exit_code() == ExitCode::bad_input);
    CHECK(std::string(e.what()).find("does not exist") != std::string::npos);
  }
  write_file(dir.path() / "readme.txt", "x");
  CHECK_THROWS_AS(find_netlists({dir.path().string()}), InputError);
}

TEST_CASE("the shard argument is K/N with 1 <= K <= N", "[check]") {
  Shard s = parse_shard_argument("2/5");
  CHECK(s.index == 2);
  CHECK(s.count == 5);
  CHECK(parse_shard_argument("1/1").count == 1);
  for (const char* bad : {"0/3", "4/3", "3", "a/b", "1/0", "-1/2", "1/2/3", "1 /2", ""}) {
    INFO(bad);
    CHECK_THROWS_AS(parse_shard_argument(bad), InputError);
  }
}

TEST_CASE("the shards of a file list cover every file exactly once", "[check]") {
  std::vector<fs::path> files;
  for (int k = 0; k < 23; ++k) files.emplace_back(fmt::format("lib/circuit_{:02}.nf", k));
  for (int n = 1; n <= 30; ++n) {
    INFO("N = " << n);
    std::multiset<std::string> seen;
    std::size_t smallest = files.size(), largest = 0;
    for (int k = 1; k <= n; ++k) {
      std::vector<fs::path> shard = select_shard(files, Shard{k, n});
      for (const auto& f : shard) seen.insert(f.generic_string());
      smallest = std::min(smallest, shard.size());
      largest = std::max(largest, shard.size());
    }
    // The union is every file and no file is in two shards (pairwise disjoint).
    CHECK(seen.size() == files.size());
    for (const auto& f : files) CHECK(seen.count(f.generic_string()) == 1);
    // Round-robin keeps the shards within one file of each other.
    CHECK(largest - smallest <= 1);
  }
}

TEST_CASE("a broken file is reported with its diagnostic and the other files still run", "[check]") {
  TempDir dir;
  write_file(dir.path() / "a_good.nf", rc());
  write_file(dir.path() / "b_broken.nf", "V1: voltage-source s -> gnd, dc 5 V\nR1: resistor s gnd, 1 kohm\n");
  write_file(dir.path() / "c_false.nf", rc("expect peak C1.v < 4 V\n"));
  std::vector<fs::path> files = find_netlists({dir.path().string()});
  REQUIRE(files.size() == 3);
  CheckReport report = check_files(files, {});
  REQUIRE(report.files.size() == 3);

  const FileResult& broken = report.files[1];
  REQUIRE(broken.cases.size() == 1);
  CHECK(broken.cases[0].kind == CaseKind::parse);
  CHECK_FALSE(broken.cases[0].passed);
  CHECK(broken.cases[0].is_error());
  CHECK(broken.cases[0].location == broken.path + ":2:16");
  CHECK(broken.cases[0].message.find("does not parse: expected '->'") == 0);
  CHECK(broken.errors() == 1);

  // The files around it ran: one claim passes, and a false claim (5 V charge, claimed < 4 V) fails.
  CHECK(report.files[0].cases.size() == 1);
  CHECK(report.files[0].cases[0].passed);
  REQUIRE(report.files[2].cases.size() == 2);
  CHECK(report.files[2].cases[0].passed);
  CHECK_FALSE(report.files[2].cases[1].passed);
  CHECK(report.files[2].failures() == 1);
  CHECK(report.passed() == 2);
  CHECK(report.failed() == 2);

  std::vector<std::string> lines = lines_of(text_of(report));
  REQUIRE(lines.size() == 5);
  CHECK(lines[0].rfind("PASS " + report.files[0].path + ":5: tau = 1 ms ± 1% — computed 1 ms", 0) == 0);
  CHECK(lines[1].rfind("FAIL " + broken.path + ":2:16: parse — does not parse", 0) == 0);
  CHECK(lines[3].rfind("FAIL " + report.files[2].path + ":6: peak C1.v < 4 V — computed", 0) == 0);
  CHECK(lines[4] == "2 passed, 2 failed");
}

TEST_CASE("a circuit that parses but does not solve fails its claims with the reason", "[check]") {
  TempDir dir;
  // Two capacitors straight in parallel: a loop with no resistance, which the engine refuses.
  write_file(dir.path() / "two.nf", rc("C2: capacitor a -> gnd, 1 uF\nC3: capacitor a -> gnd, 1 uF\n"));
  FileResult r = check_file(dir.path() / "two.nf", false);
  REQUIRE(r.cases.size() == 2);
  CHECK(r.cases[0].kind == CaseKind::solve);
  CHECK(r.cases[0].is_error());
  CHECK(r.cases[0].message.find("does not solve: ") == 0);
  CHECK(r.cases[0].message.find("form a loop with no resistance") != std::string::npos);
  CHECK(r.cases[1].kind == CaseKind::claim);
  CHECK_FALSE(r.cases[1].passed);
  CHECK(r.cases[1].message.find("not evaluated: the circuit does not solve") == 0);
}

TEST_CASE("error-gallery files pass when they are refused as their first line says", "[check]") {
  TempDir dir;
  const fs::path d = dir.path();
  write_file(d / "refused.nf", "# expect-error\nR1: resistor a gnd, 1 kohm\n");
  write_file(d / "refused_text.nf", "# expect-error: expected '->'\nR1: resistor a gnd, 1 kohm\n");
  write_file(d / "wrong_text.nf", "# expect-error: unknown unit\nR1: resistor a gnd, 1 kohm\n");
  write_file(d / "positioned.nf", "# error 2:16: expected '->'\nR1: resistor a gnd, 1 kohm\n");
  write_file(d / "wrong_position.nf", "# error 2:3: expected '->'\nR1: resistor a gnd, 1 kohm\n");
  write_file(d / "accepted.nf", "# expect-error\n" + rc());
  write_file(d / "unsolvable.nf", "# expect-error: form a loop with no resistance\n" +
                                       rc("C2: capacitor a -> gnd, 1 uF\nC3: capacitor a -> gnd, 1 uF\n"));
  auto only = [&](const char* name) {
    FileResult r = check_file(d / name, false);
    REQUIRE(r.cases.size() == 1);
    INFO(r.cases[0].message);
    CHECK(r.cases[0].kind == CaseKind::refusal);
    return r.cases[0];
  };
  CHECK(only("refused.nf").passed);
  CHECK(only("refused_text.nf").passed);
  CHECK_FALSE(only("wrong_text.nf").passed);
  CaseResult positioned = only("positioned.nf");
  CHECK(positioned.passed);
  CHECK(positioned.location == (d / "positioned.nf").generic_string() + ":2:16");
  CaseResult wrong = only("wrong_position.nf");
  CHECK_FALSE(wrong.passed);
  CHECK(wrong.message.find("expected at 2:3 'expected '->'', got 2:16") != std::string::npos);
  CaseResult accepted = only("accepted.nf");
  CHECK_FALSE(accepted.passed);
  CHECK(accepted.message.find("parses and solves") != std::string::npos);
  CHECK(only("unsolvable.nf").passed);
}

TEST_CASE("the report is the same whatever the number of threads", "[check]") {
  TempDir dir;
  for (int k = 0; k < 12; ++k)
    write_file(dir.path() / fmt::format("f{:02}.nf", k),
               k % 5 == 3 ? std::string("broken line\n") : rc(fmt::format("expect final C1.v > {} V\n", k * 0.5)));
  std::vector<fs::path> files = find_netlists({dir.path().string()});
  CheckOptions one;
  one.jobs = 1;
  CheckOptions many;
  many.jobs = 4;
  std::vector<std::string> order;
  many.on_file = [&](const FileResult& f) { order.push_back(f.path); };
  std::size_t progress_calls = 0;
  many.on_progress = [&](std::size_t done, std::size_t total) {
    ++progress_calls;
    CHECK(done <= total);
  };
  CheckReport a = check_files(files, one);
  CheckReport b = check_files(files, many);
  CHECK(text_of(a) == text_of(b));
  CHECK(b.jobs == 4);
  CHECK(a.jobs == 1);
  CHECK(progress_calls == files.size());
  // Files are handed to on_file in file order, each once.
  REQUIRE(order.size() == files.size());
  for (std::size_t k = 0; k < files.size(); ++k) CHECK(order[k] == files[k].generic_string());
}

TEST_CASE("text for XML is escaped and made valid UTF-8", "[check]") {
  CHECK(xml_escape("a < b && c > \"d\" 'e'") == "a &lt; b &amp;&amp; c &gt; &quot;d&quot; &apos;e&apos;");
  CHECK(xml_escape("µs ± 1%") == "µs ± 1%");
  CHECK(xml_escape("bad \xB5 byte") == "bad \xEF\xBF\xBD byte");
  CHECK(xml_escape(std::string("nul\0x", 5)) == "nul\xEF\xBF\xBDx");
  CHECK(xml_escape("line\nbreak") == "line&#10;break");
  // An overlong encoding of '/' is not valid UTF-8.
  CHECK(xml_escape("\xC0\xAF") == "\xEF\xBF\xBD\xEF\xBF\xBD");
}

TEST_CASE("the JUnit report reads back with a real XML parser with the right structure and counts", "[check]") {
  if (run("/usr/bin/python3 -c 'import xml.etree.ElementTree' > /dev/null 2>&1") != 0) {
    WARN("python3 with xml.etree is not available: the JUnit XML was not parsed");
    return;
  }
  TempDir dir;
  write_file(dir.path() / "a.nf", rc("expect peak C1.v < 4 V  # false on purpose\nexpect final C1.v > 4 V\n"));
  write_file(dir.path() / "b.nf", "V1: voltage-source s -> gnd, dc 5 V\nR1: resistor s gnd, 1 kohm\n");
  // A file that is not UTF-8: its diagnostic echoes the bad byte, which must not break the XML.
  write_file(dir.path() / "c.nf", "title \"caf\xE9\"\nR1: resistor a -> gnd, 1 kohm & more\n");
  write_file(dir.path() / "d.nf", rc());
  CheckReport report = check_files(find_netlists({dir.path().string()}), {});
  const fs::path xml = dir.path() / "report.xml";
  write_file(xml, junit_xml(report));

  const fs::path script = dir.path() / "read_junit.py";
  write_file(script,
             "import sys, xml.etree.ElementTree as E\n"
             "root = E.parse(sys.argv[1]).getroot()\n"
             "assert root.tag == 'testsuites', root.tag\n"
             "suites = root.findall('testsuite')\n"
             "totals = [0, 0, 0]\n"
             "for s in suites:\n"
             "    cases = s.findall('testcase')\n"
             "    assert int(s.get('tests')) == len(cases)\n"
             "    f = sum(1 for c in cases if c.find('failure') is not None)\n"
             "    e = sum(1 for c in cases if c.find('error') is not None)\n"
             "    assert int(s.get('failures')) == f and int(s.get('errors')) == e\n"
             "    float(s.get('time'))\n"
             "    for c in cases:\n"
             "        assert c.get('classname') == s.get('name') and c.get('name')\n"
             "        float(c.get('time'))\n"
             "        for x in c.findall('failure') + c.findall('error'):\n"
             "            assert x.get('message')\n"
             "    totals = [totals[0] + len(cases), totals[1] + f, totals[2] + e]\n"
             "assert [int(root.get(k)) for k in ('tests', 'failures', 'errors')] == totals\n"
             "names = [c.get('name') for c in root.iter('testcase')]\n"
             "print(len(suites), *totals, int('peak C1.v < 4 V' in names))\n");
  const fs::path out = dir.path() / "counts.txt";
  REQUIRE(run(fmt::format("/usr/bin/python3 {} {} > {}", shell_quote(script.string()), shell_quote(xml.string()),
                          shell_quote(out.string()))) == 0);
  std::size_t tests = 0, failures = 0, errors = 0;
  for (const auto& f : report.files) {
    tests += f.cases.size();
    failures += f.failures();
    errors += f.errors();
  }
  // a: 3 claims (1 false), b and c: a parse error each, d: 1 claim.
  CHECK(tests == 6);
  CHECK(failures == 1);
  CHECK(errors == 2);
  CHECK(read_file(out) == fmt::format("4 {} {} {} 1\n", tests, failures, errors));
}

TEST_CASE("netfold check passes on the project's circuit library", "[check]") {
  TempDir dir;
  const fs::path out = dir.path() / "out.txt";
  const fs::path xml = dir.path() / "library.xml";
  int status = run(fmt::format("{} check netlists/ --junit {} > {} 2>&1", shell_quote(NETFOLD_BINARY),
                               shell_quote(xml.string()), shell_quote(out.string())));
  std::string text = read_file(out);
  INFO(text);
  CHECK(status == 0);
  std::vector<std::string> lines = lines_of(text);
  REQUIRE_FALSE(lines.empty());
  CHECK(lines.back().find(" passed, 0 failed") != std::string::npos);
  CHECK(std::none_of(lines.begin(), lines.end(), [](const std::string& l) { return l.rfind("FAIL", 0) == 0; }));
  CHECK(fs::exists(xml));
  // At least 12 circuits, besides the error gallery.
  std::size_t circuits = 0;
  for (const auto& e : fs::directory_iterator("netlists"))
    if (e.path().extension() == ".nf") ++circuits;
  CHECK(circuits >= 12);
}

TEST_CASE("netfold check exits 1 on a false claim and its shards add up to the whole run", "[check]") {
  TempDir dir;
  for (int k = 0; k < 7; ++k)
    write_file(dir.path() / fmt::format("c{}.nf", k), rc(k == 4 ? "expect final C1.v < 1 V\n" : ""));
  const std::string bin = shell_quote(NETFOLD_BINARY);
  const std::string lib = shell_quote(dir.path().string());
  const fs::path all = dir.path() / "all.txt";
  CHECK(run(fmt::format("{} check {} > {}", bin, lib, shell_quote(all.string()))) == 1);
  std::vector<std::string> every = lines_of(read_file(all));
  REQUIRE(every.size() == 9);
  CHECK(every.back() == "7 passed, 1 failed");
  every.pop_back();

  std::multiset<std::string> union_of_shards;
  for (int k = 1; k <= 3; ++k) {
    const fs::path part = dir.path() / fmt::format("shard{}.txt", k);
    int status = run(fmt::format("{} check {} --shard {}/3 --jobs 2 > {}", bin, lib, k, shell_quote(part.string())));
    std::vector<std::string> lines = lines_of(read_file(part));
    REQUIRE_FALSE(lines.empty());
    lines.pop_back();
    bool has_failure = std::any_of(lines.begin(), lines.end(), [](const std::string& l) { return l.rfind("FAIL", 0) == 0; });
    CHECK(status == (has_failure ? 1 : 0));
    union_of_shards.insert(lines.begin(), lines.end());
  }
  CHECK(union_of_shards == std::multiset<std::string>(every.begin(), every.end()));
  CHECK(run(fmt::format("{} check {} --shard 4/3 > /dev/null 2>&1", bin, lib)) == 2);
  CHECK(run(fmt::format("{} check {} > /dev/null 2>&1", bin, shell_quote((dir.path() / "nothing").string()))) == 2);
}

TEST_CASE("the circuit library covers every element kind, waveform kind, claim kind and operator", "[check]") {
  std::set<ElementKind> kinds;
  std::set<ClaimQuantity> quantities;
  std::set<CompareOp> ops;
  std::set<SweepTarget> sweeps;
  bool dc = false, sinusoid = false, phased = false, step = false, superposed = false, golden = false;
  for (const auto& entry : fs::directory_iterator("netlists")) {
    if (entry.path().extension() != ".nf") continue;
    INFO(entry.path().string());
    Circuit c = parse_netlist_file(entry.path());
    for (const auto& e : c.elements()) {
      kinds.insert(e.kind);
      if (!is_independent_source(e.kind)) continue;
      const Waveform& w = e.waveform;
      dc |= w.dc != 0.0;
      sinusoid |= w.has_sinusoid();
      for (const auto& s : w.sinusoids) phased |= s.phase != 0.0;
      step |= !w.steps.empty();
      superposed |= (w.dc != 0.0) + (w.sinusoids.size()) + (w.steps.size()) > 1;
    }
    for (const auto& cl : c.claims()) {
      quantities.insert(cl.quantity);
      ops.insert(cl.op);
    }
    for (const auto& sw : c.sweeps()) sweeps.insert(sw.target);
    golden |= c.golden_tolerance().has_value() && fs::exists(fs::path(entry.path()).replace_extension(".golden.csv"));
  }
  // Every element kind, the diode of the second edition included (11).
  CHECK(kinds.size() == 11);
  // Every first-edition claim kind (tau .. worst_peak, 13 in all), and the several-state
  // examples' frequency and damping claims; other files may add more second-edition kinds.
  for (int q = 0; q <= static_cast<int>(ClaimQuantity::damping); ++q) {
    INFO("claim quantity " << q);
    CHECK(quantities.count(static_cast<ClaimQuantity>(q)) == 1);
  }
  // (v2) share peak, from cap_bank_tolerance.nf.
  CHECK(quantities.count(ClaimQuantity::share_peak) == 1);
  CHECK(ops.size() == 5);
  CHECK(sweeps.size() == 3);
  CHECK(dc);
  CHECK(sinusoid);
  CHECK(phased);
  CHECK(step);
  CHECK(superposed);
  // At least one file is compared with a golden waveform under its own golden-tolerance.
  CHECK(golden);
}

// Issue 12, "Limits that do not hold": "`check` runs a file twice when named by two spellings".
// cli.md (v2): "A file named twice (by two spellings of its path) runs once." Lexically equal
// spellings (`d/../d/a.nf`) were merged already; an absolute and a relative path, or a folder
// reached through a symbolic link, were not.
TEST_CASE("issue 12 limits: a file named by two spellings is found once, under its first spelling", "[check]") {
  TempDir dir;
  write_file(dir.path() / "lib" / "a.nf", rc());
  write_file(dir.path() / "lib" / "b.nf", rc());
  fs::create_directory_symlink(dir.path() / "lib", dir.path() / "link");
  const std::string d = dir.path().generic_string();
  std::vector<fs::path> files =
      find_netlists({d + "/lib/a.nf", d + "/link/a.nf", d + "/lib/../lib/a.nf", d + "/lib", d + "/link/"});
  REQUIRE(files.size() == 2);
  CHECK(files[0].generic_string() == d + "/lib/a.nf");
  CHECK(files[1].generic_string() == d + "/lib/b.nf");
  // A relative spelling of the same file, from the folder above it.
  const fs::path here = fs::current_path();
  fs::current_path(dir.path());
  std::vector<fs::path> mixed = find_netlists({"lib/a.nf", d + "/lib/a.nf"});
  fs::current_path(here);
  REQUIRE(mixed.size() == 1);
  CHECK(mixed[0].generic_string() == "lib/a.nf");
  // And the run holds each file once.
  CheckReport report = check_files(files, {});
  CHECK(report.files.size() == 2);
  CHECK(report.passed() == 2);
}

TEST_CASE("issue 12 item 6: every declared rating is a case of check, failed when exceeded", "[check]") {
  // Spec (v2): "A rating exceeded is exit 1 in every command, and a failed case in check". K1
  // carries 34 A when closed at the declared crest, 56 A at the worst closing angle of the sweep.
  TempDir dir;
  const fs::path file = dir.path() / "inrush.nf";
  write_file(file,
             "supply: voltage-source s -> gnd, cosine 325 V 50 Hz\n"
             "K1: switch s -> a, closes at 0 s, rated 45 A\n"
             "R1: resistor a -> b, 1 ohm, rated 2 kW\n"
             "L1: inductor b -> gnd, 31.83 mH\nwatch L1.i\nwindow 0 .. 100 ms\n"
             "sweep supply.phase -180 deg .. 180 deg\n"
             "expect worst peak L1.i < 60 A\n");
  FileResult r = check_file(file, false);
  REQUIRE(r.cases.size() == 3);
  CHECK(r.cases[0].kind == CaseKind::claim);
  CHECK(r.cases[0].passed);
  const CaseResult& k1 = r.cases[1];
  CHECK(k1.kind == CaseKind::rating);
  CHECK(k1.name == "K1 peak current");
  CHECK(k1.location == file.generic_string() + ":2");
  CHECK_FALSE(k1.passed);
  CHECK_FALSE(k1.is_error());
  CHECK_THAT(k1.message, Catch::StartsWith("computed 56.") && Catch::Contains(" A > rated 45 A (124.") &&
                             Catch::Contains("worst case at supply.phase = "));
  const CaseResult& r1 = r.cases[2];
  // R1's steady-state power: |I|²/2 × 1 ohm = 522.9 W, |I| = 325 V / |1 + j·10| ohm = 32.34 A.
  CHECK(r1.passed);
  CHECK_THAT(r1.message, Catch::StartsWith("computed 522.9") && Catch::Contains("<= rated 2 kW"));
  CHECK(r.failures() == 1);
  CHECK_THAT(junit_xml(CheckReport{{r}, 0.0, "t", 1}), Catch::Contains("type=\"rating\""));
}
