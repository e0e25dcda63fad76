#pragma once
/// \file diagnostics.hpp
/// Errors and source positions. Every failure the tool reports is a netfold::Error that
/// carries the process exit status it maps to; only `main` catches and maps them.

#include <cstdint>
#include <memory>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

namespace netfold {

/// Process exit statuses of the command line (binding, see docs/cli.md).
enum class ExitCode : int {
  ok = 0,            ///< all fine
  check_failed = 1,  ///< a claim, a cross-check or a rating failed
  bad_input = 2,     ///< the input is wrong; the message names file:line:column
  internal = 3,      ///< internal or numerical failure
};

/// A position in a source file: line and column counted from 1; the column counts
/// characters (Unicode code points), not bytes. {0, 0} means "no position".
struct SourceLoc {
  std::uint32_t line = 0;  ///< 1-based line
  std::uint32_t col = 0;   ///< 1-based column in characters
};

/// The text of one input file, kept so that later stages can still echo the offending line.
class SourceText {
 public:
  SourceText(std::string path, std::string text);
  /// The path as the user gave it.
  const std::string& path() const { return path_; }
  /// The whole file.
  const std::string& text() const { return text_; }
  /// Line `line` (1-based) without its end-of-line characters; empty when out of range.
  std::string_view line(std::uint32_t line) const;
  /// Number of lines.
  std::size_t line_count() const { return line_starts_.size(); }

 private:
  std::string path_;
  std::string text_;
  std::vector<std::size_t> line_starts_;
};

/// One message about the input, positioned in a file.
struct Diagnostic {
  std::string path;       ///< file as the user named it ("" for command-line arguments)
  SourceLoc loc;          ///< where; {0,0} when the message is about the file as a whole
  std::string message;    ///< lower-case, no trailing period: what was expected, what was found
  std::string line_text;  ///< the offending line, echoed under the message ("" when unknown)
  /// `FILE:LINE:COL: error: MESSAGE`, then the line and a caret under the column.
  std::string format() const;
};

/// Root of every error netfold reports; carries the exit status it maps to.
class Error : public std::runtime_error {
 public:
  Error(ExitCode code, const std::string& what) : std::runtime_error(what), code_(code) {}
  /// The process exit status for this error.
  ExitCode exit_code() const { return code_; }

 private:
  ExitCode code_;
};

/// Bad input (exit 2): one or more positioned diagnostics.
class InputError : public Error {
 public:
  explicit InputError(std::vector<Diagnostic> diagnostics);
  explicit InputError(Diagnostic diagnostic);
  /// Every diagnostic, in file order.
  const std::vector<Diagnostic>& diagnostics() const { return diagnostics_; }

 private:
  std::vector<Diagnostic> diagnostics_;
};

/// A numerical or internal failure (exit 3): the message says what was compared.
class NumericError : public Error {
 public:
  explicit NumericError(const std::string& what) : Error(ExitCode::internal, what) {}
};

/// Builds a diagnostic at `loc` of `source`, echoing its line.
Diagnostic make_diagnostic(const SourceText& source, SourceLoc loc, std::string message);

/// An InputError about the whole of a command-line argument, e.g. `--at`: "netfold: error: ...".
InputError argument_error(std::string_view option, std::string message);

}  // namespace netfold
