#include "netfold/check.hpp"

#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <charconv>
#include <chrono>
#include <cstdio>
#include <ctime>
#include <exception>
#include <fstream>
#include <mutex>
#include <set>
#include <thread>

#include <fmt/format.h>
#include <fmt/ostream.h>

#include "netfold/claims.hpp"
#include "netfold/golden.hpp"
#include "netfold/parse.hpp"
#include "netfold/solve.hpp"
#include "report/xml_text.hpp"

namespace netfold {

namespace {

using Clock = std::chrono::steady_clock;

double seconds_since(Clock::time_point start) {
  return std::chrono::duration<double>(Clock::now() - start).count();
}

// What the first line of a file says about how it must be refused.
struct Refusal {
  std::optional<std::pair<unsigned, unsigned>> position;  // `# error L:C:`; {0,0} = the whole file
  std::string text;                                        // part of the message; empty = any
};

std::string first_line(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::string line;
  std::getline(in, line);
  if (!line.empty() && line.back() == '\r') line.pop_back();
  // A UTF-8 byte order mark is not part of the comment.
  if (line.rfind("\xEF\xBB\xBF", 0) == 0) line.erase(0, 3);
  return line;
}

std::optional<Refusal> expected_refusal(const std::filesystem::path& path) {
  std::string line = first_line(path);
  Refusal r;
  if (auto at = line.find("# expect-error"); at != std::string::npos) {
    std::string rest = line.substr(at + std::string_view("# expect-error").size());
    if (!rest.empty() && rest.front() == ':') {
      rest.erase(0, 1);
      while (!rest.empty() && rest.front() == ' ') rest.erase(0, 1);
      while (!rest.empty() && rest.back() == ' ') rest.pop_back();
      r.text = rest;
    }
    return r;
  }
  unsigned l = 0, c = 0;
  int consumed = 0;
  if (std::sscanf(line.c_str(), "# error %u:%u: %n", &l, &c, &consumed) == 2 && consumed > 0) {
    r.position = std::make_pair(l, c);
    r.text = line.substr(static_cast<std::size_t>(consumed));
    return r;
  }
  return std::nullopt;
}

std::string diagnostic_location(const std::string& file, const Diagnostic& d) {
  return d.loc.line > 0 ? fmt::format("{}:{}:{}", file, d.loc.line, d.loc.col) : file;
}

std::string all_diagnostics(const InputError& e) {
  std::string out;
  for (const auto& d : e.diagnostics()) out += d.format() + "\n";
  return out;
}

// The refusal case of an error-gallery file, from the error it was refused with.
CaseResult refusal_case(const std::string& file, const Refusal& expected, const InputError& e, const char* stage) {
  CaseResult c;
  c.kind = CaseKind::refusal;
  c.name = "refused as expected";
  c.detail = all_diagnostics(e);
  const auto& ds = e.diagnostics();
  auto matches = [&](const Diagnostic& d) {
    if (expected.position && (d.loc.line != expected.position->first || d.loc.col != expected.position->second))
      return false;
    return d.message.find(expected.text) != std::string::npos;
  };
  auto hit = std::find_if(ds.begin(), ds.end(), matches);
  if (hit != ds.end()) {
    c.passed = true;
    c.location = diagnostic_location(file, *hit);
    c.message = fmt::format("{}: {}", stage, hit->message);
    return c;
  }
  c.location = ds.empty() ? file : diagnostic_location(file, ds.front());
  std::string want = expected.position ? fmt::format("at {}:{} ", expected.position->first, expected.position->second)
                                       : std::string();
  want += expected.text.empty() ? "any error" : fmt::format("'{}'", expected.text);
  std::string got = ds.empty() ? std::string("no diagnostic")
                               : fmt::format("{}:{}: {}", ds.front().loc.line, ds.front().loc.col, ds.front().message);
  c.message = fmt::format("refused, but not as the first line expects: expected {}, got {}", want, got);
  return c;
}

CaseResult internal_case(const std::string& file, const std::string& what) {
  CaseResult c;
  c.kind = CaseKind::internal;
  c.name = "internal";
  c.location = file;
  c.message = fmt::format("internal error: {}", what);
  return c;
}

void add_claims(FileResult& result, std::vector<ClaimResult> claims, double seconds,
                CaseKind kind = CaseKind::claim) {
  const double share = claims.empty() ? 0.0 : seconds / static_cast<double>(claims.size());
  for (auto& r : claims) {
    CaseResult c;
    c.kind = kind;
    c.name = r.text;
    c.location = r.location();
    c.passed = r.passed;
    c.message = std::move(r.message);
    c.seconds = share;
    result.cases.push_back(std::move(c));
  }
}

// Parse, solve, claims and golden comparison of one file; every failure becomes a case.
void run_file(FileResult& result, const std::filesystem::path& path, bool update_golden) {
  const std::string& file = result.path;
  std::optional<Refusal> refusal = expected_refusal(path);
  auto stage_start = Clock::now();
  std::optional<Circuit> circuit;
  try {
    circuit.emplace(parse_netlist_file(path));
  } catch (const InputError& e) {
    if (refusal) {
      result.cases.push_back(refusal_case(file, *refusal, e, "refused by the parser"));
    } else {
      CaseResult c;
      c.kind = CaseKind::parse;
      c.name = "parse";
      const auto& ds = e.diagnostics();
      c.location = ds.empty() ? file : diagnostic_location(file, ds.front());
      c.message = ds.empty() ? std::string(e.what()) : fmt::format("does not parse: {}", ds.front().message);
      if (ds.size() > 1) c.message += fmt::format(" (and {} more)", ds.size() - 1);
      c.detail = all_diagnostics(e);
      result.cases.push_back(std::move(c));
    }
    result.cases.back().seconds = seconds_since(stage_start);
    return;
  }

  std::optional<Solution> solution;
  try {
    solution.emplace(solve(*circuit));
  } catch (const Error& e) {
    const auto* input = dynamic_cast<const InputError*>(&e);
    if (refusal && input) {
      result.cases.push_back(refusal_case(file, *refusal, *input, "refused by the solver"));
      result.cases.back().seconds = seconds_since(stage_start);
      return;
    }
    CaseResult c;
    c.kind = CaseKind::solve;
    c.name = "solve";
    std::string why = e.what();
    c.location = file;
    if (input && !input->diagnostics().empty()) {
      const Diagnostic& d = input->diagnostics().front();
      why = d.message;
      c.location = diagnostic_location(file, d);
      c.detail = all_diagnostics(*input);
    }
    c.message = "does not solve: " + why;
    c.seconds = seconds_since(stage_start);
    std::string reason = fmt::format("not evaluated: the circuit does not solve ({})", why);
    result.cases.push_back(std::move(c));
    add_claims(result, unevaluated_claims(*circuit, reason), 0.0);
    if (std::filesystem::exists(golden_path_for(path))) {
      CaseResult g;
      g.kind = CaseKind::golden;
      g.name = "golden " + golden_path_for(path).filename().string();
      g.location = file;
      g.message = "not compared: the circuit does not solve";
      result.cases.push_back(std::move(g));
    }
    return;
  }

  if (refusal) {
    CaseResult c;
    c.kind = CaseKind::refusal;
    c.name = "refused as expected";
    c.location = file + ":1";
    c.message = "the file parses and solves, but its first line expects it to be refused";
    c.seconds = seconds_since(stage_start);
    result.cases.push_back(std::move(c));
    return;
  }
  const double solve_seconds = seconds_since(stage_start);

  auto claims_start = Clock::now();
  CircuitVerdicts verdicts = evaluate_verdicts(*circuit, *solution);
  const double verdict_seconds = solve_seconds + seconds_since(claims_start);
  const double share = verdict_seconds / static_cast<double>(std::max<std::size_t>(
                                             1, verdicts.claims.size() + verdicts.ratings.size()));
  add_claims(result, std::move(verdicts.claims), share * static_cast<double>(verdicts.claims.size()));
  add_claims(result, std::move(verdicts.ratings), share * static_cast<double>(verdicts.ratings.size()),
             CaseKind::rating);

  auto golden_start = Clock::now();
  if (std::optional<GoldenResult> g = check_golden(*solution, path, update_golden)) {
    CaseResult c;
    c.kind = CaseKind::golden;
    c.name = "golden " + std::filesystem::path(g->golden_path).filename().string();
    c.location = file;
    c.passed = g->passed;
    c.message = std::move(g->message);
    c.seconds = seconds_since(golden_start);
    result.cases.push_back(std::move(c));
  }
  if (result.cases.empty()) {
    CaseResult c;
    c.kind = CaseKind::solves;
    c.name = "solves";
    c.location = file;
    c.passed = true;
    c.message = fmt::format("parses and solves ({} segment{}); it has no claim and no golden file",
                            solution->segments().size(), solution->segments().size() == 1 ? "" : "s");
    c.seconds = solve_seconds;
    result.cases.push_back(std::move(c));
  }
}

std::string utc_timestamp() {
  std::time_t now = std::time(nullptr);
  std::tm tm{};
  gmtime_r(&now, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%S", &tm);
  return buf;
}

std::string host_name() {
  char buf[256] = {};
  if (gethostname(buf, sizeof buf - 1) != 0 || buf[0] == '\0') return "localhost";
  return buf;
}

const char* kind_name(CaseKind kind) {
  switch (kind) {
    case CaseKind::claim: return "claim";
    case CaseKind::rating: return "rating";
    case CaseKind::golden: return "golden";
    case CaseKind::refusal: return "refusal";
    case CaseKind::parse: return "parse";
    case CaseKind::solve: return "solve";
    case CaseKind::solves: return "solves";
    case CaseKind::internal: return "internal";
  }
  return "case";
}

std::string seconds_text(double s) { return fmt::format("{:.6f}", s); }

}  // namespace

std::size_t FileResult::failures() const {
  return static_cast<std::size_t>(
      std::count_if(cases.begin(), cases.end(), [](const CaseResult& c) { return !c.passed && !c.is_error(); }));
}

std::size_t FileResult::errors() const {
  return static_cast<std::size_t>(
      std::count_if(cases.begin(), cases.end(), [](const CaseResult& c) { return c.is_error(); }));
}

std::size_t CheckReport::passed() const {
  std::size_t n = 0;
  for (const auto& f : files)
    n += static_cast<std::size_t>(std::count_if(f.cases.begin(), f.cases.end(), [](const CaseResult& c) { return c.passed; }));
  return n;
}

std::size_t CheckReport::failed() const {
  std::size_t n = 0;
  for (const auto& f : files) n += f.failures() + f.errors();
  return n;
}

Shard parse_shard_argument(std::string_view text) {
  auto bad = [&]() {
    return argument_error("--shard", fmt::format("expected K/N with whole numbers 1 <= K <= N, found '{}'", text));
  };
  std::size_t slash = text.find('/');
  if (slash == std::string_view::npos) throw bad();
  auto number = [&](std::string_view s, int& out) {
    auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), out);
    return !s.empty() && ec == std::errc() && end == s.data() + s.size();
  };
  Shard shard;
  if (!number(text.substr(0, slash), shard.index) || !number(text.substr(slash + 1), shard.count)) throw bad();
  if (shard.count < 1 || shard.index < 1 || shard.index > shard.count) throw bad();
  return shard;
}

