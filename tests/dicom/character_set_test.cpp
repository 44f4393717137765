// Text in international character sets (issue 10): every text value the reader returns is UTF-8,
// converted from the dataset's Specific Character Set (0008,0005) by DCMTK; bytes it cannot decode
// are shown as U+FFFD and the plan carries a warning naming the attribute. pydicom decodes the same
// files independently; the two must agree.

#include <countersign/dicom/read_plan.hpp>
#include <countersign/util/text.hpp>

#include "../../src/dicom/text_decoder.hpp"
#include "support/paths.hpp"

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>

#include <gtest/gtest.h>

#include <cstdio>
#include <string>

namespace countersign::dicom {
namespace {

namespace fs = std::filesystem;

std::string hex(const std::string& bytes) {
  std::string out;
  for (const char c : bytes) {
    char two[3];
    std::snprintf(two, sizeof two, "%02x", static_cast<unsigned char>(c));
    out += two;
  }
  return out;
}

// A demo plan (invented patient) with the given Specific Character Set and raw Patient's Name bytes.
fs::path plan_with_name(const fs::path& dir, const std::string& file, const std::string& character_set,
                        const std::string& raw_name) {
  DcmFileFormat format;
  EXPECT_TRUE(format.loadFile((test::source_dir() / "testdata/plans/fern_box_4field.dcm").c_str()).good());
  DcmDataset* dataset = format.getDataset();
  if (character_set.empty()) {
    delete dataset->remove(DCM_SpecificCharacterSet);
  } else {
    EXPECT_TRUE(dataset->putAndInsertString(DCM_SpecificCharacterSet, character_set.c_str()).good());
  }
  // Stored as given: DCMTK does not convert what it is handed.
  EXPECT_TRUE(
      dataset->putAndInsertOFStringArray(DCM_PatientName, OFString{raw_name.data(), raw_name.size()}).good());
  const fs::path path = dir / file;
  EXPECT_TRUE(format.saveFile(path.c_str(), EXS_LittleEndianExplicit).good());
  return path;
}

std::string pydicom_decoded_hex(const fs::path& file, const std::string& keyword) {
  const auto python = test::python_with_pydicom();
  EXPECT_TRUE(python.has_value()) << "python3-pydicom is needed for the cross-check";
  if (!python) return {};
  const auto run = test::run_command(
      *python + " " + test::quote((test::source_dir() / "tests/dicom/pydicom_text.py").string()) + " " +
      test::quote(file.string()) + " " + keyword);
  EXPECT_EQ(run.exit_code, 0) << run.err;
  return run.out.substr(0, run.out.find('\n'));
}

struct NameCase {
  const char* label;
  std::string character_set;
  std::string raw;       // the bytes stored in the file
  std::string expected;  // UTF-8
};

void PrintTo(const NameCase& c, std::ostream* out) { *out << c.label; }

class CharacterSets : public ::testing::TestWithParam<NameCase> {
 protected:
  void SetUp() override { dir_ = test::make_temp_dir("countersign-charset"); }
  void TearDown() override { fs::remove_all(dir_); }
  fs::path dir_;
};

TEST_P(CharacterSets, NamesAreConvertedToUtf8AsPydicomDecodesThem) {
  const NameCase& c = GetParam();
  const fs::path file = plan_with_name(dir_, std::string{c.label} + ".dcm", c.character_set, c.raw);
  const auto plan = read_plan_file(file);
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->patient_name, c.expected);
  EXPECT_TRUE(plan->warnings.empty()) << plan->warnings.front();
  EXPECT_EQ(plan->specific_character_set, c.character_set);
  EXPECT_EQ(hex(plan->patient_name), pydicom_decoded_hex(file, "PatientName")) << c.label;
}

// Bytes of each character set from its code table (ISO 8859-1, -2, -5; KS X 1001 as EUC-KR); names
// invented. The Korean name is the example of DICOM PS3.5 Annex I (from memory).
INSTANTIATE_TEST_SUITE_P(
    Iso, CharacterSets,
    ::testing::Values(
        NameCase{"latin1", "ISO_IR 100", "M\xFCller^J\xF6rg", "M\xC3\xBCller^J\xC3\xB6rg"},
        NameCase{"latin2", "ISO_IR 101", "Dvo\xF8\xE1k^\xA3ukasz", "Dvo\xC5\x99\xC3\xA1k^\xC5\x81ukasz"},
        NameCase{"cyrillic", "ISO_IR 144", "\xBF\xD5\xE2\xE0\xDE\xD2^\xB8\xD2\xD0\xDD",
                 "\xD0\x9F\xD0\xB5\xD1\x82\xD1\x80\xD0\xBE\xD0\xB2^\xD0\x98\xD0\xB2\xD0\xB0\xD0\xBD"},
        NameCase{"utf8", "ISO_IR 192", "M\xC3\xBCller^J\xC3\xB6rg", "M\xC3\xBCller^J\xC3\xB6rg"},
        NameCase{"iso2022_latin1", "ISO 2022 IR 6\\ISO 2022 IR 100", "\x1B-AM\xFCller^\x1B-AJ\xF6rg",
                 "M\xC3\xBCller^J\xC3\xB6rg"},
        NameCase{"iso2022_korean", "\\ISO 2022 IR 149",
                 "Hong^Gildong=\x1B$)C\xFB\xF3^\x1B$)C\xD1\xCE\xD4\xD7",
                 "Hong^Gildong=\xE6\xB4\xAA^\xE5\x90\x89\xE6\xB4\x9E"}),
    [](const auto& name_case) { return std::string{name_case.param.label}; });

TEST(CharacterSetsChinese, Iso2022Ir58IsConverted) {
  // GB 2312 through ISO 2022 (ESC $ ) A); the name of DICOM PS3.5 Annex K's example (from memory).
  // pydicom 2.3 leaves the escape sequences in this case, so the expected text is written out here.
  const fs::path dir = test::make_temp_dir("countersign-charset");
  const fs::path file = plan_with_name(dir, "gb2312.dcm", "\\ISO 2022 IR 58",
                                       "Zhang^XiaoDong=\x1B$)A\xD5\xC5^\x1B$)A\xD0\xA1\xB6\xAB=");
  const auto plan = read_plan_file(file);
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->patient_name, "Zhang^XiaoDong=\xE5\xBC\xA0^\xE5\xB0\x8F\xE4\xB8\x9C=");
  EXPECT_TRUE(plan->warnings.empty());
  fs::remove_all(dir);
}

