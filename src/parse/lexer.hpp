#pragma once
/// \file lexer.hpp
/// Internal: splits `.nf` text into statements and tokens. Tokens are views into the text, so
/// lexing allocates nothing per token; the parser (src/parse/parse_*.cpp) gives them meaning.

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "netfold/diagnostics.hpp"

namespace netfold::detail {

/// What a token is. Words cover names, keywords (some hyphenated: `voltage-source`) and unit
/// words written after a space (`nF`, `kΩ`, `°`).
enum class TokenKind : std::uint8_t {
  word,
  number,         ///< `470`, `-90`, `.5`, `1e-3`, with a unit glued on (`4.7kΩ`, `30°`, `1%`)
  string,         ///< `"..."`, quotes and escapes included
  colon,          ///< `:`
  comma,          ///< `,`
  arrow,          ///< `->`
  range,          ///< `..`
  at_sign,        ///< `@`
  dot,            ///< `.`
  equal,          ///< `=`
  less,           ///< `<`
  less_equal,     ///< `<=`
  greater,        ///< `>`
  greater_equal,  ///< `>=`
  plus_minus,     ///< `±` or `+-`
  plus,           ///< `+`
  minus,          ///< `-`
  lbracket,       ///< `[`
  rbracket,       ///< `]`
  percent,        ///< `%` standing alone (`1 %`)
  end,            ///< end of the statement
};

/// One token: a view of its text and where it starts.
struct Token {
  TokenKind kind = TokenKind::end;
  std::string_view text;            ///< as written; empty for `end`
  std::uint32_t number_size = 0;    ///< numbers: bytes of the numeric part
  SourceLoc loc;                    ///< line and column (code points) of the first character
  std::uint32_t end_col = 0;        ///< column just past the token

  /// Numbers: the numeric part, sign included (`-4.7` of `-4.7kΩ`).
  std::string_view number_part() const { return text.substr(0, number_size); }
  /// Numbers: the unit glued to the number (`kΩ` of `-4.7kΩ`), possibly empty.
  std::string_view suffix() const { return text.substr(number_size); }
};

/// A lexical error: where, and what.
struct LexError {
  SourceLoc loc;
  std::string message;
};

/// The first place where `text` stops being UTF-8 text (a NUL byte, an invalid byte sequence),
/// or nothing when it is text throughout.
std::optional<LexError> find_text_fault(std::string_view text);

/// True for `[A-Za-z_][A-Za-z0-9_]*`.
bool is_name(std::string_view text);

/// Reads statements one at a time: a statement is one line plus the lines its trailing `\`
/// joins to it. Comments, blank lines and `\r` are dropped; columns are those of the physical
/// line each token is on. The text must have passed find_text_fault.
class Lexer {
 public:
  explicit Lexer(std::string_view text) : text_(text) {}

  /// Fills `tokens` (cleared first) with the next statement, ending in an `end` token placed
  /// just past the last token. Returns false when no statement is left. On a lexical error,
  /// `error` is set, `tokens` holds what came before it, and the rest of the statement is skipped.
  bool next_statement(std::vector<Token>& tokens, std::optional<LexError>& error);

 private:
  // Lexes one physical line; returns true when it ends in a continuation `\`.
  bool lex_line(std::string_view line, std::vector<Token>& tokens, std::optional<LexError>& error);

  std::string_view text_;
  std::size_t pos_ = 0;         // byte offset of the next physical line
  std::uint32_t line_no_ = 0;   // number of the physical line last read
};

}  // namespace netfold::detail