std::vector<std::filesystem::path> find_netlists(const std::vector<std::string>& paths) {
  namespace fs = std::filesystem;
  // A file is run once however it is named (`a/../a/x.nf`, an absolute path, a symbolic link,
  // a directory and a file in it): files are told apart by their canonical path, and the first
  // spelling met is the one reports show.
  std::set<std::string> seen;   // canonical paths
  std::set<std::string> found;  // spellings; sorted by their text, byte by byte: the same order on every machine
  auto add = [&](const fs::path& spelled) {
    std::error_code ec;
    const fs::path canonical = fs::canonical(spelled, ec);
    if (ec) {
      found.insert(spelled.lexically_normal().generic_string());
      return;
    }
    if (!seen.insert(canonical.generic_string()).second) return;
    // The lexical form drops `x/..`, which names another folder when x is a symbolic link.
    const fs::path normal = spelled.lexically_normal();
    std::error_code same_ec;
    const bool same = fs::canonical(normal, same_ec) == canonical && !same_ec;
    found.insert(same ? normal.generic_string() : spelled.generic_string());
  };
  for (const std::string& given : paths) {
    fs::path p(given);
    std::error_code ec;
    fs::file_status st = fs::status(p, ec);
    if (ec || !fs::exists(st)) throw argument_error("check", fmt::format("'{}' does not exist", given));
    if (!fs::is_directory(st)) {
      add(p);
      continue;
    }
    // Sorted first, so that which of two spellings inside one folder is kept does not depend
    // on the order the file system lists them in.
    std::vector<fs::path> here;
    try {
      for (const auto& entry : fs::recursive_directory_iterator(p)) {
        if (entry.path().extension() != ".nf" || !entry.is_regular_file()) continue;
        here.push_back(entry.path());
      }
    } catch (const fs::filesystem_error& e) {
      throw argument_error("check", fmt::format("cannot search '{}': {}", given, e.code().message()));
    }
    if (here.empty()) throw argument_error("check", fmt::format("no .nf file under '{}'", given));
    std::sort(here.begin(), here.end(), [](const fs::path& a, const fs::path& b) {
      return a.lexically_normal().generic_string() < b.lexically_normal().generic_string();
    });
    for (const fs::path& f : here) add(f);
  }
  return {found.begin(), found.end()};
}

