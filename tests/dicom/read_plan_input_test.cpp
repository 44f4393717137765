// The reader on inputs from outside the project (pydicom's bundled test files), on every
// transfer syntax (copies converted by DCMTK's dcmconv), from memory, and on the malformed corpus.

#include <countersign/dicom/read_plan.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <cstddef>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <vector>

namespace countersign::dicom {
namespace {

namespace fs = std::filesystem;

const fs::path pydicom_files = "/usr/lib/python3/dist-packages/pydicom/data/test_files";

std::string kind_name(ErrorKind kind) {
  switch (kind) {
    case ErrorKind::io:
      return "io";
    case ErrorKind::not_dicom:
      return "not_dicom";
    case ErrorKind::truncated:
      return "truncated";
    case ErrorKind::wrong_sop_class:
      return "wrong_sop_class";
    case ErrorKind::missing_attribute:
      return "missing_attribute";
    case ErrorKind::bad_value:
      return "bad_value";
    case ErrorKind::inconsistent:
      return "inconsistent";
    case ErrorKind::bad_beamdata:
      return "bad_beamdata";
    case ErrorKind::bad_configuration:
      return "bad_configuration";
    case ErrorKind::usage:
      return "usage";
    case ErrorKind::internal:
      return "internal";
  }
  return "?";
}

std::vector<std::byte> file_bytes(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  std::vector<std::byte> bytes(text.size());
  std::transform(text.begin(), text.end(), bytes.begin(), [](char c) { return static_cast<std::byte>(c); });
  return bytes;
}

// pydicom's rtplan.dcm; expected values as its dcmdump shows them (an independent file, not ours).
TEST(ReadPlanPydicomFiles, RtPlanValues) {
  const auto plan = read_plan_file(pydicom_files / "rtplan.dcm");
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->label, "Plan1");
  EXPECT_EQ(plan->patient_id, "id00001");
  EXPECT_EQ(plan->patient_name, "Last^First^mid^pre");
  EXPECT_EQ(plan->approval_status, "UNAPPROVED");
  EXPECT_EQ(plan->geometry, "PATIENT");
  ASSERT_EQ(plan->dose_references.size(), 2u);
  EXPECT_EQ(plan->dose_references[1].type, "TARGET");
  EXPECT_DOUBLE_EQ(plan->dose_references[1].target_prescription_dose_gy.value(), 30.826203);
  EXPECT_DOUBLE_EQ((*plan->dose_references[0].point_mm)[2], -741.87);
  ASSERT_EQ(plan->fraction_groups.size(), 1u);
  EXPECT_EQ(plan->fraction_groups[0].fractions_planned, 30);
  const auto& ref = plan->fraction_groups[0].beams.at(0);
  EXPECT_EQ(ref.beam_number, 1);
  EXPECT_DOUBLE_EQ(ref.meterset_mu.value(), 116.0036697);
  EXPECT_DOUBLE_EQ(ref.dose_gy.value(), 1.0275401);
  ASSERT_TRUE(ref.dose_specification_point_mm.has_value());
  EXPECT_DOUBLE_EQ((*ref.dose_specification_point_mm)[2], -751.87);
  EXPECT_TRUE(ref.distances_in_referenced_beam.empty());  // absent stays absent, never 0
  ASSERT_EQ(plan->beams.size(), 1u);
  const auto& beam = plan->beams[0];
  EXPECT_EQ(beam.machine_name, "unit001");
  EXPECT_DOUBLE_EQ(beam.sad_mm.value(), 1000.0);
  ASSERT_EQ(beam.control_points.size(), 2u);
  EXPECT_DOUBLE_EQ(beam.control_points[0].ssd_mm.value(), 898.429664831309);
  EXPECT_DOUBLE_EQ(beam.control_points[0].nominal_energy_mv.value(), 6.0);
  // Control point 1 gives only its index, weight and coefficients; the rest is carried forward.
  EXPECT_DOUBLE_EQ(beam.control_points[1].nominal_energy_mv.value(), 6.0);
  EXPECT_DOUBLE_EQ(beam.control_points[1].device(plan::DeviceType::x)->positions_mm.at(0), -100.0);
  EXPECT_DOUBLE_EQ(beam.control_points[1].dose_reference_coefficients.at(0).cumulative_coefficient.value(),
                   0.9990268);
  EXPECT_EQ(plan->patient_setups.at(0).patient_position.text, "HFS");
}

TEST(ReadPlanPydicomFiles, TruncatedPlanIsRejectedAsTruncated) {
  const auto path = pydicom_files / "rtplan_truncated.dcm";
  const auto plan = read_plan_file(path);
  ASSERT_FALSE(plan.has_value());
  EXPECT_EQ(plan.error().kind, ErrorKind::truncated);
  const std::string message = plan.error().message();
  EXPECT_NE(message.find(path.string()), std::string::npos) << message;
  EXPECT_NE(message.find("truncated"), std::string::npos) << message;
  // dcmdump reports the same element: IsocenterPosition larger than the remaining bytes.
  EXPECT_NE(message.find("IsocenterPosition (300A,012C)"), std::string::npos) << message;
  EXPECT_EQ(message.find('\n'), std::string::npos);
}

TEST(ReadPlanPydicomFiles, CtAndRtDoseAreRejectedNamingTheSopClass) {
  for (const char* name : {"CT_small.dcm", "rtdose.dcm", "rtstruct.dcm"}) {
    SCOPED_TRACE(name);
    const auto plan = read_plan_file(pydicom_files / name);
    ASSERT_FALSE(plan.has_value());
    EXPECT_EQ(plan.error().kind, ErrorKind::wrong_sop_class);
    const std::string message = plan.error().message();
    EXPECT_NE(message.find("SOPClassUID (0008,0016)"), std::string::npos) << message;
    EXPECT_NE(message.find(name), std::string::npos) << message;
  }
}

struct Syntax {
  const char* dcmconv_option;
  const char* dcmdump_name;  // how dcmdump names the transfer syntax of the written copy
};

// Reads copies converted by DCMTK's dcmconv and checks the plan is the same in every syntax.
TEST(ReadPlanTransferSyntax, EveryEncodingReadsTheSamePlan) {
  const auto dir = test::make_temp_dir("countersign-syntax");
  for (const fs::path& original :
       {test::source_dir() / "testdata/plans/fern_two_arc.dcm", pydicom_files / "rtplan.dcm"}) {
    const auto reference = read_plan_file(original);
    ASSERT_TRUE(reference.has_value()) << reference.error().message();
    for (const Syntax syntax : {Syntax{"+ti", "Little Endian Implicit"},
                                Syntax{"+te", "Little Endian Explicit"}, Syntax{"+tb", "Big Endian Explicit"},
                                Syntax{"+td", "Deflated Explicit VR Little Endian"}, Syntax{"-F +ti", ""}}) {
      SCOPED_TRACE(original.filename().string() + " " + syntax.dcmconv_option);
      const auto copy = dir / "copy.dcm";
      const auto convert =
          test::run_command(std::string{"dcmconv "} + syntax.dcmconv_option + " " +
                            test::quote(original.string()) + " " + test::quote(copy.string()));
      ASSERT_EQ(convert.exit_code, 0) << convert.err;
      if (*syntax.dcmdump_name != '\0') {
        const auto dump = test::run_command("dcmdump -M " + test::quote(copy.string()));
        ASSERT_NE(dump.out.find(std::string{"# Used TransferSyntax: "} + syntax.dcmdump_name),
                  std::string::npos)
            << dump.out.substr(0, 400);
      }
      const auto plan = read_plan_file(copy);
      ASSERT_TRUE(plan.has_value()) << plan.error().message();
      EXPECT_EQ(plan->sop_instance_uid, reference->sop_instance_uid);
      ASSERT_EQ(plan->beams.size(), reference->beams.size());
      for (std::size_t b = 0; b < plan->beams.size(); ++b) {
        const auto& got = plan->beams[b];
        const auto& want = reference->beams[b];
        EXPECT_EQ(got.name, want.name);
        EXPECT_EQ(got.sad_mm, want.sad_mm);
        ASSERT_EQ(got.control_points.size(), want.control_points.size());
        for (std::size_t c = 0; c < got.control_points.size(); ++c) {
          EXPECT_EQ(got.control_points[c].gantry_deg, want.control_points[c].gantry_deg);
          EXPECT_EQ(got.control_points[c].cumulative_meterset_weight,
                    want.control_points[c].cumulative_meterset_weight);
          ASSERT_EQ(got.control_points[c].devices.size(), want.control_points[c].devices.size());
          for (std::size_t d = 0; d < got.control_points[c].devices.size(); ++d) {
            EXPECT_EQ(got.control_points[c].devices[d].positions_mm,
                      want.control_points[c].devices[d].positions_mm);
          }
        }
        EXPECT_EQ(got.dose_references.size(), want.dose_references.size());
        for (std::size_t r = 0; r < got.dose_references.size(); ++r) {
          EXPECT_EQ(got.dose_references[r].distances.depth_mm,
                    want.dose_references[r].distances.depth_mm);  // FL
        }
      }
      const auto& got_ref = plan->fraction_groups.at(0).beams.at(0);
      const auto& want_ref = reference->fraction_groups.at(0).beams.at(0);
      EXPECT_EQ(got_ref.meterset_mu, want_ref.meterset_mu);
      EXPECT_EQ(got_ref.dose_gy, want_ref.dose_gy);
    }
  }
  fs::remove_all(dir);
}

TEST(ReadPlanBytes, BytesReadLikeTheFile) {
  const auto path = test::source_dir() / "testdata/plans/fern_wedged_pair.dcm";
  const auto bytes = file_bytes(path);
  const auto plan = read_plan_bytes(bytes, "received plan");
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  EXPECT_EQ(plan->source_file, "received plan");
  const auto from_file = read_plan_file(path);
  ASSERT_TRUE(from_file.has_value());
  EXPECT_EQ(plan->beams.at(1).wedges.at(0).factor, from_file->beams.at(1).wedges.at(0).factor);
  EXPECT_EQ(plan->fraction_groups.at(0).beams.at(1).meterset_mu,
            from_file->fraction_groups.at(0).beams.at(1).meterset_mu);

  const std::span<const std::byte> half(bytes.data(), bytes.size() / 2);
  const auto truncated = read_plan_bytes(half, "half a plan");
  ASSERT_FALSE(truncated.has_value());
  EXPECT_EQ(truncated.error().kind, ErrorKind::truncated);
  EXPECT_EQ(truncated.error().file, "half a plan");

  const auto nothing = read_plan_bytes({}, "nothing");
  ASSERT_FALSE(nothing.has_value());
  EXPECT_EQ(nothing.error().kind, ErrorKind::not_dicom);
}

TEST(ReadPlanBytes, EveryPrefixOfAPlanFailsCleanly) {
  // Cutting the plan anywhere must give an error, never a crash or a hang (every 97th length).
  const auto bytes = file_bytes(test::source_dir() / "testdata/plans/fern_half_beam.dcm");
  for (std::size_t length = 1; length < bytes.size(); length += 97) {
    const auto plan = read_plan_bytes(std::span<const std::byte>(bytes.data(), length), "prefix");
    EXPECT_FALSE(plan.has_value()) << "length " << length;
  }
}

TEST(ReadPlanErrors, MissingFileAndDirectory) {
  const auto missing = read_plan_file("/nonexistent/plan.dcm");
  ASSERT_FALSE(missing.has_value());
  EXPECT_EQ(missing.error().kind, ErrorKind::io);
  EXPECT_NE(missing.error().message().find("/nonexistent/plan.dcm"), std::string::npos);
  const auto directory = read_plan_file(test::source_dir() / "testdata");
  ASSERT_FALSE(directory.has_value());
  EXPECT_EQ(directory.error().kind, ErrorKind::io);
}

TEST(ReadPlanMalformed, EveryFileIsRejectedNamingTheExpectedAttribute) {
  const auto dir = test::source_dir() / "testdata/malformed";
  std::ifstream manifest(dir / "EXPECTED.tsv");
  ASSERT_TRUE(manifest) << "testdata/malformed/EXPECTED.tsv missing";
  std::string line;
  int files = 0;
  bool header_seen = false;
  while (std::getline(manifest, line)) {
    if (line.empty() || line[0] == '#') continue;
    if (!header_seen) {
      header_seen = true;
      continue;
    }
    std::vector<std::string> cells;
    std::stringstream split(line);
    for (std::string cell; std::getline(split, cell, '\t');) cells.push_back(cell);
    ASSERT_GE(cells.size(), 4u) << line;
    const auto& [file, keyword, tag, kind] = std::tie(cells[0], cells[1], cells[2], cells[3]);
    SCOPED_TRACE(file);
    ++files;
    const auto path = dir / file;
    ASSERT_TRUE(fs::exists(path));
    const auto plan = read_plan_file(path);
    ASSERT_FALSE(plan.has_value()) << "accepted a malformed file";
    const Error& error = plan.error();
    EXPECT_EQ(kind_name(error.kind), kind) << error.message();
    EXPECT_EQ(error.file, path.string());
    if (keyword != "-") {
      EXPECT_EQ(error.attribute, keyword) << error.message();
      EXPECT_EQ(error.tag, tag) << error.message();
    }
    EXPECT_EQ(error.message().find('\n'), std::string::npos);
  }
  EXPECT_GE(files, 20);
}

}  // namespace
}  // namespace countersign::dicom
