// The one rule for plan files (issue 10, item 6): any name except hidden and temporary ones, and by
// content an RT Plan, whatever the name.

#include <countersign/dicom/plan_files.hpp>
#include <countersign/dicom/read_plan.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <fstream>

namespace countersign::dicom {
namespace {

namespace fs = std::filesystem;

void touch(const fs::path& file) { std::ofstream{file} << "x"; }

TEST(PlanFileNames, AnyNameButHiddenAndTemporaryOnes) {
  for (const char* name :
       {"RP1.2.3", "RP.X.DCM", "plan.dcm", "RP.1.2.826.0.1.3680043.2.1125.1.dcm", "export (2)"}) {
    EXPECT_TRUE(is_candidate_name(name)) << name;
  }
  for (const char* name : {".countersign-rx.ab12cd", ".plan.dcm", "plan.dcm.part", "plan.partial", "plan.tmp",
                           "plan.temp", "plan.dcm.swp", "plan.dcm~", "RP1.dcm.reason.txt", ""}) {
    EXPECT_FALSE(is_candidate_name(name)) << name;
  }
}

TEST(PlanFileListing, FilesOfTheFolderSortedSubfoldersNamedSymlinksNotFollowed) {
  const fs::path dir = test::make_temp_dir("countersign-listing");
  touch(dir / "RP1.2.3");
  touch(dir / "RP.X.DCM");
  touch(dir / ".hidden.dcm");
  touch(dir / "half.dcm.part");
  fs::create_directories(dir / "sub" / "deeper");
  fs::create_directories(dir / ".staging");
  touch(dir / "sub" / "RP2");
  touch(dir / "sub" / "deeper" / "RP3");
  touch(dir / ".staging" / "RP4");
  fs::create_symlink(dir / "RP1.2.3", dir / "link-to-plan");
  fs::create_directory_symlink(dir / "sub", dir / "link-to-sub");

  const FolderListing flat = list_candidates(dir, Subfolders::ignore);
  EXPECT_EQ(flat.files, (std::vector<fs::path>{dir / "RP.X.DCM", dir / "RP1.2.3"}));
  EXPECT_EQ(flat.subfolders, (std::vector<fs::path>{dir / "sub"}));

  const FolderListing deep = list_candidates(dir, Subfolders::include);
  EXPECT_EQ(deep.files, (std::vector<fs::path>{dir / "RP.X.DCM", dir / "RP1.2.3", dir / "sub" / "RP2",
                                               dir / "sub" / "deeper" / "RP3"}));
  EXPECT_EQ(deep.subfolders, (std::vector<fs::path>{dir / "sub", dir / "sub" / "deeper"}));
  fs::remove_all(dir);
}

TEST(PlanFileContent, TheReaderSaysWhatAFileHolds) {
  const fs::path malformed = test::source_dir() / "testdata/malformed";
  const auto content = [&](const char* file) {
    const auto plan = read_plan_file(malformed / file);
    EXPECT_FALSE(plan.has_value()) << file;
    return plan ? FileContent::rt_plan : content_of(plan.error());
  };
  EXPECT_EQ(content("not_dicom.dcm"), FileContent::not_dicom);
  EXPECT_EQ(content("empty.dcm"), FileContent::not_dicom);
  EXPECT_EQ(content("ct_sop_class.dcm"), FileContent::other_object);
  EXPECT_EQ(content("rt_dose_sop_class.dcm"), FileContent::other_object);
  EXPECT_EQ(content("ion_plan_sop_class.dcm"), FileContent::other_object);
  // A damaged plan is still a plan file: its errors are reported, never passed over.
  EXPECT_EQ(content("truncated.dcm"), FileContent::rt_plan);
  EXPECT_EQ(content("missing_beam_sequence.dcm"), FileContent::rt_plan);
  EXPECT_EQ(content("missing_sop_class_uid.dcm"), FileContent::rt_plan);
  EXPECT_EQ(content_of(Error{ErrorKind::io, "x", "", "", "cannot be read"}), FileContent::unreadable);
}

}  // namespace
}  // namespace countersign::dicom
