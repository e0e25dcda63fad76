// Tests of the diagnostic format: `FILE:LINE:COL: error: MESSAGE`, echoed line and caret.
#include <catch2/catch.hpp>

#include "netfold/diagnostics.hpp"

using namespace netfold;

TEST_CASE("a diagnostic names file, line and column and puts a caret under the column", "[diagnostics]") {
  SourceText src("valve.nf", "title \"x\"\nfree_r: resistor a -> n, 470 nF\n");
  Diagnostic d = make_diagnostic(src, {2, 26}, "'470 nF' is a capacitance, but a resistor needs a resistance");
  std::string text = d.format();
  CHECK(text ==
        "valve.nf:2:26: error: '470 nF' is a capacitance, but a resistor needs a resistance\n"
        "    2 | free_r: resistor a -> n, 470 nF\n"
        "      |                          ^");
}

TEST_CASE("the caret column counts characters, not bytes", "[diagnostics]") {
  SourceText src("u.nf", "R1: resistor a -> b, 4.7 kΩ, bad\n");
  Diagnostic d = make_diagnostic(src, {1, 30}, "unknown attribute 'bad'");
  std::string text = d.format();
  auto caret_line = text.substr(text.rfind('\n') + 1);
  CHECK(caret_line == "      | " + std::string(29, ' ') + "^");
}

TEST_CASE("an InputError carries exit status 2 and every diagnostic", "[diagnostics]") {
  SourceText src("f.nf", "a\nb\n");
  InputError e({make_diagnostic(src, {1, 1}, "first"), make_diagnostic(src, {2, 1}, "second")});
  CHECK(e.exit_code() == ExitCode::bad_input);
  CHECK(e.diagnostics().size() == 2);
  CHECK(std::string(e.what()).find("f.nf:2:1: error: second") != std::string::npos);
}

TEST_CASE("control bytes in an echoed line are shown as '?'", "[diagnostics]") {
  SourceText src("nul.nf", std::string("R1: resistor a -> b, 1k\0x\n", 26));
  Diagnostic d = make_diagnostic(src, {1, 24}, "the file is not text");
  CHECK(d.format().find("1k?x") != std::string::npos);
}
