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
  std::string file, json, csv, svg;
  std::vector<std::string> sweeps;
  std::size_t samples = 0;
  std::uint64_t seed = kDefaultSeed;
};
}  // namespace

Command register_worst(CLI::App& app) {
  auto args = std::make_shared<WorstArgs>();
  CLI::App* sub = app.add_subcommand("worst", "Worst case of every watched quantity over each sweep");
  sub->add_option("FILE", args->file, "the .nf circuit")->required();
  sub->add_option("--sweep", args->sweeps, "TARGET=FROM..TO, e.g. supply.phase=-180deg..180deg (replaces the file's sweeps)");
  sub->add_option("--json", args->json, "write the results as JSON ('-' = standard output)");
  sub->add_option("--csv", args->csv, "write worst peak versus the swept argument ('-' = standard output)");
  sub->add_option("--svg", args->svg, "draw the peak against each sweep's argument ('-' = standard output)");
  auto* samples = sub->add_option("--samples", args->samples,
                                  "estimate the peak's distribution from N uniform samples of each sweep and tolerance box")
                      ->check(CLI::Range(std::size_t{1}, std::size_t{10000000}));
  sub->add_option("--seed", args->seed, "seed of the samples (the same N and seed give the same figures)")->needs(samples);
  return [args]() {
    check_output_paths({{"--json", args->json}, {"--csv", args->csv}, {"--svg", args->svg}},
                       {{args->file, "the input circuit"}});
    Circuit circuit = parse_netlist_file(args->file);
    std::vector<Sweep> sweeps = circuit.sweeps();
    if (!args->sweeps.empty()) {
      sweeps.clear();
      // Each --sweep is a sweep line of its own.
      for (const auto& text : args->sweeps) {
        sweeps.push_back(parse_sweep_argument(circuit, text));
        sweeps.back().line = static_cast<std::uint32_t>(sweeps.size() - 1);
      }
    }
    Solution nominal = solve(circuit);
    WorstOptions options;
    options.samples = args->samples;
    options.seed = args->seed;
    WorstReport report = find_worst_case(circuit, sweeps, options);
    std::string json = args->json.empty() ? "" : worst_json(report, circuit);
    std::string csv = args->csv.empty() ? "" : worst_csv(report);
    std::string svg = args->svg.empty() ? "" : worst_svg(report, circuit);
    std::ostringstream text;
    write_worst_text(text, report, nominal);
    write_outputs({{"--json", args->json, json}, {"--csv", args->csv, csv}, {"--svg", args->svg, svg}}, std::cout);
    if (args->json != "-" && args->csv != "-" && args->svg != "-") std::cout << text.str();
    for (const auto& r : report.ratings)
      if (r.exceeded) return static_cast<int>(ExitCode::check_failed);
    return 0;
  };
}

}  // namespace netfold::cli
