#include <countersign/util/text.hpp>

#include <gtest/gtest.h>

namespace countersign {
namespace {

TEST(Utf8, WellFormedTextIsRecognisedAndKept) {
  EXPECT_TRUE(is_valid_utf8("M\xC3\xBCller^J\xC3\xB6rg"));
  EXPECT_EQ(valid_utf8("M\xC3\xBCller"), "M\xC3\xBCller");
  EXPECT_TRUE(is_valid_utf8("\xF0\x9F\x98\x80"));  // U+1F600, four bytes
}

TEST(Utf8, MalformedBytesBecomeReplacementCharacters) {
  // Latin-1 "Müller": 0xFC is not UTF-8 (the cause of the JSON abort in issue 10).
  EXPECT_FALSE(is_valid_utf8("M\xFCller"));
  EXPECT_EQ(valid_utf8("M\xFCller"), "M\xEF\xBF\xBDller");
  EXPECT_FALSE(is_valid_utf8("\xC0\xAF"));          // overlong "/"
  EXPECT_FALSE(is_valid_utf8("\xED\xA0\x80"));      // a surrogate
  EXPECT_FALSE(is_valid_utf8("\xF4\x90\x80\x80"));  // above U+10FFFF
  EXPECT_FALSE(is_valid_utf8("\xE2\x82"));          // cut short
  EXPECT_EQ(valid_utf8("\xE2\x82"), "\xEF\xBF\xBD\xEF\xBF\xBD");
}

TEST(EscapeControlCharacters, ANewlineCannotStartAForgedLine) {
  const std::string forged = "RP1.dcm\n2026-12-02T08:15:00Z checked FAKE.dcm verdict within_tolerance";
  const std::string escaped = escape_control_characters(forged);
  EXPECT_EQ(escaped.find('\n'), std::string::npos);
  EXPECT_EQ(escaped, "RP1.dcm\\n2026-12-02T08:15:00Z checked FAKE.dcm verdict within_tolerance");
}

TEST(EscapeControlCharacters, EveryControlIsVisibleAndEscapesAreUnambiguous) {
  EXPECT_EQ(escape_control_characters("a\rb\tc\x1b[31md\x7f"), "a\\rb\\tc\\x1b[31md\\x7f");
  EXPECT_EQ(escape_control_characters("C:\\n"), "C:\\\\n");         // a literal backslash-n stays distinct
  EXPECT_EQ(escape_control_characters("x\xC2\x85y"), "x\\u0085y");  // C1 NEL
  EXPECT_EQ(escape_control_characters("x\xE2\x80\xA8y"), "x\\u2028y");     // line separator
  EXPECT_EQ(escape_control_characters("x\xE2\x80\xAEy"), "x\\u202ey");     // right-to-left override
  EXPECT_EQ(escape_control_characters("M\xFCller"), "M\\xfcller");         // not UTF-8
  EXPECT_EQ(escape_control_characters("M\xC3\xBCller"), "M\xC3\xBCller");  // printable text is kept
}

}  // namespace
}  // namespace countersign
