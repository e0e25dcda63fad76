// Subcommands whose issues have not landed yet: registered with their options, so that the
// command line is complete, but they refuse to run (exit 3) rather than print anything fake.
#include <iostream>

#include "commands.hpp"
#include "netfold/diagnostics.hpp"

namespace netfold::cli {

namespace {
Command not_yet(const char* name) {
  return [name]() -> int {
    throw Error(ExitCode::internal, std::string("netfold: error: '") + name + "' is not implemented yet");
  };
}
struct PendingArgs {
  std::string file, sweep, json, csv, junit, rtol;
  std::vector<std::string> paths;
  bool update_golden = false;
};
}  // namespace

Command register_verify(CLI::App& app) {
  auto args = std::make_shared<PendingArgs>();
  CLI::App* sub = app.add_subcommand("verify", "Cross-check the closed form against numerical integration (CVODE)");
  sub->add_option("FILE", args->file, "the .nf circuit")->required();
  sub->add_option("--rtol", args->rtol, "pass threshold of max relative error (default 1e-6)");
  sub->add_option("--json", args->json, "write the results as JSON ('-' = standard output)");
  return not_yet("verify");
}

Command register_check(CLI::App& app) {
  auto args = std::make_shared<PendingArgs>();
  CLI::App* sub = app.add_subcommand("check", "Run every claim and golden waveform of .nf files under the paths");
  sub->add_option("PATH", args->paths, "files or directories")->required();
  sub->add_option("--junit", args->junit, "write a JUnit XML report");
  sub->add_flag("--update-golden", args->update_golden, "rewrite the golden waveforms");
  return not_yet("check");
}

}  // namespace netfold::cli
