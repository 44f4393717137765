// The reader on an electron plan written by pydicom (an independent DICOM writer,
// tests/dicom/pydicom_electron_plan.py; the plan is invented): Applicator Sequence (ID, Type as a
// defined term, Description), the cutout as an APERTURE block, the Referenced Bolus Sequence and the
// Source to Surface Distance, each value the script wrote.

#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_plan_dataset.hpp>

#include "support/paths.hpp"

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>

#include <gtest/gtest.h>

#include <filesystem>

namespace countersign::dicom {
namespace {

struct ElectronPlan : ::testing::Test {
  std::filesystem::path dir = test::make_temp_dir("countersign-electron-plan");
  std::filesystem::path file = dir / "electron.dcm";

  void SetUp() override {
    const auto python = test::python_with_pydicom();
    ASSERT_TRUE(python.has_value()) << "python3-pydicom is needed to write the independent electron plan";
    const auto script = test::source_dir() / "tests/dicom/pydicom_electron_plan.py";
    const auto written =
        test::run_command(*python + " " + test::quote(script.string()) + " " + test::quote(file.string()));
    ASSERT_EQ(written.exit_code, 0) << written.err;
  }
  void TearDown() override { std::filesystem::remove_all(dir); }
};

TEST_F(ElectronPlan, ApplicatorCutoutBolusAndSsdAreRead) {
  const auto plan = read_plan_file(file);
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  ASSERT_EQ(plan->beams.size(), 1u);
  const plan::Beam& beam = plan->beams.front();
  EXPECT_EQ(beam.radiation_type, plan::RadiationType::electron);
  ASSERT_EQ(beam.applicators.size(), 1u);
  EXPECT_EQ(beam.applicators[0].id, "A10");
  EXPECT_EQ(beam.applicators[0].type, plan::ApplicatorType::electron_square);
  EXPECT_EQ(beam.applicators[0].type.text, "ELECTRON_SQUARE");
  EXPECT_EQ(beam.applicators[0].description, "INVENTED 10 CM CONE");
  ASSERT_EQ(beam.blocks.size(), 1u);
  EXPECT_EQ(beam.blocks[0].type, plan::BlockType::aperture);
  ASSERT_EQ(beam.blocks[0].outline_mm.size(), 4u);
  EXPECT_DOUBLE_EQ(beam.blocks[0].outline_mm[2][0], 30.0);
  EXPECT_DOUBLE_EQ(beam.blocks[0].outline_mm[2][1], 40.0);
  ASSERT_EQ(beam.boli.size(), 1u);
  EXPECT_EQ(beam.boli[0].id, "BOLUS-5MM");
  EXPECT_EQ(beam.boli[0].number, 7);
  EXPECT_EQ(beam.control_points.at(0).ssd_mm, 1050.0);
  EXPECT_EQ(beam.control_points.at(0).nominal_energy_mv, 9.0);
  EXPECT_EQ(plan->fraction_groups.at(0).beams.at(0).meterset_mu, 211.5);
}

// An Applicator Type DICOM does not define is kept as `other` with its text (not refused: the
// check decides what it needs).
TEST_F(ElectronPlan, UnlistedApplicatorTypeIsKeptWithItsText) {
  DcmFileFormat dicom_file;
  ASSERT_TRUE(dicom_file.loadFile(file.c_str()).good());
  DcmItem* beam = nullptr;
  DcmItem* applicator = nullptr;
  ASSERT_TRUE(dicom_file.getDataset()->findAndGetSequenceItem(DCM_BeamSequence, beam, 0).good());
  ASSERT_TRUE(beam->findAndGetSequenceItem(DCM_ApplicatorSequence, applicator, 0).good());
  ASSERT_TRUE(applicator->putAndInsertString(DCM_ApplicatorType, "ELECTRON_HEXAGON").good());
  const auto plan = read_plan_dataset(*dicom_file.getDataset(), "electron.dcm");
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->beams.at(0).applicators.at(0).type, plan::ApplicatorType::other);
  EXPECT_EQ(plan->beams.at(0).applicators.at(0).type.text, "ELECTRON_HEXAGON");
}

}  // namespace
}  // namespace countersign::dicom