TEST(CharacterSetsUndecodable, BadBytesAreReplacedVisiblyAndTheReaderSaysSo) {
  const fs::path dir = test::make_temp_dir("countersign-charset");
  // Declared UTF-8, but 0xFF is never UTF-8. pydicom also shows U+FFFD for it.
  const fs::path file = plan_with_name(dir, "bad-utf8.dcm", "ISO_IR 192", "M\xFFller^J\xC3\xB6rg");
  const auto plan = read_plan_file(file);
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->patient_name, "M\xEF\xBF\xBDller^J\xC3\xB6rg");
  EXPECT_EQ(hex(plan->patient_name), pydicom_decoded_hex(file, "PatientName"));
  ASSERT_EQ(plan->warnings.size(), 1U);
  EXPECT_NE(plan->warnings.front().find("PatientName (0010,0010)"), std::string::npos)
      << plan->warnings.front();
  EXPECT_NE(plan->warnings.front().find("1 byte(s) could not be decoded"), std::string::npos);
  EXPECT_NE(plan->warnings.front().find("ISO_IR 192"), std::string::npos);
  fs::remove_all(dir);
}

TEST(CharacterSetsUndecodable, LatinBytesWithoutADeclaredCharacterSetAreReplaced) {
  // No Specific Character Set means the default repertoire (ASCII): 0xFC has no meaning there.
  const fs::path dir = test::make_temp_dir("countersign-charset");
  const fs::path file = plan_with_name(dir, "undeclared.dcm", "", "M\xFCller^J\xF6rg");
  const auto plan = read_plan_file(file);
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->patient_name, "M\xEF\xBF\xBDller^J\xEF\xBF\xBDrg");
  ASSERT_EQ(plan->warnings.size(), 1U);
  EXPECT_NE(plan->warnings.front().find("2 byte(s)"), std::string::npos) << plan->warnings.front();
  EXPECT_NE(plan->warnings.front().find("default character repertoire"), std::string::npos);
  fs::remove_all(dir);
}

