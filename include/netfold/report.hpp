#pragma once
/// \file report.hpp
/// Last stage of the pipeline: what `solve` and `equiv` print and write — the text report,
/// the derivation (`--explain`), JSON, CSV waveforms and the SVG plot. Reports are computed
/// in full before anything is written, and take the stream to write to; library code never
/// writes to the terminal itself.

#include <filesystem>
#include <optional>
#include <ostream>
#include <string>
#include <string_view>
#include <vector>

#include "netfold/plot.hpp"
#include "netfold/port_equivalent.hpp"
#include "netfold/ratings.hpp"
#include "netfold/solve.hpp"
#include "netfold/verify.hpp"

namespace netfold {

/// Energy and I²t of an element over the window.
struct ElementTotals {
  ElementId element = kNone;
  double energy = 0.0;  ///< J absorbed
  double energy_scale = 0.0;  ///< Σ|energy per segment|, for telling a net zero from noise
  double i2t = 0.0;     ///< A²s
};

/// The numerical cross-check as the solve report shows it.
struct VerificationSummary {
  std::string method = "cvode-bdf";
  double max_rel_error = 0.0;
  double rtol = 1e-6;
  bool passed = false;
  std::string message;  ///< the comparison with numbers, e.g. where the largest error is
  long steps = 0;
  long rhs_evals = 0;
};

/// Everything `solve` reports, computed once.
struct SolveReport {
  const Solution* solution = nullptr;
  std::vector<Figures> figures;          ///< one per Solution::observables()
  std::vector<ElementTotals> totals;     ///< elements named by observables and ratings
  std::vector<RatingCheck> ratings;
  std::vector<std::string> warnings;     ///< the solution's, plus the hazard caution when due
  bool hazardous = false;                ///< above 50 V AC (rms) or 120 V DC somewhere
  std::optional<VerificationSummary> verification;
};

/// The solve report's one-line view of a cross-check.
VerificationSummary summarize_verification(const VerifyReport& report);
/// The text report of `verify`.
void write_verify_text(std::ostream& out, const VerifyReport& report, const Solution& solution);
/// JSON of `verify` (fields of docs/cli.md); `circuit` names the elements of its events.
std::string verify_json(const VerifyReport& report, const Circuit& circuit);

/// Computes figures, totals and ratings of a solution. With sweeps declared in the circuit,
/// the ratings are judged at the worst case over them (worst_case_ratings, worst.hpp; spec v2
/// "Ratings"), else at the solved values.
SolveReport build_solve_report(const Solution& solution);

/// True when a source exceeds 50 V AC (rms) or 120 V DC, or a reported voltage exceeds
/// 120 V peak. (Extra-low-voltage limits: IEC 61140 / IEC 60449 voltage band I, from memory.)
bool is_hazardous(const Solution& solution, const std::vector<Figures>& figures);

/// The text report of `solve`.
void write_solve_text(std::ostream& out, const SolveReport& report);
/// The derivation, step by step with the numbers substituted (`solve --explain`).
void write_explanation(std::ostream& out, const Solution& solution);
/// JSON of `solve` (fields of docs/cli.md).
std::string solve_json(const SolveReport& report);
/// Waveforms on the resolution grid: `t` then one column per observable, full precision.
std::string waveform_csv(const Solution& solution);
/// The watched waveforms on the resolution grid, for render_svg_plot.
PlotData plot_data(const Solution& solution);

/// The closed form of a Wave as text with numbers, e.g.
/// "0.8127 A·cos(2π·50 Hz·t - 64.48°) - 0.3497 A·e^(-t/6.667 ms)".
std::string wave_expression(const Wave& wave, std::string_view unit);

/// The equivalent (port_equivalent.hpp) as text and JSON.
void write_equivalent_text(std::ostream& out, const PortEquivalent& eq, const Solution& solution);
std::string equivalent_json(const PortEquivalent& eq, const Solution& solution);

/// @name Output files (docs/cli.md, "Output paths")

/// A file a command reads, for check_output_paths.
struct InputFile {
  std::filesystem::path path;  ///< as the user named it
  std::string role;            ///< what it is, for the refusal: "the input circuit"
};

/// An output a command was asked for: the option naming it and the path as given.
struct OutputRequest {
  std::string option;  ///< "--csv"
  std::string path;    ///< "" = not asked for (skipped); "-" = standard output
};

/// Checks every output path of a command before anything is computed or written; throws
/// InputError (exit 2, `netfold: error: --csv 'X.nf': ...`) at the first output that names an
/// input file or an earlier output (the same file by device and inode: other spellings, links),
/// exists and is not a regular file (folder, device, FIFO, socket, a link that leads nowhere),
/// lies in a missing or unwritable folder, or is a second output to standard output ("-").
/// A symbolic link to a regular file is accepted: that file is replaced, the link kept.
void check_output_paths(const std::vector<OutputRequest>& outputs, const std::vector<InputFile>& inputs);

/// One output to write.
struct OutputFile {
  std::string option;        ///< the option naming it, for messages ("" when none: a golden file)
  std::string path;          ///< "" = none (skipped); "-" = standard output
  std::string_view content;  ///< the whole content
};

/// Writes every file atomically: each to an exclusively created temporary file beside its
/// target (through a symbolic link: beside the file it leads to), fsync'd, then all renamed
/// over their targets; then the "-" contents to `out`. A failure removes every temporary file,
/// replaces no target when it happens before the renames, and is an InputError (exit 2)
/// naming the option, the path and the system's reason. A target that is not a regular file
/// is refused here too. Temporary files are registered for install_output_cleanup_handlers.
void write_outputs(const std::vector<OutputFile>& files, std::ostream& out);

/// write_outputs for one file; `option` names it in messages.
void write_output(const std::string& path, std::string_view content, std::ostream& out,
                  std::string_view option = {});

/// Makes SIGINT, SIGTERM and SIGHUP remove the temporary files being written, then end the
/// process by the signal's default action. For the executable's main: a library must not take
/// over its host's signals. A signal ignored when this is called stays ignored.
void install_output_cleanup_handlers();

}  // namespace netfold
