// Tests of the one XML text escaper shared by the SVG plot and the JUnit report.
#include <catch2/catch.hpp>

#include <string>

#include "report/xml_text.hpp"

using netfold::detail::escape_xml;
using netfold::detail::utf8_sequence_length;
using netfold::detail::XmlControls;

namespace {
const std::string kFffd = "\xEF\xBF\xBD";
}

TEST_CASE("the five XML special characters become entities under both control policies", "[report]") {
  // source: XML 1.0 (Fifth Edition), section 2.4 (character data) and 4.6 (predefined entities)
  for (auto controls : {XmlControls::svg_line, XmlControls::references})
    CHECK(escape_xml("a & b < c > \"d\" 'e'", controls) == "a &amp; b &lt; c &gt; &quot;d&quot; &apos;e&apos;");
}

TEST_CASE("control characters become a space or '?' in SVG text and references or U+FFFD in JUnit", "[report]") {
  // source: XML 1.0 section 2.2: Char excludes #x0-#x8, #xB, #xC, #xE-#x1F
  const std::string in = std::string("t\tn\nr\rz\0b\x01", 10) + "d\x7F";
  CHECK(escape_xml(in, XmlControls::svg_line) == "t n?r?z?b?d\x7F");
  CHECK(escape_xml(in, XmlControls::references) == "t&#9;n&#10;r&#13;z" + kFffd + "b" + kFffd + "d" + kFffd);
}

TEST_CASE("each byte of invalid UTF-8 becomes one U+FFFD", "[report]") {
  // source: RFC 3629 section 3 (overlong forms, surrogates and values above U+10FFFF are invalid)
  for (auto controls : {XmlControls::svg_line, XmlControls::references}) {
    CHECK(escape_xml("bad \xB5 byte", controls) == "bad " + kFffd + " byte");
    CHECK(escape_xml("\xC0\xAF", controls) == kFffd + kFffd);                  // overlong '/'
    CHECK(escape_xml("\xED\xA0\x80", controls) == kFffd + kFffd + kFffd);      // surrogate U+D800
    CHECK(escape_xml("\xF4\x90\x80\x80", controls) == kFffd + kFffd + kFffd + kFffd);  // U+110000
    CHECK(escape_xml("\xE2\x82", controls) == kFffd + kFffd);                  // truncated at the end
    CHECK(escape_xml("\xEF\xBF\xBF", controls) == kFffd + kFffd + kFffd);      // U+FFFF, not an XML char
  }
}

TEST_CASE("valid multi-byte sequences, a 4-byte one included, are kept as they are", "[report]") {
  const std::string text = "\xC2\xB5s \xE2\x80\xA0 \xF0\x9F\x94\x8C";  // µs † U+1F50C
  CHECK(escape_xml(text, XmlControls::svg_line) == text);
  CHECK(escape_xml(text, XmlControls::references) == text);
  CHECK(utf8_sequence_length(text, 0) == 2);
  CHECK(utf8_sequence_length(text, 4) == 3);
  CHECK(utf8_sequence_length(text, 8) == 4);
  CHECK(utf8_sequence_length("\xF0\x9F\x94", 0) == 0);  // the 4-byte sequence cut short
  CHECK(utf8_sequence_length("a", 0) == 1);
}
