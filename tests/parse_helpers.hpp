#pragma once
/// \file parse_helpers.hpp
/// Parser test helpers: "parses, then check" and "fails at line L, column C with text containing
/// S". Both report at the caller's file and line (std::source_location), so a failing check
/// points at the test that made it, not at this header.

#include <catch2/catch.hpp>

#include <cstdint>
#include <source_location>
#include <string>
#include <string_view>
#include <vector>

#include "netfold/parse.hpp"

namespace netfold_test {

/// Records one assertion result at `where`. A failure with `abort_test` ends the test case, as
/// REQUIRE does.
inline void record_at(const std::source_location& where, bool ok, const std::string& message, bool abort_test) {
  Catch::AssertionHandler handler(abort_test ? "REQUIRE_PARSE_ERROR" : "CHECK_PARSE",
                                  Catch::SourceLineInfo(where.file_name(), where.line()), Catch::StringRef(),
                                  abort_test ? Catch::ResultDisposition::Normal
                                             : Catch::ResultDisposition::ContinueOnFailure);
  handler.handleMessage(ok ? Catch::ResultWas::Ok : Catch::ResultWas::ExplicitFailure, message);
  handler.complete();
}

/// Every diagnostic as formatted for the terminal, one after another.
inline std::string describe(const std::vector<netfold::Diagnostic>& diagnostics) {
  std::string out;
  for (const auto& d : diagnostics) out += d.format() + "\n";
  return out.empty() ? "(no diagnostics: the text parsed)" : out;
}

/// The diagnostics of `text` (empty when it parses). Any exception other than InputError
/// escapes and fails the test.
inline std::vector<netfold::Diagnostic> parse_errors(std::string_view text) {
  try {
    netfold::parse_netlist(text, "test.nf");
  } catch (const netfold::InputError& e) {
    return e.diagnostics();
  }
  return {};
}

/// "Parses, then check": the circuit of `text`. A parse error fails the calling test at the
/// caller's line and shows every diagnostic.
inline netfold::Circuit parses_ok(std::string_view text,
                                  const std::source_location& where = std::source_location::current()) {
  try {
    return netfold::parse_netlist(text, "test.nf");
  } catch (const netfold::InputError& e) {
    record_at(where, false, "expected the text to parse, but it gave:\n" + describe(e.diagnostics()), true);
    throw;  // not reached: record_at ended the test case
  }
}

/// "Fails at line L, column C with text containing S": the first diagnostic (in file order) of
/// `text` is at `line`:`col` and its message contains `substring`. Use line 0, column 0 for a
/// message about the file as a whole.
inline void require_parse_error(std::string_view text, std::uint32_t line, std::uint32_t col,
                                std::string_view substring,
                                const std::source_location& where = std::source_location::current()) {
  std::vector<netfold::Diagnostic> errors = parse_errors(text);
  if (errors.empty()) {
    record_at(where, false, "expected a parse error, but the text parsed:\n" + std::string(text), true);
    return;
  }
  const netfold::Diagnostic& d = errors.front();
  bool ok = d.loc.line == line && d.loc.col == col && d.message.find(substring) != std::string::npos;
  std::string message = "expected an error at " + std::to_string(line) + ":" + std::to_string(col) +
                        " containing \"" + std::string(substring) + "\"; got:\n" + describe(errors);
  record_at(where, ok, message, true);
}

}  // namespace netfold_test

/// REQUIRE_PARSE_ERROR(text, line, col, substring): see netfold_test::require_parse_error.
#define REQUIRE_PARSE_ERROR(text, line, col, substring) \
  ::netfold_test::require_parse_error((text), (line), (col), (substring))
