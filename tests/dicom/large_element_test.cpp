// Values longer than DCMTK's maxReadLength (4096 bytes) are left in the input and loaded on first
// access (src/dicom/buffer_stream.hpp). They must read exactly as short ones do, from a file and
// from bytes; a declared length beyond the end of the data must be an error, not an allocation.

#include <countersign/dicom/read_plan.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>
#include <vector>

namespace countersign::dicom {
namespace {

namespace fs = std::filesystem;
using test::quote;

class LargeElement : public ::testing::Test {
 protected:
  void SetUp() override { dir_ = test::make_temp_dir("countersign-large-element"); }
  void TearDown() override { fs::remove_all(dir_); }
  fs::path dir_;
};

std::vector<std::byte> bytes_of(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  const std::string text{std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
  std::vector<std::byte> bytes(text.size());
  for (std::size_t i = 0; i < text.size(); ++i) bytes[i] = static_cast<std::byte>(text[i]);
  return bytes;
}

TEST_F(LargeElement, ALongValueReadsWhole) {
  // Implicit VR (32-bit lengths), RT Plan Description (300A,0004) set to 5550 characters with
  // DCMTK's own tools.
  const fs::path file = dir_ / "long_description.dcm";
  const std::string phrase = "Fernhollow invented long description ";
  std::string description;
  for (int i = 0; i < 150; ++i) description += phrase;
  const auto made = test::run_command(
      "dcmconv +ti " + quote((test::source_dir() / "testdata/plans/fern_static_mlc.dcm").string()) + " " +
      quote(file.string()) + " && dcmodify -nb -m " + quote("(300A,0004)=" + description) + " " +
      quote(file.string()));
  ASSERT_EQ(made.exit_code, 0) << made.err;
  const std::string expected = description.substr(0, description.size() - 1);  // trailing space trimmed

  const auto from_file = read_plan_file(file);
  ASSERT_TRUE(from_file) << from_file.error().message();
  EXPECT_EQ(from_file->description, expected);
  const auto from_bytes = read_plan_bytes(bytes_of(file), "long_description.dcm");
  ASSERT_TRUE(from_bytes) << from_bytes.error().message();
  EXPECT_EQ(from_bytes->description, expected);
  EXPECT_EQ(from_bytes->beams.size(), from_file->beams.size());
}

TEST_F(LargeElement, ALengthBeyondTheEndOfTheDataIsAnError) {
  // A text file read as an implicit VR dataset: its first "element" declares 1,819,045,736 bytes.
  const fs::path file =
      test::source_dir() / "testdata/fuzz-regressions/plans/declared_length_1819045736_in_text.dcm";
  const auto plan = read_plan_bytes(bytes_of(file), "text.dcm");
  ASSERT_FALSE(plan);
  EXPECT_EQ(plan.error().file, "text.dcm");
  EXPECT_EQ(plan.error().kind, ErrorKind::not_dicom);
}

}  // namespace
}  // namespace countersign::dicom
