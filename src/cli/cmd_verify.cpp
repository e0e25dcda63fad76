// `netfold verify FILE`: the closed form against CVODE on the full nodal equations.
#include <iostream>
#include <sstream>

#include "commands.hpp"
#include "netfold/parse.hpp"
#include "netfold/report.hpp"
#include "netfold/units.hpp"
#include "netfold/verify.hpp"
#include "netfold/worst.hpp"

namespace netfold::cli {

namespace {
struct VerifyArgs {
  std::string file, json, rtol;
};
}  // namespace

Command register_verify(CLI::App& app) {
  auto args = std::make_shared<VerifyArgs>();
  CLI::App* sub = app.add_subcommand("verify", "Cross-check the closed form against numerical integration (CVODE)");
  sub->add_option("FILE", args->file, "the .nf circuit")->required();
  sub->add_option("--rtol", args->rtol, "pass threshold of max |closed - numeric| / max |closed| (default 1e-6)");
  sub->add_option("--json", args->json, "write the results as JSON ('-' = standard output)");
  return [args]() {
    check_output_paths({{"--json", args->json}}, {{args->file, "the input circuit"}});
    VerifyOptions options;
    if (!args->rtol.empty()) {
      options.rtol = parse_quantity_argument(args->rtol, Dimension::ratio, "--rtol").value;
      if (!(options.rtol > 0.0)) throw argument_error("--rtol", "expected a positive number, found '" + args->rtol + "'");
    }
    Circuit circuit = parse_netlist_file(args->file);
    Solution solution = solve(circuit);
    VerifyReport report = verify_closed_form(solution, options);
    std::string json = args->json.empty() ? "" : verify_json(report, circuit);
    std::ostringstream text;
    write_verify_text(text, report, solution);
    // One verdict per file in every command: an exceeded rating fails verify too.
    std::vector<RatingCheck> ratings = worst_case_ratings(circuit, circuit.sweeps());
    bool exceeded = false;
    for (const auto& r : ratings)
      if (r.exceeded) {
        if (!exceeded) text << "\nratings exceeded\n";
        text << "  " << rating_line(circuit, r) << "\n";
        exceeded = true;
      }
    if (!args->json.empty()) write_output(args->json, json, std::cout, "--json");
    if (args->json != "-") std::cout << text.str();
    return report.passed && !exceeded ? 0 : static_cast<int>(ExitCode::check_failed);
  };
}

}  // namespace netfold::cli
