#include "netfold/diagnostics.hpp"

#include <fmt/format.h>

namespace netfold {

SourceText::SourceText(std::string path, std::string text) : path_(std::move(path)), text_(std::move(text)) {
  line_starts_.push_back(0);
  for (std::size_t i = 0; i < text_.size(); ++i) {
    if (text_[i] == '\n' && i + 1 < text_.size()) line_starts_.push_back(i + 1);
  }
}

std::string_view SourceText::line(std::uint32_t line) const {
  if (line == 0 || line > line_starts_.size()) return {};
  std::size_t begin = line_starts_[line - 1];
  std::size_t end = text_.find('\n', begin);
  if (end == std::string::npos) end = text_.size();
  if (end > begin && text_[end - 1] == '\r') --end;
  return std::string_view(text_).substr(begin, end - begin);
}

namespace {

// Echoing a very long line would bury the message; show a window around the column.
constexpr std::size_t kEchoWidth = 160;

// Number of bytes of the first `chars` UTF-8 code points of `s`.
std::size_t bytes_of_chars(std::string_view s, std::size_t chars) {
  std::size_t i = 0;
  while (i < s.size() && chars > 0) {
    ++i;
    while (i < s.size() && (static_cast<unsigned char>(s[i]) & 0xC0) == 0x80) ++i;
    --chars;
  }
  return i;
}

// Echoed text must stay printable: control bytes (a NUL, say) become '?'.
std::string printable(std::string_view s) {
  std::string out;
  out.reserve(s.size());
  for (char c : s) out.push_back((static_cast<unsigned char>(c) < 0x20 && c != '\t') || c == 0x7f ? '?' : c);
  return out;
}

}  // namespace

std::string Diagnostic::format() const {
  std::string out;
  if (!path.empty() && loc.line > 0) {
    out = fmt::format("{}:{}:{}: error: {}", path, loc.line, loc.col, message);
  } else if (!path.empty()) {
    // About the file as a whole (empty, not text): still FILE:LINE:COL, at its start.
    out = fmt::format("{}:1:1: error: {}", path, message);
  } else {
    out = fmt::format("netfold: error: {}", message);
  }
  if (!line_text.empty() && loc.line > 0) {
    std::size_t col = loc.col > 0 ? loc.col - 1 : 0;
    std::string_view text = line_text;
    std::size_t skip_chars = col > kEchoWidth / 2 ? col - kEchoWidth / 2 : 0;
    std::size_t skip_bytes = bytes_of_chars(text, skip_chars);
    std::string_view shown = text.substr(skip_bytes);
    std::size_t shown_bytes = bytes_of_chars(shown, kEchoWidth);
    std::string_view prefix = skip_chars > 0 ? "..." : "";
    std::string_view suffix = shown_bytes < shown.size() ? "..." : "";
    out += fmt::format("\n{:>5} | {}{}{}", loc.line, prefix, printable(shown.substr(0, shown_bytes)), suffix);
    out += fmt::format("\n      | {:{}}^", "", prefix.size() + col - skip_chars);
  }
  return out;
}

namespace {
std::string join_diagnostics(const std::vector<Diagnostic>& diagnostics) {
  std::string out;
  for (const auto& d : diagnostics) {
    if (!out.empty()) out += '\n';
    out += d.format();
  }
  return out;
}
}  // namespace

InputError::InputError(std::vector<Diagnostic> diagnostics)
    : Error(ExitCode::bad_input, join_diagnostics(diagnostics)), diagnostics_(std::move(diagnostics)) {}

InputError::InputError(Diagnostic diagnostic) : InputError(std::vector<Diagnostic>{std::move(diagnostic)}) {}

Diagnostic make_diagnostic(const SourceText& source, SourceLoc loc, std::string message) {
  return Diagnostic{source.path(), loc, std::move(message), std::string(source.line(loc.line))};
}

InputError argument_error(std::string_view option, std::string message) {
  std::string text = option.empty() ? std::move(message) : fmt::format("{}: {}", option, message);
  return InputError(Diagnostic{"", {}, std::move(text), ""});
}

}  // namespace netfold
