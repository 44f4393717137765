// read_plan_dataset: the entry point for a dataset already in memory (the network receiver's case),
// fed here with datasets DCMTK loads or builds itself.

#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_plan_dataset.hpp>

#include "support/paths.hpp"

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>
#include <dcmtk/dcmdata/dcuid.h>

#include <gtest/gtest.h>

namespace countersign::dicom {
namespace {

TEST(ReadPlanDataset, DatasetLoadedByDcmtkReadsLikeTheFile) {
  const auto path = test::source_dir() / "testdata/plans/fern_extended_ssd.dcm";
  DcmFileFormat file;
  ASSERT_TRUE(file.loadFile(path.c_str()).good());
  const auto plan = read_plan_dataset(*file.getDataset(), "from the network");
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->source_file, "from the network");
  const auto from_file = read_plan_file(path);
  ASSERT_TRUE(from_file.has_value());
  EXPECT_EQ(plan->sop_instance_uid, from_file->sop_instance_uid);
  EXPECT_EQ(plan->patient_setups.at(0).setup_technique.text, "FIXED_SSD");
  EXPECT_EQ(plan->beams.at(0).blocks.at(0).tray_id, "TRAY-A");
  EXPECT_EQ(plan->fraction_groups.at(0).beams.at(0).meterset_mu,
            from_file->fraction_groups.at(0).beams.at(0).meterset_mu);
}

TEST(ReadPlanDataset, DatasetIsNotModified) {
  DcmFileFormat file;
  ASSERT_TRUE(file.loadFile((test::source_dir() / "testdata/plans/fern_two_arc.dcm").c_str()).good());
  const unsigned long before = file.getDataset()->card();
  ASSERT_TRUE(read_plan_dataset(*file.getDataset(), "arc").has_value());
  EXPECT_EQ(file.getDataset()->card(), before);
}

TEST(ReadPlanDataset, EmptyDatasetNamesSopClassUid) {
  DcmDataset dataset;
  const auto plan = read_plan_dataset(dataset, "empty dataset");
  ASSERT_FALSE(plan.has_value());
  EXPECT_EQ(plan.error().kind, ErrorKind::missing_attribute);
  EXPECT_EQ(plan.error().message(), "empty dataset: SOPClassUID (0008,0016): missing");
}

TEST(ReadPlanDataset, DecimalStringsAreParsedStrictly) {
  // Beam Meterset (DS) values built directly: DICOM allows a leading '+', spaces and exponents;
  // anything else is rejected with the attribute named.
  DcmFileFormat file;
  ASSERT_TRUE(file.loadFile((test::source_dir() / "testdata/plans/fern_half_beam.dcm").c_str()).good());
  DcmItem* group = nullptr;
  ASSERT_TRUE(file.getDataset()->findAndGetSequenceItem(DCM_FractionGroupSequence, group, 0).good());
  DcmItem* ref = nullptr;
  ASSERT_TRUE(group->findAndGetSequenceItem(DCM_ReferencedBeamSequence, ref, 0).good());
  struct Case {
    const char* text;
    std::optional<double> value;  // nullopt: must be rejected
  };
  for (const Case c : {Case{"+12.5", 12.5}, Case{" 12.5 ", 12.5}, Case{"1.25E1", 12.5}, Case{".5", 0.5},
                       Case{"12,5", std::nullopt}, Case{"0x1A", std::nullopt}, Case{"1e999", std::nullopt},
                       Case{"-inf", std::nullopt}, Case{"nan", std::nullopt}, Case{"12.5abc", std::nullopt},
                       Case{"--1", std::nullopt}}) {
    SCOPED_TRACE(c.text);
    ASSERT_TRUE(ref->putAndInsertString(DCM_BeamMeterset, c.text).good());
    const auto plan = read_plan_dataset(*file.getDataset(), "plan");
    if (c.value) {
      ASSERT_TRUE(plan.has_value()) << plan.error().message();
      EXPECT_DOUBLE_EQ(plan->fraction_groups.at(0).beams.at(0).meterset_mu.value(), *c.value);
    } else {
      ASSERT_FALSE(plan.has_value());
      EXPECT_EQ(plan.error().kind, ErrorKind::bad_value);
      EXPECT_EQ(plan.error().attribute, "BeamMeterset");
      EXPECT_EQ(plan.error().tag, "(300A,0086)");
    }
  }
}

TEST(ReadPlanDataset, PresentButEmptyOptionalValueIsAbsentNotZero) {
  DcmFileFormat file;
  ASSERT_TRUE(file.loadFile((test::source_dir() / "testdata/plans/fern_half_beam.dcm").c_str()).good());
  DcmItem* group = nullptr;
  ASSERT_TRUE(file.getDataset()->findAndGetSequenceItem(DCM_FractionGroupSequence, group, 0).good());
  DcmItem* ref = nullptr;
  ASSERT_TRUE(group->findAndGetSequenceItem(DCM_ReferencedBeamSequence, ref, 0).good());
  ASSERT_TRUE(ref->putAndInsertString(DCM_BeamDose, "").good());
  const auto plan = read_plan_dataset(*file.getDataset(), "plan");
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_FALSE(plan->fraction_groups.at(0).beams.at(0).dose_gy.has_value());
}

}  // namespace
}  // namespace countersign::dicom
