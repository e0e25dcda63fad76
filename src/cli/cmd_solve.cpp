// `netfold solve FILE`: the main job.
#include <iostream>
#include <sstream>

#include "commands.hpp"
#include "netfold/parse.hpp"
#include "netfold/plot.hpp"
#include "netfold/report.hpp"
#include "netfold/solve.hpp"
#include "netfold/verify.hpp"

namespace netfold::cli {

namespace {
struct SolveArgs {
  std::string file;
  std::string csv, json, svg;
  bool explain = false;
  bool no_verify = false;
};
}  // namespace

Command register_solve(CLI::App& app) {
  auto args = std::make_shared<SolveArgs>();
  CLI::App* sub = app.add_subcommand("solve", "Equivalent, time constant and closed-form response of every segment");
  sub->add_option("FILE", args->file, "the .nf circuit")->required();
  sub->add_option("--csv", args->csv, "write the waveforms on the resolution grid ('-' = standard output)");
  sub->add_option("--json", args->json, "write the report as JSON ('-' = standard output)");
  sub->add_option("--svg", args->svg, "write a plot of the watched waveforms");
  sub->add_flag("--explain", args->explain, "print the derivation step by step with numbers substituted");
  sub->add_flag("--no-verify", args->no_verify, "skip the numerical cross-check");
  return [args]() {
    check_output_paths({{"--csv", args->csv}, {"--json", args->json}, {"--svg", args->svg}},
                       {{args->file, "the input circuit"}});
    const bool to_stdout = args->csv == "-" || args->json == "-" || args->svg == "-";
    Circuit circuit = parse_netlist_file(args->file);
    Solution solution = solve(circuit);
    SolveReport report = build_solve_report(solution);
    if (!args->no_verify) report.verification = summarize_verification(verify_closed_form(solution));

    // Everything is computed before anything is written, so a failure leaves no output file.
    std::string csv = args->csv.empty() ? "" : waveform_csv(solution);
    std::string json = args->json.empty() ? "" : solve_json(report);
    std::string svg = args->svg.empty() ? "" : render_svg_plot(plot_data(solution));
    std::ostringstream text;
    write_solve_text(text, report);
    if (args->explain) write_explanation(text, solution);

    write_outputs({{"--csv", args->csv, csv}, {"--json", args->json, json}, {"--svg", args->svg, svg}}, std::cout);
    if (!to_stdout) std::cout << text.str();

    bool failed = report.verification && !report.verification->passed;
    for (const auto& r : report.ratings) failed |= r.exceeded;
    return failed ? static_cast<int>(ExitCode::check_failed) : 0;
  };
}

}  // namespace netfold::cli
