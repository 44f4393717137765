// The exported objects of a check: the structured result (Comprehensive SR) and the record as an
// Encapsulated PDF, for invented demo plans checked against the invented demo beam data. Judged by
// DICOM's own IOD checker (dciodvfy, dicom3tools; the test fails without it) and read back by
// pydicom (an independent reader): same patient and study as the plan, a new series, references to
// the plan, and per beam the numbers the check computed.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom_export/export_objects.hpp>

#include "support/dciodvfy.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>

namespace countersign::dicom_export {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;

// The one justified warning: "99CSIGN" is the project's private coding scheme (PS3.16: a designator
// beginning "99" is private), declared in the Coding Scheme Identification Sequence; dciodvfy only
// knows the standard designators.
const std::vector<std::regex> justified{
    std::regex{R"(Unrecognized defined term <99CSIGN> for value 1 of attribute <Coding Scheme Designator>)"}};

struct Checked {
  fs::path plan_file;
  plan::Plan plan;
  check::PlanCheck check;
};

Checked check_demo_plan(const std::string& name) {
  const fs::path file = test::source_dir() / "testdata" / "plans" / name;
  auto plan = dicom::read_plan_file(file);
  EXPECT_TRUE(plan) << plan.error().message();
  auto library = beamdata::load_library(test::source_dir() / "beamdata");
  EXPECT_TRUE(library) << library.error().message();
  check::PlanCheck result = check::check_plan(plan.value(), library.value(), check::CheckOptions{});
  return {file, std::move(plan.value()), std::move(result)};
}

json read_with_pydicom(const fs::path& file) {
  const auto python = test::python_with_pydicom();
  EXPECT_TRUE(python.has_value()) << "python3-pydicom is needed (bash tools/install-deps)";
  if (!python) return {};
  const auto script = test::source_dir() / "tests" / "dicom_export" / "pydicom_result_summary.py";
  const auto result =
      test::run_command(*python + " " + test::quote(script.string()) + " " + test::quote(file.string()));
  EXPECT_EQ(result.exit_code, 0) << result.err;
  return json::parse(result.out, nullptr, false);
}

void expect_conformant(const fs::path& file) {
  const auto report = test::verify_iod(file);
  ASSERT_TRUE(report.ran)
      << "dciodvfy is not installed (Debian package dicom3tools; bash tools/install-deps)";
  EXPECT_TRUE(report.errors.empty()) << report.output;
  for (const auto& warning : test::unjustified(report.warnings, justified)) {
    ADD_FAILURE() << file.filename() << ": warning not justified in this test: " << warning;
  }
}

const json* find_concept(const json& items, const std::string& code_value) {
  for (const auto& item : items) {
    if (item["concept"]["value"] == code_value) return &item;
  }
  return nullptr;
}

std::string verdict_code_value(check::Status status) {
  switch (status) {
    case check::Status::within_tolerance:
      return "CSR-0101";
    case check::Status::outside_tolerance:
      return "CSR-0102";
    case check::Status::not_checked:
      return "CSR-0103";
    case check::Status::skipped:
      return "CSR-0104";
  }
  return "";
}

// The plan's Study Instance UID as DCMTK's dcmdump prints it.
std::string study_uid_of(const fs::path& plan_file) {
  const auto dumped = test::run_command("dcmdump +P StudyInstanceUID " + test::quote(plan_file.string()));
  const auto open = dumped.out.find('[');
  const auto close = dumped.out.find(']');
  return open == std::string::npos || close == std::string::npos
             ? ""
             : dumped.out.substr(open + 1, close - open - 1);
}

class ExportObjects : public ::testing::Test {
 protected:
  void SetUp() override { dir_ = test::make_temp_dir("countersign-export"); }
  void TearDown() override { fs::remove_all(dir_); }
  fs::path dir_;
};

TEST_F(ExportObjects, TheStructuredResultIsConformantAndCarriesEveryBeamInThePlansStudy) {
  // fern_box_4field: beam 2 carries a deliberate +7 % MU error (invented); fern_setup_beam has a setup beam.
  for (const std::string name : {"fern_box_4field.dcm", "fern_setup_beam.dcm", "fern_two_arc.dcm"}) {
    const Checked c = check_demo_plan(name);
    const auto written = write_result_sr(c.check, c.plan_file, dir_ / (name + ".sr.dcm"));
    ASSERT_TRUE(written) << written.error().message();
    expect_conformant(written->file);

    const json sr = read_with_pydicom(written->file);
    ASSERT_TRUE(sr.is_object()) << name;
    EXPECT_EQ(sr["sop_class_uid"], comprehensive_sr_sop_class);
    EXPECT_EQ(sr["sop_instance_uid"], written->sop_instance_uid);
    EXPECT_EQ(sr["modality"], "SR");
    EXPECT_EQ(sr["study_instance_uid"], study_uid_of(c.plan_file));
    EXPECT_EQ(sr["patient_id"], c.check.patient_id);
    EXPECT_EQ(sr["evidence_instance"], c.check.sop_instance_uid);
    EXPECT_EQ(sr["evidence_study"], sr["study_instance_uid"]);
    EXPECT_EQ(sr["verification_flag"], "UNVERIFIED");
    EXPECT_EQ(sr["coding_schemes"], json::array({"99CSIGN"}));
    const json& content = sr["content"];
    ASSERT_NE(find_concept(content, "CSR-0002"), nullptr);
    EXPECT_EQ((*find_concept(content, "CSR-0002"))["reference"], c.check.sop_instance_uid);
    ASSERT_NE(find_concept(content, "CSR-0018"), nullptr);  // the caution
    EXPECT_NE((*find_concept(content, "CSR-0018"))["text"].get<std::string>().find("does not replace"),
              std::string::npos);

    std::size_t beams = 0;
    for (const auto& item : content) {
      if (item["concept"]["value"] != "CSR-0004") continue;
      const check::BeamCheck& beam = c.check.beams.at(beams++);
      const json& inner = item["content"];
      EXPECT_EQ((*find_concept(inner, "CSR-0005"))["number"], beam.beam_number);
      EXPECT_EQ((*find_concept(inner, "CSR-0006"))["text"], beam.beam_name);
      EXPECT_EQ((*find_concept(inner, "CSR-0011"))["code"]["value"], verdict_code_value(beam.status));
      const auto expect_number = [&](const char* code_value, const std::optional<double>& value,
                                     const char* unit) {
        const json* found = find_concept(inner, code_value);
        ASSERT_EQ(found != nullptr, value.has_value())
            << name << " beam " << beam.beam_number << " " << code_value;
        if (!value) return;
        EXPECT_NEAR((*found)["number"].get<double>(), *value, 1e-5 * std::max(1.0, std::abs(*value)));
        EXPECT_EQ((*found)["unit"]["value"], unit);
        EXPECT_EQ((*found)["unit"]["scheme"], "UCUM");
      };
      expect_number("CSR-0007", beam.planned_dose_gy, "Gy");
      expect_number("CSR-0008", beam.computed_dose_gy, "Gy");
      expect_number("CSR-0009", beam.deviation_percent, "%");
      expect_number("CSR-0010", beam.tolerance_percent, "%");
      expect_number("CSR-0013", beam.meterset_mu, "{MU}");
    }
    EXPECT_EQ(beams, c.check.beams.size()) << name;
  }
}

TEST_F(ExportObjects, TheRecordIsAConformantEncapsulatedPdfDerivedFromThePlan) {
  const Checked c = check_demo_plan("fern_box_4field.dcm");
  // A small, valid PDF of odd length (the encapsulated value is padded, its length stated).
  const fs::path pdf = dir_ / "record.pdf";
  std::ofstream(pdf, std::ios::binary)
      << "%PDF-1.4\n1 0 obj<</Type/Catalog/Pages 2 0 R>>endobj 2 0 obj<</Type/Pages/Kids[]/Count 0>>endobj\n"
         "trailer<</Root 1 0 R>>\n%%EOF\n ";
  const auto size = fs::file_size(pdf);
  const auto written = write_record_pdf(c.check, c.plan_file, pdf, dir_ / "record.dcm");
  ASSERT_TRUE(written) << written.error().message();
  expect_conformant(written->file);
  const json doc = read_with_pydicom(written->file);
  ASSERT_TRUE(doc.is_object());
  EXPECT_EQ(doc["sop_class_uid"], encapsulated_pdf_sop_class);
  EXPECT_EQ(doc["modality"], "DOC");
  EXPECT_EQ(doc["study_instance_uid"], study_uid_of(c.plan_file));
  EXPECT_EQ(doc["source_instance"], c.check.sop_instance_uid);
  EXPECT_EQ(doc["mime_type"], "application/pdf");
  EXPECT_TRUE(doc["document_starts_with_pdf"].get<bool>());
  EXPECT_EQ(doc["document_length"], size);
  EXPECT_EQ(doc["document_value_length"].get<std::uintmax_t>() % 2, 0U);

  // Not a PDF, or a plan that cannot be read again: clear errors naming the file.
  std::ofstream(dir_ / "not.pdf") << "hello";
  const auto not_pdf = write_record_pdf(c.check, c.plan_file, dir_ / "not.pdf", dir_ / "x.dcm");
  ASSERT_FALSE(not_pdf);
  EXPECT_NE(not_pdf.error().message().find("not.pdf"), std::string::npos);
  const auto no_plan = write_result_sr(c.check, dir_ / "missing.dcm", dir_ / "y.dcm");
  ASSERT_FALSE(no_plan);
  EXPECT_NE(no_plan.error().message().find("missing.dcm"), std::string::npos);
}

TEST_F(ExportObjects, EachObjectHasItsOwnNewSeriesAndUuidDerivedUids) {
  const Checked c = check_demo_plan("fern_wedged_pair.dcm");
  const auto first = write_result_sr(c.check, c.plan_file, dir_ / "a.dcm");
  const auto second = write_result_sr(c.check, c.plan_file, dir_ / "b.dcm");
  ASSERT_TRUE(first && second);
  EXPECT_NE(first->sop_instance_uid, second->sop_instance_uid);
  EXPECT_NE(first->series_instance_uid, second->series_instance_uid);
  EXPECT_EQ(first->study_instance_uid, second->study_instance_uid);
  for (const auto& uid : {first->sop_instance_uid, first->series_instance_uid}) {
    EXPECT_EQ(uid.rfind("2.25.", 0), 0U) << uid;
    EXPECT_LE(uid.size(), 64U) << uid;
  }
}

}  // namespace
}  // namespace countersign::dicom_export