TEST(CharacterSetsUndecodable, AnUnknownOrUnsupportedCharacterSetKeepsAsciiAndWarns) {
  const fs::path dir = test::make_temp_dir("countersign-charset");
  const fs::path unknown = plan_with_name(dir, "unknown.dcm", "ISO_IR 999", "M\xFCller^Jorg");
  const auto plan = read_plan_file(unknown);
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->patient_name, "M\xEF\xBF\xBDller^Jorg");
  ASSERT_EQ(plan->warnings.size(), 1U);
  EXPECT_NE(plan->warnings.front().find("ISO_IR 999"), std::string::npos) << plan->warnings.front();

  // Japanese (JIS X 0208 through ISO 2022) is decoded by pydicom, but not by Debian's DCMTK build:
  // the kanji are replaced, never shown as the ASCII bytes that encode them.
  const fs::path japanese = plan_with_name(dir, "japanese.dcm", "\\ISO 2022 IR 87",
                                           "Yamada^Tarou=\x1B$B;3ED\x1B(B^\x1B$BB@O:\x1B(B");
  const auto read = read_plan_file(japanese);
  ASSERT_TRUE(read.has_value()) << read.error().message();
  const std::string decoded_by_pydicom = pydicom_decoded_hex(japanese, "PatientName");
  if (hex(read->patient_name) != decoded_by_pydicom) {
    EXPECT_EQ(read->patient_name.find(";3ED"), std::string::npos) << read->patient_name;
    EXPECT_EQ(read->patient_name.rfind("Yamada^Tarou=", 0), 0U) << read->patient_name;
    EXPECT_NE(read->patient_name.find(std::string{replacement_character}), std::string::npos);
    ASSERT_EQ(read->warnings.size(), 1U);
  }
  fs::remove_all(dir);
}

TEST(CharacterSetsUndecodable, TextOfOtherVrsAllowsOnlyAscii) {
  // Approval Status (CS) is in the default repertoire whatever the Specific Character Set says.
  const fs::path dir = test::make_temp_dir("countersign-charset");
  DcmFileFormat format;
  ASSERT_TRUE(format.loadFile((test::source_dir() / "testdata/plans/fern_box_4field.dcm").c_str()).good());
  const std::string raw = "APPROVED\xE9";
  ASSERT_TRUE(format.getDataset()
                  ->putAndInsertOFStringArray(DCM_ApprovalStatus, OFString{raw.data(), raw.size()})
                  .good());
  const fs::path file = dir / "cs.dcm";
  ASSERT_TRUE(format.saveFile(file.c_str(), EXS_LittleEndianExplicit).good());
  const auto plan = read_plan_file(file);
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->approval_status, "APPROVED\xEF\xBF\xBD");
  ASSERT_EQ(plan->warnings.size(), 1U);
  EXPECT_NE(plan->warnings.front().find("ApprovalStatus (300E,0002)"), std::string::npos);
  fs::remove_all(dir);
}

TEST(TextDecoder, OnlyTheBadCharacterIsLostNotItsNeighbours) {
  detail::TextDecoder greek{"ISO_IR 126"};  // ISO 8859-7 (Greek) leaves 0xAE undefined
  const auto decoded = greek.decode("a\xE1\xAE\xE2^\xE3", EVR_PN);
  EXPECT_EQ(decoded.utf8, "a\xCE\xB1\xEF\xBF\xBD\xCE\xB2^\xCE\xB3");
  EXPECT_EQ(decoded.replaced_bytes, 1U);
  EXPECT_TRUE(is_valid_utf8(decoded.utf8));
}

TEST(TextDecoder, EverythingItReturnsIsUtf8WhateverTheBytes) {
  for (const std::string set :
       {"", "ISO_IR 100", "ISO_IR 192", "\\ISO 2022 IR 149", "ISO_IR 999", "GB18030"}) {
    detail::TextDecoder decoder{set};
    std::string bytes;
    for (int i = 0; i < 256; ++i) bytes += static_cast<char>(i);
    for (const DcmEVR vr : {EVR_PN, EVR_LO, EVR_ST, EVR_CS, EVR_UI}) {
      EXPECT_TRUE(is_valid_utf8(decoder.decode(bytes, vr).utf8)) << set;
    }
  }
}

}  // namespace
}  // namespace countersign::dicom
