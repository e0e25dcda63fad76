#pragma once
/// \file golden.hpp
/// Golden waveforms: `NAME.golden.csv` beside `NAME.nf` holds the waveform CSV of an accepted
/// solution (the text `netfold solve NAME.nf --csv` writes). `check` compares every column of
/// the fresh CSV with it; a change anywhere in the circuit's response beyond the tolerance
/// fails. See docs/golden.md.
///
/// The rule, per column y (the `t` column included): the largest |fresh − golden| over the
/// rows must not exceed rel_tol × P, where P is the column's peak |value| (the larger of the
/// golden and the fresh peak, so that a column that used to be all zeros still fails when it
/// moves). Header, row count and times must match.

#include <filesystem>
#include <optional>
#include <string>
#include <string_view>

#include "netfold/solve.hpp"

namespace netfold {

/// Relative tolerance of a golden comparison when the file has no `golden-tolerance`.
inline constexpr double kDefaultGoldenTolerance = 1e-6;

/// The outcome of one golden comparison (or update).
struct GoldenResult {
  std::string golden_path;  ///< the golden file, as found beside the `.nf`
  bool passed = false;
  bool updated = false;     ///< the golden file was rewritten (`--update-golden`)
  /// What was compared and the largest deviation, or what differs and where, e.g.
  /// "column '@out' differs by 2.475 mV at t = 12 ms (row 601), more than 1e-6 × peak 2.5 V".
  std::string message;
};

/// `NAME.golden.csv` for `NAME.nf`.
std::filesystem::path golden_path_for(const std::filesystem::path& netlist);

/// Compares a fresh waveform CSV with golden text under the rule of the file comment.
/// `golden_path` is used in messages only. Never throws for malformed text: a golden file
/// that is not a CSV of numbers is a failed comparison that says which line is wrong.
GoldenResult compare_golden(std::string_view fresh_csv, std::string_view golden_csv, double rel_tol,
                            const std::string& golden_path);

/// The golden comparison of a solved circuit: nothing when no golden file sits beside
/// `netlist`. With `update`, an existing golden file is rewritten atomically with the fresh
/// CSV instead (a passed, updated result). The tolerance is the circuit's
/// `golden-tolerance`, or kDefaultGoldenTolerance. An unreadable or unwritable golden file
/// is a failed result.
std::optional<GoldenResult> check_golden(const Solution& solution, const std::filesystem::path& netlist,
                                         bool update);

}  // namespace netfold
