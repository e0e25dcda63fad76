#include "parse/lexer.hpp"

#include <array>
#include <cstring>

#include <fmt/format.h>

namespace netfold::detail {

namespace {

bool is_digit(char c) { return c >= '0' && c <= '9'; }
bool is_alpha(char c) { return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_'; }
bool is_alnum(char c) { return is_alpha(c) || is_digit(c); }

// The non-ASCII characters that may appear in unit words: µ (U+00B5), μ (U+03BC), Ω (U+03A9),
// Ω (U+2126), ° (U+00B0) and ² (U+00B2, in A²s). Returns the byte length of the one at `i`, or 0.
std::size_t unit_char_size(std::string_view s, std::size_t i) {
  auto b = [&](std::size_t k) { return i + k < s.size() ? static_cast<unsigned char>(s[i + k]) : 0u; };
  if (b(0) == 0xC2 && (b(1) == 0xB5 || b(1) == 0xB0 || b(1) == 0xB2)) return 2;
  if (b(0) == 0xCE && (b(1) == 0xBC || b(1) == 0xA9)) return 2;
  if (b(0) == 0xE2 && b(1) == 0x84 && b(2) == 0xA6) return 3;
  return 0;
}

// Bytes of the word character at `i` (ASCII letter, digit, '_' or a unit character), 0 if none.
std::size_t word_char_size(std::string_view s, std::size_t i) {
  if (i >= s.size()) return 0;
  if (is_alnum(s[i])) return 1;
  return unit_char_size(s, i);
}

// Keywords with a hyphen; any other hyphen stands alone, so `@a-@b` is a difference.
constexpr std::array<std::string_view, 9> kHyphenatedKeywords{
    "voltage-source", "current-source", "pulse-rated", "rated-i2t", "golden-tolerance",
    "rated-dvdt", "rated-didt", "rated-rms", "time-below"};

bool is_hyphenated_keyword(std::string_view s) {
  for (auto k : kHyphenatedKeywords)
    if (k == s) return true;
  return false;
}

// Bytes of a rate's '/' at `i` followed by a word character (`V/us`), 0 if none: the one place
// where '/' may appear outside strings and comments.
std::size_t rate_slash_size(std::string_view s, std::size_t i) {
  return i < s.size() && s[i] == '/' && word_char_size(s, i + 1) > 0 ? 1 : 0;
}

// A number starts here: a digit, or '.' followed by a digit.
bool starts_unsigned_number(std::string_view s, std::size_t i) {
  if (i >= s.size()) return false;
  if (is_digit(s[i])) return true;
  return s[i] == '.' && i + 1 < s.size() && is_digit(s[i + 1]);
}

// Decodes the (valid) UTF-8 code point at `i`.
char32_t code_point_at(std::string_view s, std::size_t i) {
  auto c = static_cast<unsigned char>(s[i]);
  auto cont = [&](std::size_t k) {
    return i + k < s.size() ? static_cast<char32_t>(static_cast<unsigned char>(s[i + k]) & 0x3F) : 0;
  };
  if (c < 0x80) return c;
  if (c < 0xE0) return (static_cast<char32_t>(c & 0x1F) << 6) | cont(1);
  if (c < 0xF0) return (static_cast<char32_t>(c & 0x0F) << 12) | (cont(1) << 6) | cont(2);
  return (static_cast<char32_t>(c & 0x07) << 18) | (cont(1) << 12) | (cont(2) << 6) | cont(3);
}

std::size_t code_point_size(std::string_view s, std::size_t i) {
  auto c = static_cast<unsigned char>(s[i]);
  std::size_t n = c < 0x80 ? 1 : c < 0xE0 ? 2 : c < 0xF0 ? 3 : 4;
  return std::min(n, s.size() - i);
}

std::string describe_character(std::string_view s, std::size_t i) {
  char32_t cp = code_point_at(s, i);
  if (cp < 0x20 || cp == 0x7F) return fmt::format("unexpected control character U+{:04X}", static_cast<unsigned>(cp));
  if (cp == '\'') return "unexpected character \"'\"";
  return fmt::format("unexpected character '{}'", s.substr(i, code_point_size(s, i)));
}

// Whether a physical line ends in a continuation `\` once its comment is removed. Used only to
// skip the rest of a statement after a lexical error, so a rough view of strings is enough.
bool line_continues(std::string_view line) {
  bool in_string = false;
  std::size_t end = line.size();
  for (std::size_t i = 0; i < line.size(); ++i) {
    char c = line[i];
    if (in_string) {
      if (c == '\\') ++i;
      else if (c == '"') in_string = false;
    } else if (c == '"') {
      in_string = true;
    } else if (c == '#') {
      end = i;
      break;
    }
  }
  while (end > 0 && (line[end - 1] == ' ' || line[end - 1] == '\t' || line[end - 1] == '\r')) --end;
  return end > 0 && line[end - 1] == '\\';
}

}  // namespace

bool is_name(std::string_view text) {
  if (text.empty() || !is_alpha(text[0])) return false;
  for (char c : text)
    if (!is_alnum(c)) return false;
  return true;
}

std::optional<LexError> find_text_fault(std::string_view text) {
  std::uint32_t line = 1;
  std::size_t line_start = 0;
  const auto* s = reinterpret_cast<const unsigned char*>(text.data());
  const std::size_t n = text.size();
  std::size_t i = 0;
  auto fault = [&](std::string message) {
    std::uint32_t col = 1;
    for (std::size_t k = line_start; k < i; ++k)
      if ((s[k] & 0xC0) != 0x80) ++col;
    return LexError{{line, col}, std::move(message)};
  };
  while (i < n) {
    unsigned char c = s[i];
    if (c < 0x80) {
      if (c == 0) return fault("the file is not text: it holds a NUL byte");
      if (c == '\n') {
        ++line;
        line_start = i + 1;
      }
      ++i;
      continue;
    }
    // Well-formed UTF-8 as defined by the Unicode standard, table 3-7: no overlong forms,
    // no surrogates, nothing above U+10FFFF.
    std::size_t len = 0;
    unsigned char lo = 0x80, hi = 0xBF;
    if (c >= 0xC2 && c <= 0xDF) len = 2;
    else if (c == 0xE0) len = 3, lo = 0xA0;
    else if ((c >= 0xE1 && c <= 0xEC) || c == 0xEE || c == 0xEF) len = 3;
    else if (c == 0xED) len = 3, hi = 0x9F;
    else if (c == 0xF0) len = 4, lo = 0x90;
    else if (c >= 0xF1 && c <= 0xF3) len = 4;
    else if (c == 0xF4) len = 4, hi = 0x8F;
    bool ok = len > 0 && i + len <= n;
    for (std::size_t k = 1; ok && k < len; ++k) {
      unsigned char b = s[i + k];
      unsigned char min = k == 1 ? lo : 0x80, max = k == 1 ? hi : 0xBF;
      ok = b >= min && b <= max;
    }
    if (!ok) return fault(fmt::format("the file is not text: invalid UTF-8 (byte 0x{:02X})", c));
    i += len;
  }
  return std::nullopt;
}

bool Lexer::next_statement(std::vector<Token>& tokens, std::optional<LexError>& error) {
  tokens.clear();
  error.reset();
  bool have_statement = false;
  while (pos_ < text_.size()) {
    const char* begin = text_.data() + pos_;
    const void* nl = std::memchr(begin, '\n', text_.size() - pos_);
    std::size_t len = nl ? static_cast<std::size_t>(static_cast<const char*>(nl) - begin) : text_.size() - pos_;
    std::string_view line(begin, len);
    pos_ += len + (nl ? 1 : 0);
    ++line_no_;
    // After a lexical error the rest of the statement is skipped, continuation lines included.
    bool continues = error ? line_continues(line) : lex_line(line, tokens, error);
    have_statement = have_statement || !tokens.empty() || error.has_value();
    if (!continues && have_statement) break;
  }
  if (!have_statement) return false;
  Token end;
  end.kind = TokenKind::end;
  if (!tokens.empty()) {
    end.loc = {tokens.back().loc.line, tokens.back().end_col};
    end.text = tokens.back().text.substr(tokens.back().text.size());
  } else {
    end.loc = {line_no_, 1};
  }
  end.end_col = end.loc.col;
  tokens.push_back(end);
  return true;
}

bool Lexer::lex_line(std::string_view line, std::vector<Token>& tokens, std::optional<LexError>& error) {
  const std::size_t n = line.size();
  // Columns count code points; computed incrementally, since tokens come in order.
  std::size_t counted = 0;
  std::uint32_t col = 1;
  auto col_at = [&](std::size_t byte) {
    for (; counted < byte; ++counted)
      if ((static_cast<unsigned char>(line[counted]) & 0xC0) != 0x80) ++col;
    return col;
  };
  auto fail = [&](std::size_t at, std::string message) {
    error = LexError{{line_no_, col_at(at)}, std::move(message)};
    return line_continues(line);
  };

  std::size_t i = 0;
  while (i < n) {
    char c = line[i];
    if (c == ' ' || c == '\t' || c == '\r') {
      ++i;
      continue;
    }
    if (c == '#') break;
    std::size_t start = i;
    std::size_t number_size = 0;
    TokenKind kind = TokenKind::end;
    char next = i + 1 < n ? line[i + 1] : '\0';
    if (c == '"') {
      std::size_t j = i + 1;
      while (j < n && line[j] != '"') {
        if (line[j] == '\\') {
          if (j + 1 >= n) break;
          if (line[j + 1] != '"' && line[j + 1] != '\\')
            return fail(j, fmt::format("'\\{}' is not an escape: a string may escape only '\\\"' and '\\\\'",
                                       line.substr(j + 1, code_point_size(line, j + 1))));
          j += 2;
        } else {
          ++j;
        }
      }
      if (j >= n) return fail(i, "unterminated string: it needs a closing '\"' on the same line");
      i = j + 1;
      kind = TokenKind::string;
    } else if (c == '\\') {
      std::size_t j = i + 1;
      while (j < n && (line[j] == ' ' || line[j] == '\t' || line[j] == '\r')) ++j;
      if (j == n || line[j] == '#') return true;
      return fail(i, "'\\' continues a statement only as the last character of a line");
    } else if (c == '+' && next == '-') {
      i += 2;
      kind = TokenKind::plus_minus;
    } else if (c == '-' && next == '>') {
      i += 2;
      kind = TokenKind::arrow;
    } else if (starts_unsigned_number(line, i) ||
               ((c == '+' || c == '-') && starts_unsigned_number(line, i + 1))) {
      std::size_t j = i;
      if (c == '+' || c == '-') ++j;
      while (j < n && is_digit(line[j])) ++j;
      // A '.' followed by another '.' is the range operator: `0..40ms`.
      if (j < n && line[j] == '.' && !(j + 1 < n && line[j + 1] == '.')) {
        ++j;
        while (j < n && is_digit(line[j])) ++j;
      }
      if (j < n && (line[j] == 'e' || line[j] == 'E')) {
        std::size_t k = j + 1;
        if (k < n && (line[k] == '+' || line[k] == '-')) ++k;
        if (k < n && is_digit(line[k])) {
          j = k;
          while (j < n && is_digit(line[j])) ++j;
        }
      }
      number_size = j - i;
      for (std::size_t w; (w = word_char_size(line, j) + rate_slash_size(line, j)) > 0 || (j < n && line[j] == '%');)
        j += w > 0 ? w : 1;
      i = j;
      kind = TokenKind::number;
    } else if (is_alpha(c) || unit_char_size(line, i) > 0) {
      std::size_t j = i;
      for (std::size_t w; (w = word_char_size(line, j) + rate_slash_size(line, j)) > 0;) j += w;
      if (j + 1 < n && line[j] == '-' && is_alpha(line[j + 1])) {
        std::size_t k = j + 1;
        while (k < n && is_alnum(line[k])) ++k;
        if (is_hyphenated_keyword(line.substr(i, k - i))) j = k;
      }
      i = j;
      kind = TokenKind::word;
    } else if (static_cast<unsigned char>(c) == 0xC2 && static_cast<unsigned char>(next) == 0xB1) {
      i += 2;
      kind = TokenKind::plus_minus;
    } else {
      ++i;
      switch (c) {
        case ':': kind = TokenKind::colon; break;
        case ',': kind = TokenKind::comma; break;
        case '@': kind = TokenKind::at_sign; break;
        case '[': kind = TokenKind::lbracket; break;
        case ']': kind = TokenKind::rbracket; break;
        case '%': kind = TokenKind::percent; break;
        case '+': kind = TokenKind::plus; break;
        case '-': kind = TokenKind::minus; break;
        case '=': kind = TokenKind::equal; break;
        case '.':
          if (next == '.') ++i, kind = TokenKind::range;
          else kind = TokenKind::dot;
          break;
        case '<':
          if (next == '=') ++i, kind = TokenKind::less_equal;
          else kind = TokenKind::less;
          break;
        case '>':
          if (next == '=') ++i, kind = TokenKind::greater_equal;
          else kind = TokenKind::greater;
          break;
        default: return fail(start, describe_character(line, start));
      }
    }
    Token t;
    t.kind = kind;
    t.text = line.substr(start, i - start);
    t.number_size = static_cast<std::uint32_t>(number_size);
    t.loc = {line_no_, col_at(start)};
    t.end_col = col_at(i);
    tokens.push_back(t);
  }
  return false;
}

}  // namespace netfold::detail
