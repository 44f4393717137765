// Block Sequence (300A,00F4) read fully: every attribute of a block, its outline checked against
// pydicom (a different DICOM reader) on the same file, and malformed Block Data refused with the
// file and attribute named. The blocks are those of the invented Fernhollow demo plans.

#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_plan_dataset.hpp>

#include "support/paths.hpp"

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>

#include <gtest/gtest.h>

#include <fstream>
#include <sstream>
#include <string>

namespace countersign::dicom {
namespace {

const char* const blocked_plan = "testdata/plans/fern_extended_ssd.dcm";

// The first block item of the first beam of a loaded file.
DcmItem* first_block(DcmFileFormat& file) {
  DcmItem* beam = nullptr;
  DcmItem* block = nullptr;
  if (!file.getDataset()->findAndGetSequenceItem(DCM_BeamSequence, beam, 0).good()) return nullptr;
  if (!beam->findAndGetSequenceItem(DCM_BlockSequence, block, 0).good()) return nullptr;
  return block;
}

TEST(BlockSequence, EveryAttributeOfTheBlockIsRead) {
  const auto plan = read_plan_file(test::source_dir() / blocked_plan);
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  ASSERT_EQ(plan->beams.at(0).blocks.size(), 1u);
  const plan::Block& b = plan->beams.at(0).blocks.at(0);
  EXPECT_EQ(b.number, 1);
  EXPECT_EQ(b.tray_id, "TRAY-A");
  EXPECT_EQ(b.name, "CORNER");
  EXPECT_EQ(b.type, plan::BlockType::shielding);
  EXPECT_EQ(b.divergence, plan::BlockDivergence::present);
  EXPECT_EQ(b.material_id, "DEMO-ALLOY");
  EXPECT_EQ(b.source_to_tray_mm, 650.0);
  EXPECT_EQ(b.thickness_mm, 75.0);
  EXPECT_EQ(b.transmission, 0.05);
  ASSERT_EQ(b.outline_mm.size(), 4u);
}

TEST(BlockSequence, OutlineAgreesWithPydicom) {
  const auto python = test::python_with_pydicom();
  ASSERT_TRUE(python.has_value()) << "python3-pydicom is needed for the independent cross-check";
  const auto path = test::source_dir() / blocked_plan;
  const auto dir = test::make_temp_dir("countersign-block");
  const auto script = dir / "block.py";
  std::ofstream(script) << "import sys, pydicom\n"
                           "b = pydicom.dcmread(sys.argv[1]).BeamSequence[0].BlockSequence[0]\n"
                           "print(b.BlockType, b.BlockNumberOfPoints, ' '.join('{:g}'.format(float(v)) for v "
                           "in b.BlockData), '{:g}'.format(float(b.BlockTransmission)))\n";
  const auto theirs =
      test::run_command(*python + " " + test::quote(script.string()) + " " + test::quote(path.string()));
  std::filesystem::remove_all(dir);
  ASSERT_EQ(theirs.exit_code, 0) << theirs.err;
  const auto plan = read_plan_file(path);
  ASSERT_TRUE(plan.has_value());
  const plan::Block& b = plan->beams.at(0).blocks.at(0);
  std::ostringstream ours;
  ours << b.type.text << ' ' << b.outline_mm.size();
  for (const auto& v : b.outline_mm) ours << ' ' << v[0] << ' ' << v[1];
  ours << ' ' << *b.transmission << '\n';
  EXPECT_EQ(theirs.out, ours.str());
}

struct Malformed {
  const char* points;  // Block Number of Points
  const char* data;    // Block Data
  const char* attribute;
  const char* tag;
};

TEST(BlockSequence, MalformedBlockDataNamesFileAndAttribute) {
  for (const Malformed m : {Malformed{"4", "20\\110\\45\\110\\45\\155\\20", "BlockData", "(300A,0106)"},
                            Malformed{"3", "20\\110\\45\\110\\45\\155\\20\\155", "BlockData", "(300A,0106)"},
                            Malformed{"2", "20\\110\\45\\110", "BlockNumberOfPoints", "(300A,0104)"}}) {
    SCOPED_TRACE(m.data);
    DcmFileFormat file;
    ASSERT_TRUE(file.loadFile((test::source_dir() / blocked_plan).c_str()).good());
    DcmItem* block = first_block(file);
    ASSERT_NE(block, nullptr);
    ASSERT_TRUE(block->putAndInsertString(DCM_BlockNumberOfPoints, m.points).good());
    ASSERT_TRUE(block->putAndInsertString(DCM_BlockData, m.data).good());
    const auto plan = read_plan_dataset(*file.getDataset(), "blocked.dcm");
    ASSERT_FALSE(plan.has_value());
    EXPECT_EQ(plan.error().attribute, m.attribute);
    EXPECT_EQ(plan.error().tag, m.tag);
    EXPECT_NE(plan.error().message().find("blocked.dcm"), std::string::npos) << plan.error().message();
  }
}

TEST(BlockSequence, UnknownBlockTypeAndMissingOutlineAreRefused) {
  DcmFileFormat file;
  ASSERT_TRUE(file.loadFile((test::source_dir() / blocked_plan).c_str()).good());
  DcmItem* block = first_block(file);
  ASSERT_NE(block, nullptr);
  ASSERT_TRUE(block->putAndInsertString(DCM_BlockType, "WEDGE").good());
  auto plan = read_plan_dataset(*file.getDataset(), "blocked.dcm");
  ASSERT_FALSE(plan.has_value());
  EXPECT_EQ(plan.error().tag, "(300A,00F8)");
  ASSERT_TRUE(block->putAndInsertString(DCM_BlockType, "APERTURE").good());
  ASSERT_TRUE(read_plan_dataset(*file.getDataset(), "blocked.dcm").has_value());
  ASSERT_TRUE(block->findAndDeleteElement(DCM_BlockData).good());
  plan = read_plan_dataset(*file.getDataset(), "blocked.dcm");
  ASSERT_FALSE(plan.has_value());
  EXPECT_EQ(plan.error().kind, ErrorKind::missing_attribute);
  EXPECT_EQ(plan.error().tag, "(300A,0106)");
}

TEST(BlockSequence, TransmissionOutsideZeroToOneIsRefused) {
  DcmFileFormat file;
  ASSERT_TRUE(file.loadFile((test::source_dir() / blocked_plan).c_str()).good());
  DcmItem* block = first_block(file);
  ASSERT_NE(block, nullptr);
  ASSERT_TRUE(block->putAndInsertString(DCM_BlockTransmission, "1.5").good());
  const auto plan = read_plan_dataset(*file.getDataset(), "blocked.dcm");
  ASSERT_FALSE(plan.has_value());
  EXPECT_EQ(plan.error().tag, "(300A,0102)");
}

}  // namespace
}  // namespace countersign::dicom
