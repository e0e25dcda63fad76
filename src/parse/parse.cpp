// The parser's public entry points: a file, a text, and the command-line arguments that are
// read with the parser's own code against a finished circuit.
#include "netfold/parse.hpp"

#include <array>
#include <cctype>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>

#include <fmt/format.h>

#include "parse/file_parser.hpp"

namespace netfold {
namespace parser {
namespace {

// ---------------------------------------------------------------------------------------------
// Command-line arguments, read with the same code against a finished circuit

class CircuitScope : public Scope {
 public:
  explicit CircuitScope(const Circuit& c) : c_(c) {}
  Lookup element(std::string_view name) const override { return {c_.find_element(name).value_or(kNone), false}; }
  const Element& element_at(ElementId id) const override { return c_.element(id); }
  Lookup node(std::string_view name) const override { return {c_.find_node(name).value_or(kNone), false}; }
  std::string_view reference() const override { return c_.nodes().at(c_.ground()); }

 private:
  const Circuit& c_;
};

class ArgumentReader : Reader {
 public:
  ArgumentReader(std::string_view text, std::string_view option) : Reader(text), option_(option) {}

  Observable observable(const Circuit& circuit) {
    return guarded([&] {
      PendingObservable p = parse_observable();
      expect_end();
      Observable o = resolve_observable(CircuitScope(circuit), p);
      o.loc = {};
      return o;
    });
  }

  Sweep sweep(const Circuit& circuit) {
    return guarded([&] {
      PendingSweep p = parse_sweep_body(true);
      Sweep s = resolve_sweep(CircuitScope(circuit), p);
      // Checked here for an argument, which has no file position for the worst-case search to
      // name; a file's sweep is refused by that search, at the sweep's line.
      if (p.member == SweepMember::closes) check_closes_slot(circuit.element(s.element), s, p);
      s.loc = {};
      return s;
    });
  }

 private:
  template <typename F>
  auto guarded(F&& f) -> decltype(f()) {
    if (auto fault = detail::find_text_fault(text_)) throw argument_error(option_, "the argument is not text");
    detail::Lexer lexer(text_);
    std::optional<detail::LexError> error;
    if (!lexer.next_statement(toks_, error)) toks_.assign(1, Token{});
    if (error) throw argument_error(option_, error->message);
    std::vector<Token> rest;
    if (lexer.next_statement(rest, error)) throw argument_error(option_, "expected a single line");
    try {
      return f();
    } catch (const StatementError& e) {
      throw argument_error(option_, e.message);
    }
  }

  std::string_view option_;
};

Circuit parse_source(std::string text, std::string path) {
  // A byte-order mark says only "UTF-8"; columns start after it.
  if (std::string_view(text).substr(0, 3) == "\xEF\xBB\xBF") text.erase(0, 3);
  auto source = std::make_shared<const SourceText>(std::move(path), std::move(text));
  return FileParser(source).run();
}

}  // namespace
}  // namespace parser

using parser::ArgumentReader;
using parser::parse_source;
using parser::shorten;

Circuit parse_netlist(std::string_view text, std::string path) { return parse_source(std::string(text), std::move(path)); }

Circuit parse_netlist_file(const std::filesystem::path& path) {
  std::string name = path.string();
  auto cannot_read = [&](int err) {
    std::string reason = std::strerror(err);
    if (!reason.empty()) reason[0] = static_cast<char>(std::tolower(static_cast<unsigned char>(reason[0])));
    return InputError(Diagnostic{"", {}, fmt::format("cannot read {}: {}", name, reason), ""});
  };
  auto too_long = [&](std::string_view what) {
    return InputError(Diagnostic{name, {}, fmt::format("{} longer than {} MiB, the most netfold reads (a circuit of "
                                                       "some 4 million elements); split the circuit, or check that "
                                                       "this is the file meant",
                                                       what, kMaxFileBytes >> 20),
                                 ""});
  };
  std::FILE* f = std::fopen(name.c_str(), "rb");
  if (!f) throw cannot_read(errno);
  // Read in one piece where the size is known (a regular file), in chunks otherwise (a pipe, a
  // device). A device may never end (/dev/zero): the size limit and the first NUL byte stop
  // the reading, long before the memory runs out.
  std::string text;
  std::error_code size_error;
  auto size = std::filesystem::file_size(path, size_error);
  if (!size_error) {
    if (size > kMaxFileBytes) {
      std::fclose(f);
      throw too_long("the file is");
    }
    text.reserve(static_cast<std::size_t>(size));
  }
  std::array<char, 1 << 16> buffer{};
  std::size_t n = 0;
  bool holds_nul = false;
  while (!holds_nul && text.size() <= kMaxFileBytes && (n = std::fread(buffer.data(), 1, buffer.size(), f)) > 0) {
    text.append(buffer.data(), n);
    holds_nul = std::memchr(buffer.data(), '\0', n) != nullptr;
  }
  int err = std::ferror(f) ? errno : 0;
  std::fclose(f);
  if (err != 0) throw cannot_read(err);
  // A NUL byte is reported at its line and column by the text check of parse_source.
  if (!holds_nul && text.size() > kMaxFileBytes) throw too_long("the input runs");
  return parse_source(std::move(text), std::move(name));
}

Observable parse_observable_argument(const Circuit& circuit, std::string_view text, std::string_view option) {
  return ArgumentReader(text, option).observable(circuit);
}

Sweep parse_sweep_argument(const Circuit& circuit, std::string_view text) {
  // The option and its argument, as the user wrote them: a file position would point at nothing.
  std::string option = detail::find_text_fault(text) ? std::string("--sweep")
                                                     : fmt::format("--sweep '{}'", shorten(text));
  return ArgumentReader(text, option).sweep(circuit);
}

}  // namespace netfold

