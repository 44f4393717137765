// The small data dictionary `check`, `show` and `explain` give DCMTK (share/countersign/dicom/reader.dic)
// reads every plan exactly as DCMTK's whole dictionary does: the same `show --json` for every demo plan
// in every transfer syntax DCMTK's dcmconv writes (implicit VR and big endian need the dictionary's
// VRs), and the same one-line error for every file of the malformed corpus.

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <string>
#include <vector>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;

const fs::path dcmtk_dictionary = "/usr/share/libdcmtk17/dicom.dic";

fs::path reader_dictionary() {
  return program().parent_path().parent_path() / "share" / "countersign" / "dicom" / "reader.dic";
}

std::vector<fs::path> files_in(const fs::path& folder) {
  std::vector<fs::path> files;
  for (const auto& entry : fs::directory_iterator{folder}) {
    if (entry.path().extension() == ".dcm") files.push_back(entry.path());
  }
  std::sort(files.begin(), files.end());
  return files;
}

// `show --json FILE` with the reader's dictionary and with DCMTK's whole one.
void expect_same_reading(const fs::path& file) {
  SCOPED_TRACE(file.string());
  const std::string show = quote(program().string()) + " show --json " + quote(file.string());
  const CommandOutput small = run_command(show);
  const CommandOutput whole = run_command("DCMDICTPATH=" + quote(dcmtk_dictionary.string()) + " " + show);
  EXPECT_EQ(small.exit_code, whole.exit_code);
  EXPECT_EQ(small.out, whole.out);
  EXPECT_EQ(small.err, whole.err);
}

TEST(ReaderDictionary, IsBuiltBesideTheProgram) {
  ASSERT_TRUE(fs::exists(reader_dictionary())) << reader_dictionary();
  ASSERT_TRUE(fs::exists(dcmtk_dictionary)) << "DCMTK's dictionary (Debian package libdcmtk17)";
  EXPECT_LT(fs::file_size(reader_dictionary()), fs::file_size(dcmtk_dictionary) / 10);  // about 300 of 5 000 entries
}

TEST(ReaderDictionary, DemoPlansInEveryTransferSyntaxReadTheSame) {
  ASSERT_EQ(run_command("command -v dcmconv").exit_code, 0) << "DCMTK's dcmconv (Debian package dcmtk)";
  const fs::path work = make_temp_dir("countersign-dictionary");
  for (const fs::path& plan : files_in(source_dir() / "testdata" / "plans")) {
    expect_same_reading(plan);
    for (const std::string option : {"+ti", "+tb", "+td"}) {  // implicit VR, big endian, deflated
      const fs::path copy = work / (plan.stem().string() + option.substr(1) + ".dcm");
      ASSERT_EQ(run_command("dcmconv " + option + " " + quote(plan.string()) + " " + quote(copy.string())).exit_code,
                0);
      expect_same_reading(copy);
    }
  }
  fs::remove_all(work);
}

TEST(ReaderDictionary, MalformedFilesGiveTheSameError) {
  for (const fs::path& file : files_in(source_dir() / "testdata" / "malformed")) expect_same_reading(file);
}

}  // namespace
}  // namespace countersign::test
