// The study reader on the INVENTED demo studies (testdata/studies, written by
// tools/make_demo_studies): what it finds, the CT volume, the body from the EXTERNAL ROI.

#include "study_fixture.hpp"

#include <algorithm>
#include <cmath>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;

const std::string uid_root = "2.25.301642988147209845366118572013";

TEST(ReadStudy, LungSlabStudyFromItsFolder) {
  const auto study = load_demo_study("fern_lung_slab");
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  const auto& g = study->ct.grid;
  // The generator's grid: 64 x 64 x 20 voxels of 5 mm, first centre (-157.5, -157.5, -47.5).
  EXPECT_EQ(g.size, (std::array<std::size_t, 3>{64, 64, 20}));
  EXPECT_EQ(g.spacing_mm, (std::array<double, 3>{5.0, 5.0, 5.0}));
  EXPECT_EQ(g.origin_mm, (std::array<double, 3>{-157.5, -157.5, -47.5}));
  EXPECT_EQ(study->frame_of_reference_uid, uid_root + ".201.4.0");
  EXPECT_EQ(study->ct.series_instance_uid, uid_root + ".201.7.0");
  EXPECT_EQ(study->structure_set.sop_instance_uid, uid_root + ".201.6.0");
  EXPECT_EQ(study->station_name, "FERN-CT-1");
  EXPECT_EQ(study->ct.slice_files.size(), 20u);
  EXPECT_EQ(study->ct.clamped_voxel_count, 0u);
  // Water box x in [-150, 150], y in [-100, 100]; lung slab y in [-60, -20] at -700 HU.
  EXPECT_EQ(study->ct.hu_at(32, 32, 10), 0);      // (2.5, 2.5): water
  EXPECT_EQ(study->ct.hu_at(32, 20, 10), -700);   // y = -57.5: lung
  EXPECT_EQ(study->ct.hu_at(32, 12, 10), 0);      // y = -97.5: water under the anterior surface
  EXPECT_EQ(study->ct.hu_at(32, 11, 10), -1000);  // y = -102.5: air
  EXPECT_EQ(study->ct.hu_at(1, 32, 0), -1000);    // x = -152.5: air
  // The body is ROI 2 "BODY" (EXTERNAL), listed after the lung ROI: found by type, not position.
  EXPECT_EQ(study->body.source, study::BodySource::rtstruct_external);
  EXPECT_EQ(study->body.roi_number, 2);
  EXPECT_EQ(study->body.roi_name, "BODY");
  EXPECT_EQ(study->body.voxel_count, 60u * 40u * 20u);
  EXPECT_EQ(study->body.slice_polygons.size(), 20u);
  ASSERT_EQ(study->structure_set.rois.size(), 2u);
  EXPECT_EQ(study->structure_set.rois[0].interpreted_type, "ORGAN");
  EXPECT_FALSE(study->notes.empty());
}

class EveryDemoStudy : public ::testing::TestWithParam<std::string> {};

TEST_P(EveryDemoStudy, LoadsWithTheBodyFromItsExternalRoi) {
  const auto study = load_demo_study(GetParam());
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  EXPECT_EQ(study->body.source, study::BodySource::rtstruct_external);
  EXPECT_GT(study->body.voxel_count, 0u);
  EXPECT_EQ(study->ct.frame_of_reference_uid, study->frame_of_reference_uid);
}

INSTANTIATE_TEST_SUITE_P(Demo, EveryDemoStudy,
                         ::testing::Values("fern_lung_slab", "fern_breast", "fern_oblique"));

TEST(ReadStudy, FindsTheStudyAmongManyOtherFiles) {
  // The whole testdata folder: other plans, the malformed corpus, READMEs, the other studies.
  auto plan = dicom::read_plan_file(plan_file_in(demo_study("fern_oblique")));
  ASSERT_TRUE(plan.has_value());
  const fs::path inputs[] = {source_dir() / "testdata"};
  const auto index = dicom::index_study_files(inputs);
  EXPECT_FALSE(index.not_dicom.empty());  // READMEs, TSVs, malformed files
  const auto study =
      dicom::load_study(index, plan->referenced_structure_set_uids.at(0), plan->frame_of_reference_uid);
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  EXPECT_EQ(study->ct.series_instance_uid, uid_root + ".203.7.0");
  EXPECT_EQ(study->ct.slice_files.size(), 16u);
}

