#include "report/xml_text.hpp"

namespace netfold::detail {

std::size_t utf8_sequence_length(std::string_view s, std::size_t i) {
  auto byte = [&](std::size_t k) { return static_cast<unsigned char>(s[k]); };
  unsigned char b0 = byte(i);
  if (b0 < 0x80) return 1;
  // The second byte's range excludes overlong forms (E0, F0), surrogates (ED) and values
  // above U+10FFFF (F4); C0, C1 and F5..FF never start a sequence.
  std::size_t len = 0;
  unsigned char lo = 0x80, hi = 0xBF;
  if (b0 >= 0xC2 && b0 <= 0xDF) {
    len = 2;
  } else if (b0 >= 0xE0 && b0 <= 0xEF) {
    len = 3;
    if (b0 == 0xE0) lo = 0xA0;
    if (b0 == 0xED) hi = 0x9F;
  } else if (b0 >= 0xF0 && b0 <= 0xF4) {
    len = 4;
    if (b0 == 0xF0) lo = 0x90;
    if (b0 == 0xF4) hi = 0x8F;
  } else {
    return 0;
  }
  if (i + len > s.size()) return 0;
  if (byte(i + 1) < lo || byte(i + 1) > hi) return 0;
  for (std::size_t k = 2; k < len; ++k)
    if (byte(i + k) < 0x80 || byte(i + k) > 0xBF) return 0;
  if (len == 3 && b0 == 0xEF && byte(i + 1) == 0xBF && byte(i + 2) >= 0xBE) return 0;
  return len;
}

namespace {

constexpr std::string_view kReplacement = "\xEF\xBF\xBD";  // U+FFFD

void append_control(std::string& out, char c, XmlControls controls) {
  switch (controls) {
    case XmlControls::svg_line:
      if (c == 0x7F)
        out += c;
      else
        out += (c == '\t') ? ' ' : '?';
      return;
    case XmlControls::references:
      switch (c) {
        case '\t': out += "&#9;"; return;
        case '\n': out += "&#10;"; return;
        case '\r': out += "&#13;"; return;
        default: out += kReplacement; return;  // a char, not an enum: other values are data
      }
  }
}

}  // namespace

std::string escape_xml(std::string_view s, XmlControls controls) {
  std::string out;
  out.reserve(s.size());
  for (std::size_t i = 0; i < s.size();) {
    std::size_t len = utf8_sequence_length(s, i);
    if (len == 0) {
      out += kReplacement;
      ++i;
      continue;
    }
    if (len > 1) {
      out.append(s.substr(i, len));
      i += len;
      continue;
    }
    char c = s[i++];
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&apos;"; break;
      default:
        if (static_cast<unsigned char>(c) < 0x20 || c == 0x7F)
          append_control(out, c, controls);
        else
          out += c;
    }
  }
  return out;
}

}  // namespace netfold::detail
