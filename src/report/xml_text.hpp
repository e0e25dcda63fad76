// Text made safe for XML 1.0 (SVG plots and the JUnit report; internal to netfold_core).
#pragma once

#include <cstddef>
#include <string>
#include <string_view>

namespace netfold::detail {

/// Length of the valid UTF-8 sequence at `s[i]`, or 0 when there is none: overlong forms,
/// surrogates, values above U+10FFFF and U+FFFE/U+FFFF (not XML characters) count as invalid.
std::size_t utf8_sequence_length(std::string_view s, std::size_t i);

/// What becomes of the control characters XML 1.0 forbids (and of tab, newline, return).
enum class XmlControls {
  /// For one line of SVG text: tab becomes a space, any other control character '?'
  /// (a newline would not render either); DEL is kept.
  svg_line,
  /// For JUnit: tab, newline and return become character references, any other control
  /// character and DEL become U+FFFD.
  references,
};

/// `& < > " '` as entities, invalid UTF-8 as U+FFFD (one per byte), control characters as
/// `controls` says: any input yields well-formed XML text or attribute content.
std::string escape_xml(std::string_view s, XmlControls controls);

}  // namespace netfold::detail