std::vector<std::filesystem::path> select_shard(const std::vector<std::filesystem::path>& files, Shard shard) {
  std::vector<std::filesystem::path> out;
  const auto n = static_cast<std::size_t>(shard.count);
  const auto k = static_cast<std::size_t>(shard.index - 1);
  for (std::size_t i = k; i < files.size(); i += n) out.push_back(files[i]);
  return out;
}

FileResult check_file(const std::filesystem::path& path, bool update_golden) {
  FileResult result;
  result.path = path.generic_string();
  auto start = Clock::now();
  try {
    run_file(result, path, update_golden);
  } catch (const Error& e) {
    result.cases.push_back(internal_case(result.path, e.what()));
  } catch (const std::bad_alloc&) {
    result.cases.push_back(internal_case(result.path, "out of memory"));
  } catch (const std::exception& e) {
    result.cases.push_back(internal_case(result.path, e.what()));
  }
  result.seconds = seconds_since(start);
  return result;
}

CheckReport check_files(const std::vector<std::filesystem::path>& files, const CheckOptions& options) {
  auto start = Clock::now();
  CheckReport report;
  report.timestamp = utc_timestamp();
  const std::size_t n = files.size();
  report.files.resize(n);
  std::vector<char> done(n, 0);
  std::mutex mutex;
  std::size_t next_to_report = 0, completed = 0;
  std::atomic<std::size_t> next{0};
  std::exception_ptr callback_error;

  auto worker = [&] {
    for (;;) {
      const std::size_t i = next.fetch_add(1);
      if (i >= n) return;
      FileResult r = check_file(files[i], options.update_golden);
      std::lock_guard<std::mutex> lock(mutex);
      report.files[i] = std::move(r);
      done[i] = 1;
      ++completed;
      if (callback_error) continue;
      try {
        if (options.on_progress) options.on_progress(completed, n);
        while (next_to_report < n && done[next_to_report]) {
          if (options.on_file) options.on_file(report.files[next_to_report]);
          ++next_to_report;
        }
      } catch (...) {
        // A callback that fails (a closed output) must not terminate a worker thread; the
        // error is raised again on the calling thread.
        callback_error = std::current_exception();
      }
    }
  };

  unsigned jobs = options.jobs ? options.jobs : std::max(1u, std::thread::hardware_concurrency());
  jobs = static_cast<unsigned>(std::min<std::size_t>(jobs, std::max<std::size_t>(n, 1)));
  if (jobs <= 1) {
    worker();
  } else {
    std::vector<std::thread> pool;
    pool.reserve(jobs);
    for (unsigned k = 0; k < jobs; ++k) pool.emplace_back(worker);
    for (auto& t : pool) t.join();
  }
  if (callback_error) std::rethrow_exception(callback_error);
  report.seconds = seconds_since(start);
  report.jobs = jobs;
  return report;
}

