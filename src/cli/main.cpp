// netfold: closed-form switching transients of circuits with one capacitor or inductor.
#include <iostream>
#include <vector>

#include <fmt/format.h>

#include "commands.hpp"
#include "netfold/diagnostics.hpp"
#include "netfold/report.hpp"

int main(int argc, char** argv) {
  CLI::App app{
      "netfold: the exact switching transient of a circuit with one capacitor or inductor.\n"
      "Reads a .nf circuit, reduces it to the Thevenin/Norton equivalent its storage element sees,\n"
      "and writes the closed-form response of every segment between switching events.",
      "netfold"};
  app.set_version_flag("--version", std::string("netfold ") + NETFOLD_VERSION);
  app.require_subcommand(1, 1);
  std::vector<std::pair<CLI::App*, netfold::cli::Command>> commands;
  auto add = [&](netfold::cli::Command (*reg)(CLI::App&)) {
    std::size_t before = app.get_subcommands({}).size();
    netfold::cli::Command run = reg(app);
    commands.emplace_back(app.get_subcommands({}).at(before), std::move(run));
  };
  add(netfold::cli::register_solve);
  add(netfold::cli::register_equiv);
  add(netfold::cli::register_worst);
  add(netfold::cli::register_verify);
  add(netfold::cli::register_check);

  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    // Bad command lines are bad input: exit 2, like a bad file.
    std::cerr << fmt::format("netfold: error: {}\nRun 'netfold --help' for the commands and options.\n", e.what());
    return static_cast<int>(netfold::ExitCode::bad_input);
  }
  // Here and not in the writer: the library must not take over the signals of a program that
  // embeds it; the executable owns its process, and every command may write files.
  netfold::install_output_cleanup_handlers();
  try {
    for (auto& [sub, run] : commands)
      if (sub->parsed()) return run();
    return static_cast<int>(netfold::ExitCode::bad_input);
  } catch (const netfold::Error& e) {
    std::cerr << e.what() << '\n';
    return static_cast<int>(e.exit_code());
  } catch (const std::bad_alloc&) {
    std::cerr << "netfold: error: out of memory\n";
    return static_cast<int>(netfold::ExitCode::internal);
  } catch (const std::exception& e) {
    std::cerr << "netfold: internal error: " << e.what() << '\n';
    return static_cast<int>(netfold::ExitCode::internal);
  }
}
