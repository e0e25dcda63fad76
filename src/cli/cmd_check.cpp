// `netfold check PATH...`: every claim and golden waveform of a circuit library, in parallel.
#include <unistd.h>

#include <iostream>

#include <fmt/format.h>
#include <fmt/ostream.h>

#include "commands.hpp"
#include "netfold/check.hpp"
#include "netfold/golden.hpp"
#include "netfold/report.hpp"

namespace netfold::cli {

namespace {
struct CheckArgs {
  std::vector<std::string> paths;
  std::string junit, shard;
  bool update_golden = false;
  unsigned jobs = 0;
};

// Every file the check reads, whichever shard runs: the XML must not replace one of them.
std::vector<InputFile> check_inputs(const std::vector<std::filesystem::path>& netlists) {
  std::vector<InputFile> inputs;
  for (const auto& nf : netlists) {
    inputs.push_back({nf, "a circuit the check reads"});
    inputs.push_back({golden_path_for(nf), "a golden waveform beside a circuit the check reads"});
  }
  return inputs;
}

// Erases the progress line, so that report lines and the next progress line start clean.
constexpr const char* kClearLine = "\r\033[K";
}  // namespace

Command register_check(CLI::App& app) {
  auto args = std::make_shared<CheckArgs>();
  CLI::App* sub = app.add_subcommand("check", "Run every claim and golden waveform of .nf files under the paths");
  sub->add_option("PATH", args->paths, "files or directories (searched recursively)")->required();
  sub->add_option("--junit", args->junit, "write a JUnit XML report ('-' = standard output)");
  sub->add_flag("--update-golden", args->update_golden, "rewrite the existing golden waveforms with fresh ones");
  sub->add_option("--shard", args->shard, "run only the K-th of N slices of the sorted file list (K/N, 1 <= K <= N)");
  sub->add_option("--jobs", args->jobs, "worker threads (default: the number of cores)");
  return [args]() {
    std::vector<std::filesystem::path> files = find_netlists(args->paths);
    if (!args->junit.empty()) check_output_paths({{"--junit", args->junit}}, check_inputs(files));
    if (!args->shard.empty()) files = select_shard(files, parse_shard_argument(args->shard));

    // With the XML on standard output the text report would corrupt it; it goes nowhere.
    const bool text = args->junit != "-";
    const bool progress = isatty(STDERR_FILENO) && files.size() > 1;
    // Report lines share the terminal with the progress line only when both go to it.
    const bool shared_terminal = progress && isatty(STDOUT_FILENO);
    CheckOptions options;
    options.update_golden = args->update_golden;
    options.jobs = args->jobs;
    options.on_file = [&](const FileResult& f) {
      if (!text) return;
      if (shared_terminal) std::cerr << kClearLine << std::flush;
      write_file_text(std::cout, f);
      if (shared_terminal) std::cout << std::flush;
    };
    if (progress)
      options.on_progress = [&](std::size_t done, std::size_t n) {
        fmt::print(std::cerr, "{}checked {}/{} files", kClearLine, done, n);
        std::cerr << std::flush;
      };
    CheckReport report = check_files(files, options);
    if (progress) std::cerr << kClearLine << std::flush;
    if (text) write_summary(std::cout, report);
    else write_summary(std::cerr, report);
    if (!args->junit.empty()) write_output(args->junit, junit_xml(report), std::cout, "--junit");
    return report.failed() > 0 ? static_cast<int>(ExitCode::check_failed) : 0;
  };
}

}  // namespace netfold::cli
