#pragma once
// The subcommands of the netfold executable. Each registers its options on the CLI11 app and
// returns the function that runs it after parsing; the function returns the exit status and
// lets netfold::Error propagate to main, the only place that maps errors to exit codes.

#include <functional>

#include <CLI/CLI.hpp>

namespace netfold::cli {

using Command = std::function<int()>;

Command register_solve(CLI::App& app);
Command register_equiv(CLI::App& app);
Command register_worst(CLI::App& app);
Command register_verify(CLI::App& app);
Command register_check(CLI::App& app);

}  // namespace netfold::cli