void write_file_text(std::ostream& out, const FileResult& file) {
  for (const auto& c : file.cases) {
    fmt::print(out, "{} {}: {} — {}\n", c.passed ? "PASS" : "FAIL", c.location, c.name, c.message);
  }
}

void write_summary(std::ostream& out, const CheckReport& report) {
  fmt::print(out, "{} passed, {} failed\n", report.passed(), report.failed());
}

void write_check_text(std::ostream& out, const CheckReport& report) {
  for (const auto& f : report.files) write_file_text(out, f);
  write_summary(out, report);
}

std::string xml_escape(std::string_view text) {
  return detail::escape_xml(text, detail::XmlControls::references);
}

std::string junit_xml(const CheckReport& report) {
  std::size_t tests = 0, failures = 0, errors = 0;
  for (const auto& f : report.files) {
    tests += f.cases.size();
    failures += f.failures();
    errors += f.errors();
  }
  const std::string host = xml_escape(host_name());
  std::string out = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  out += fmt::format("<testsuites name=\"netfold check\" tests=\"{}\" failures=\"{}\" errors=\"{}\" time=\"{}\">\n",
                     tests, failures, errors, seconds_text(report.seconds));
  std::size_t id = 0;
  for (const auto& f : report.files) {
    const std::string name = xml_escape(f.path);
    out += fmt::format(
        "  <testsuite name=\"{}\" tests=\"{}\" failures=\"{}\" errors=\"{}\" skipped=\"0\" time=\"{}\" "
        "timestamp=\"{}\" hostname=\"{}\" id=\"{}\" package=\"netfold\">\n",
        name, f.cases.size(), f.failures(), f.errors(), seconds_text(f.seconds), report.timestamp, host, id++);
    for (const auto& c : f.cases) {
      out += fmt::format("    <testcase classname=\"{}\" name=\"{}\" time=\"{}\"", name, xml_escape(c.name),
                         seconds_text(c.seconds));
      if (c.passed) {
        out += "/>\n";
        continue;
      }
      const char* element = c.is_error() ? "error" : "failure";
      std::string body = fmt::format("{}: {} — {}", c.location, c.name, c.message);
      if (!c.detail.empty()) body += "\n" + c.detail;
      out += fmt::format(">\n      <{} message=\"{}\" type=\"{}\">{}</{}>\n    </testcase>\n", element,
                         xml_escape(c.message), kind_name(c.kind), xml_escape(body),
                         element);
    }
    out += "  </testsuite>\n";
  }
  out += "</testsuites>\n";
  return out;
}

}  // namespace netfold
