// Bad study input: each defect (made with DCMTK's dcmodify on a copy of an INVENTED demo study)
// must give its own structured problem, naming the file and attribute where there is one.

#include "study_fixture.hpp"

namespace countersign::test {
namespace {

namespace fs = std::filesystem;
using study::ProblemKind;

void expect_problem(const study::Result<study::Study>& result, ProblemKind kind,
                    const std::string& attribute = "") {
  ASSERT_FALSE(result.has_value()) << "loaded although it should not";
  EXPECT_EQ(study::code(result.problem().kind), study::code(kind)) << result.problem().message();
  if (!attribute.empty()) {
    EXPECT_EQ(result.problem().attribute, attribute) << result.problem().message();
  }
}

TEST(StudyProblems, MissingMiddleSliceIsAGap) {
  const StudyCopy copy("fern_lung_slab");
  fs::remove(copy.file("CT010.dcm"));
  const auto result = copy.load();
  expect_problem(result, ProblemKind::ct_slice_missing, "ImagePositionPatient");
  EXPECT_EQ(fs::path(result.problem().file).filename(), "CT011.dcm");
  EXPECT_EQ(result.problem().tag, "(0020,0032)");
  EXPECT_NE(result.problem().detail.find("1 slice(s) missing"), std::string::npos) << result.problem().detail;
}

TEST(StudyProblems, MissingEndSliceIsFoundThroughTheStructureSet) {
  const StudyCopy copy("fern_lung_slab");
  fs::remove(copy.file("CT020.dcm"));
  expect_problem(copy.load(), ProblemKind::ct_slice_missing, "ContourImageSequence");
}

TEST(StudyProblems, UnevenSpacing) {
  const StudyCopy copy("fern_lung_slab");
  copy.modify("CT010.dcm", "-m \"(0020,0032)=-157.5\\\\-157.5\\\\-1.5\"");  // was z = -2.5
  expect_problem(copy.load(), ProblemKind::ct_spacing_uneven, "ImagePositionPatient");
}

TEST(StudyProblems, TwoSlicesAtOnePosition) {
  const StudyCopy copy("fern_lung_slab");
  copy.modify("CT010.dcm", "-m \"(0020,0032)=-157.5\\\\-157.5\\\\-7.5\"");  // the z of CT009
  expect_problem(copy.load(), ProblemKind::ct_slices_inconsistent, "ImagePositionPatient");
}

TEST(StudyProblems, StructureSetInAnotherFrameOfReferenceThanThePlan) {
  const StudyCopy copy("fern_lung_slab");
  copy.modify("RS.dcm", "-m \"(3006,0010)[0].(0020,0052)=1.2.826.0.1.3680043.2.1125.99\"");
  expect_problem(copy.load(), ProblemKind::frame_of_reference_mismatch, "FrameOfReferenceUID");
}

TEST(StudyProblems, CtInAnotherFrameOfReferenceThanTheStructureSet) {
  const StudyCopy copy("fern_oblique");
  copy.modify_ct("-m \"(0020,0052)=1.2.826.0.1.3680043.2.1125.98\"");
  expect_problem(copy.load(), ProblemKind::frame_of_reference_mismatch, "FrameOfReferenceUID");
}

TEST(StudyProblems, CoronalSlicesAreNotAxial) {
  const StudyCopy copy("fern_oblique");
  copy.modify_ct("-m \"(0020,0037)=1\\\\0\\\\0\\\\0\\\\0\\\\-1\"");
  expect_problem(copy.load(), ProblemKind::ct_not_axial, "ImageOrientationPatient");
}

TEST(StudyProblems, TiltedGantryIsNotAxial) {
  const StudyCopy copy("fern_oblique");
  copy.modify_ct("-m \"(0020,0037)=1\\\\0\\\\0\\\\0\\\\0.996195\\\\0.087156\"");  // 5 degrees
  expect_problem(copy.load(), ProblemKind::ct_not_axial, "ImageOrientationPatient");
}

TEST(StudyProblems, ShearedStackIsNotAxial) {
  const StudyCopy copy("fern_oblique");
  copy.modify("CT008.dcm", "-m \"(0020,0032)=-155.5\\\\-157.5\\\\-2.5\"");
  expect_problem(copy.load(), ProblemKind::ct_not_axial, "ImagePositionPatient");
}

TEST(StudyProblems, CompressedSliceIsNotSupported) {
  const StudyCopy copy("fern_oblique");
  const auto result = run_command("dcmcjpeg " + quote(copy.file("CT004.dcm").string()) + " " +
                                  quote(copy.file("CT004.jpeg.dcm").string()));
  ASSERT_EQ(result.exit_code, 0) << result.err;
  fs::remove(copy.file("CT004.dcm"));
  expect_problem(copy.load(), ProblemKind::ct_pixel_data_unsupported, "TransferSyntaxUID");
}

TEST(StudyProblems, PlanWithoutStructureSetReference) {
  const StudyCopy copy("fern_oblique");
  copy.modify("RP.fern_oblique.dcm", "-e \"(300C,0060)\"");
  const auto result = copy.load();
  expect_problem(result, ProblemKind::no_structure_set_reference, "ReferencedStructureSetSequence");
  EXPECT_EQ(result.problem().tag, "(300C,0060)");
}

TEST(StudyProblems, StructureSetNotAmongTheFiles) {
  const StudyCopy copy("fern_oblique");
  fs::remove(copy.file("RS.dcm"));
  expect_problem(copy.load(), ProblemKind::structure_set_not_found);
}

TEST(StudyProblems, CtSeriesNotAmongTheFiles) {
  const StudyCopy copy("fern_oblique");
  for (const auto& entry : fs::directory_iterator(copy.dir())) {
    if (entry.path().filename().string().rfind("CT", 0) == 0) fs::remove(entry.path());
  }
  expect_problem(copy.load(), ProblemKind::ct_series_not_found, "RTReferencedSeriesSequence");
}

TEST(StudyProblems, TwoExternalRoisAreAmbiguous) {
  const StudyCopy copy("fern_lung_slab");
  copy.modify("RS.dcm", "-m \"(3006,0080)[0].(3006,00A4)=EXTERNAL\"");
  expect_problem(copy.load(), ProblemKind::study_ambiguous, "RTROIInterpretedType");
}

TEST(StudyProblems, NonPlanarBodyContour) {
  const StudyCopy copy("fern_oblique");
  // ROI 1 (the body), first contour: the last point moved to another z.
  copy.modify(
      "RS.dcm",
      "-m \"(3006,0039)[0].(3006,0040)[0].(3006,0050)=-120\\\\-123.676\\\\-37.5\\\\120\\\\-36.32\\\\-37.5\\\\"
      "120\\\\100\\\\-37.5\\\\-120\\\\100\\\\-32.5\"");
  expect_problem(copy.load(), ProblemKind::body_contour_invalid, "ContourData");
}

TEST(StudyProblems, MissingRescaleInterceptNamesFileAndAttribute) {
  const StudyCopy copy("fern_oblique");
  copy.modify("CT003.dcm", "-e \"(0028,1052)\"");
  const auto result = copy.load();
  expect_problem(result, ProblemKind::study_file_invalid, "RescaleIntercept");
  EXPECT_EQ(fs::path(result.problem().file).filename(), "CT003.dcm");
  EXPECT_EQ(result.problem().tag, "(0028,1052)");
}

TEST(StudyProblems, CodesAreStableWords) {
  EXPECT_EQ(study::code(ProblemKind::ct_slice_missing), "ct_slice_missing");
  EXPECT_EQ(study::code(ProblemKind::point_outside_body), "point_outside_body");
  const study::Problem problem{ProblemKind::ct_not_axial, "a.dcm", "ImageOrientationPatient", "(0020,0037)",
                               "tilted"};
  EXPECT_EQ(problem.message(), "ct_not_axial: a.dcm: ImageOrientationPatient (0020,0037): tilted");
}

}  // namespace
}  // namespace countersign::test
