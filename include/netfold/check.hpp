#pragma once
/// \file check.hpp
/// `netfold check`: a circuit library as a regression suite. Every `.nf` file under the given
/// paths is parsed and solved; every `expect` claim is evaluated, every rating is judged (at
/// the worst case over the file's sweeps), and a golden waveform is compared where one sits
/// beside the file. Files run in parallel; results are reported in
/// the sorted file order, so the output does not depend on the number of threads. See
/// docs/check.md.
///
/// Files expected to be refused (an error gallery) say so on their first line, either
/// `# expect-error` (optionally `# expect-error: TEXT`, TEXT being part of the message) or
/// `# error LINE:COL: TEXT` (the refusal must be positioned at LINE:COL, 0:0 for the whole
/// file, with TEXT in its message). Such a file passes when it is refused that way, and
/// fails when it parses and solves.

#include <cstddef>
#include <filesystem>
#include <functional>
#include <optional>
#include <ostream>
#include <string>
#include <string_view>
#include <vector>

namespace netfold {

/// What one case of a file checked.
enum class CaseKind {
  claim,     ///< an `expect` line
  rating,    ///< a rating attribute, judged at the worst case over the sweeps (failed when exceeded)
  golden,    ///< the golden waveform comparison
  refusal,   ///< an error-gallery file, expected to be refused
  parse,     ///< the file does not parse (an error: nothing else could run)
  solve,     ///< the file parses but does not solve (an error)
  solves,    ///< a file with no claim and no golden file: it parses and solves
  internal,  ///< an unexpected failure inside netfold (a bug)
};

/// One test case: one line of the report, one JUnit testcase.
struct CaseResult {
  CaseKind kind = CaseKind::claim;
  std::string name;      ///< the claim text, "golden NAME.golden.csv", "parse", ...
  std::string location;  ///< "FILE:LINE" of the claim, "FILE:LINE:COL" of a diagnostic, or "FILE"
  bool passed = false;
  std::string message;   ///< the computed value and margin, or what went wrong
  /// Full text for reports that have room (the diagnostics with their source lines).
  std::string detail;
  double seconds = 0.0;  ///< wall time (claims of a file share the time of solving and evaluating them)
  /// True for cases that could not be evaluated at all (JUnit `<error>` rather than `<failure>`).
  bool is_error() const { return !passed && (kind == CaseKind::parse || kind == CaseKind::solve ||
                                             kind == CaseKind::internal); }
};

/// Every case of one file.
struct FileResult {
  std::string path;              ///< as found (generic form, e.g. `netlists/valve_coil.nf`)
  std::vector<CaseResult> cases;
  double seconds = 0.0;          ///< wall time of parse, solve and every case
  std::size_t failures() const;  ///< failed cases that are not errors
  std::size_t errors() const;    ///< cases that could not be evaluated
};

/// Everything one `check` run found, files in the order they were given.
struct CheckReport {
  std::vector<FileResult> files;
  double seconds = 0.0;   ///< wall time of the whole run
  std::string timestamp;  ///< UTC start of the run, ISO 8601 (`2026-12-02T01:36:06`)
  unsigned jobs = 1;      ///< worker threads used
  std::size_t passed() const;
  std::size_t failed() const;  ///< failures and errors
};

/// A slice of the file list for one machine of a CI matrix: the K-th of N (1 ≤ K ≤ N).
struct Shard {
  int index = 1;  ///< K, from 1
  int count = 1;  ///< N
};

/// Parses `K/N` (`--shard`). Throws InputError naming the option for anything else.
Shard parse_shard_argument(std::string_view text);

/// The `.nf` files under `paths` (files are taken as given, directories searched
/// recursively), each once, sorted by their generic path text. A file named twice (by two
/// spellings, a symbolic link, or a folder and a file in it) is listed once, as first spelt;
/// files are told apart by their canonical path. Nothing is skipped: an error
/// gallery is checked too (see the file comment). Throws InputError (exit 2) for a path that
/// does not exist or a directory that holds no `.nf` file, since a CI job that checks
/// nothing should not pass.
std::vector<std::filesystem::path> find_netlists(const std::vector<std::string>& paths);

/// The files of shard K of N: those whose index i (from 0, in the given order) has
/// i mod N = K − 1. Round-robin keeps the shards' sizes within one file of each other, and
/// the N shards together hold every file exactly once.
std::vector<std::filesystem::path> select_shard(const std::vector<std::filesystem::path>& files, Shard shard);

/// Checks one file: never throws; every problem is a failed case.
FileResult check_file(const std::filesystem::path& path, bool update_golden);

/// Options of check_files.
struct CheckOptions {
  bool update_golden = false;  ///< rewrite existing golden files instead of comparing
  unsigned jobs = 0;           ///< worker threads; 0 = std::thread::hardware_concurrency()
  /// Called once per file, in file order, as soon as that file and every earlier one are
  /// done (so results can be printed progressively yet deterministically). Calls are
  /// serialised.
  std::function<void(const FileResult&)> on_file;
  /// Called after each file completes, in completion order, with (done, total). Serialised
  /// with on_file.
  std::function<void(std::size_t, std::size_t)> on_progress;
};

/// Checks every file over a pool of worker threads.
CheckReport check_files(const std::vector<std::filesystem::path>& files, const CheckOptions& options);

/// The report lines of one file: `PASS FILE:LINE: CLAIM — MESSAGE` or `FAIL ...`, one per case.
void write_file_text(std::ostream& out, const FileResult& file);
/// The summary line `N passed, N failed`.
void write_summary(std::ostream& out, const CheckReport& report);
/// The whole text report: every file's lines, then the summary line.
void write_check_text(std::ostream& out, const CheckReport& report);

/// JUnit XML: `testsuites` > one `testsuite` per file (name, tests, failures, errors, time)
/// > one `testcase` per case (classname = file, name = claim text), with a `failure` or
/// `error` element carrying a message. Text is XML-escaped and made valid UTF-8.
std::string junit_xml(const CheckReport& report);

/// Escapes `text` for an XML attribute or element: `& < > " '` become entities, invalid UTF-8
/// becomes U+FFFD and control characters other than tab, newline and carriage return (which
/// XML 1.0 does not allow) become U+FFFD too.
std::string xml_escape(std::string_view text);

}  // namespace netfold
