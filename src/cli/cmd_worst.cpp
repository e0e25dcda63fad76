// `netfold worst FILE`: the worst case over each sweep of the closing angle, the residual
// state or a closing time.
#include <iostream>
#include <sstream>

#include "commands.hpp"
#include "netfold/parse.hpp"
#include "netfold/report.hpp"
#include "netfold/worst.hpp"

namespace netfold::cli {

namespace {
struct WorstArgs {
  std::string file, json, csv;
  std::vector<std::string> sweeps;
};
}  // namespace

Command register_worst(CLI::App& app) {
  auto args = std::make_shared<WorstArgs>();
  CLI::App* sub = app.add_subcommand("worst", "Worst case of every watched quantity over each sweep");
  sub->add_option("FILE", args->file, "the .nf circuit")->required();
  sub->add_option("--sweep", args->sweeps, "TARGET=FROM..TO, e.g. supply.phase=-180deg..180deg (replaces the file's sweeps)");
  sub->add_option("--json", args->json, "write the results as JSON ('-' = standard output)");
  sub->add_option("--csv", args->csv, "write worst peak versus the swept argument ('-' = standard output)");
  return [args]() {
    if (args->json == "-" && args->csv == "-") throw argument_error("worst", "only one of --csv and --json can go to standard output");
    Circuit circuit = parse_netlist_file(args->file);
    std::vector<Sweep> sweeps = circuit.sweeps();
    if (!args->sweeps.empty()) {
      sweeps.clear();
      for (const auto& text : args->sweeps) sweeps.push_back(parse_sweep_argument(circuit, text));
    }
    Solution nominal = solve(circuit);
    WorstReport report = find_worst_case(circuit, sweeps);
    std::string json = args->json.empty() ? "" : worst_json(report, circuit);
    std::string csv = args->csv.empty() ? "" : worst_csv(report);
    std::ostringstream text;
    write_worst_text(text, report, nominal);
    if (!args->json.empty()) write_output(args->json, json, std::cout);
    if (!args->csv.empty()) write_output(args->csv, csv, std::cout);
    if (args->json != "-" && args->csv != "-") std::cout << text.str();
    for (const auto& r : report.ratings)
      if (r.exceeded) return static_cast<int>(ExitCode::check_failed);
    return 0;
  };
}

}  // namespace netfold::cli