TEST(ReadStudy, PlanReadsItsStructureSetReference) {
  auto plan = dicom::read_plan_file(plan_file_in(demo_study("fern_breast")));
  ASSERT_TRUE(plan.has_value());
  EXPECT_EQ(plan->referenced_structure_set_uids, std::vector<std::string>{uid_root + ".202.6.0"});
  EXPECT_EQ(plan->frame_of_reference_uid, uid_root + ".202.4.0");
}

// DCMTK's dcmconv rewrites the slices in other transfer syntaxes: the volume must not change.
class OtherTransferSyntax : public ::testing::TestWithParam<std::string> {};

TEST_P(OtherTransferSyntax, SameVolume) {
  const auto reference = load_demo_study("fern_oblique");
  ASSERT_TRUE(reference.has_value());
  const StudyCopy copy("fern_oblique");
  for (const auto& entry : fs::directory_iterator(copy.dir())) {
    if (entry.path().filename().string().rfind("CT", 0) != 0) continue;
    const std::string file = quote(entry.path().string());
    const auto result = run_command("dcmconv " + GetParam() + " " + file + " " + file);
    ASSERT_EQ(result.exit_code, 0) << result.err;
  }
  const auto study = copy.load();
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  EXPECT_TRUE(
      std::equal(study->ct.hu.begin(), study->ct.hu.end(), reference->ct.hu.begin(), reference->ct.hu.end()));
}

INSTANTIATE_TEST_SUITE_P(Dcmconv, OtherTransferSyntax, ::testing::Values("+ti", "+tb", "+td"),
                         [](const auto& syntax) {
                           return syntax.param == "+ti"   ? "ImplicitLittle"
                                  : syntax.param == "+tb" ? "ExplicitBig"
                                                        : "Deflated";
                         });

TEST(ReadStudy, RescaleSlopeAndInterceptApply) {
  // Stored value s = HU + 1024 in the demo files; with slope 2 and intercept -1024 the CT number
  // becomes 2 s - 1024 = 2 HU + 1024.
  const auto reference = load_demo_study("fern_oblique");
  ASSERT_TRUE(reference.has_value());
  const StudyCopy copy("fern_oblique");
  copy.modify_ct("-m \"(0028,1053)=2\"");
  const auto study = copy.load();
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  for (std::size_t v = 0; v < study->ct.hu.size(); v += 97)
    ASSERT_EQ(study->ct.hu[v], 2 * reference->ct.hu[v] + 1024) << "voxel " << v;
  copy.modify_ct("-m \"(0028,1053)=0.5\" -m \"(0028,1052)=-1000.25\"");  // 0.5 s - 1000.25, to 1 HU
  const auto halved = copy.load();
  ASSERT_TRUE(halved.has_value()) << halved.problem().message();
  for (std::size_t v = 0; v < halved->ct.hu.size(); v += 97) {
    const double expected = std::floor(0.5 * (reference->ct.hu[v] + 1024) - 1000.25 + 0.5);
    ASSERT_EQ(halved->ct.hu[v], expected) << "voxel " << v;
  }
}

TEST(ReadStudy, DuplicateCopiesOfASliceAreUsedOnce) {
  const StudyCopy copy("fern_oblique");
  fs::copy_file(copy.file("CT005.dcm"), copy.file("CT005-copy.dcm"));
  const auto study = copy.load();
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  EXPECT_EQ(study->ct.slice_files.size(), 16u);
  EXPECT_TRUE(std::any_of(study->notes.begin(), study->notes.end(),
                          [](const std::string& n) { return n.find("duplicate") != std::string::npos; }));
}

// Without an EXTERNAL ROI the body comes from the CT: -350 HU, largest component, cavities (the
// lungs) filled. On the breast phantom it must be the same voxels the contours give.
TEST(ReadStudy, WithoutExternalRoiTheBodyComesFromTheCt) {
  const auto reference = load_demo_study("fern_breast");
  ASSERT_TRUE(reference.has_value());
  const StudyCopy copy("fern_breast");
  copy.modify("RS.dcm", "-m \"(3006,0080)[2].(3006,00A4)=ORGAN\"");  // ROI 3 "SKIN" was EXTERNAL
  const auto study = copy.load();
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  EXPECT_EQ(study->body.source, study::BodySource::ct_threshold);
  EXPECT_EQ(study->body.threshold_hu, -350.0);
  EXPECT_TRUE(study->body.slice_polygons.empty());
  std::size_t same = 0;
  for (std::size_t v = 0; v < study->body.mask.size(); ++v)
    same += study->body.mask.contains(v) == reference->body.mask.contains(v);
  EXPECT_EQ(same, study->body.mask.size());
}

}  // namespace
}  // namespace countersign::test
