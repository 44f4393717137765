// make_demo_plans: writes the INVENTED demo RT Plans of the fictional Fernhollow Radiotherapy Unit
// into <testdata>/plans/, their expected values into <testdata>/plans/EXPECTED_BEAMS.tsv, and the
// malformed-input corpus into <testdata>/malformed/. Output is reproducible: fixed UIDs and dates.
//
//   make_demo_plans <testdata-dir>

#include "electron_plans.hpp"
#include "malformed.hpp"
#include "plan_spec.hpp"
#include "write_plan.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/oflog/oflog.h>

#include <fmt/format.h>

#include <exception>
#include <filesystem>
#include <fstream>
#include <iostream>

namespace {

const char* layout_name(make_demo_plans::DosePointLayout layout) {
  switch (layout) {
    case make_demo_plans::DosePointLayout::beam_level:
      return "beam_level";
    case make_demo_plans::DosePointLayout::referenced_beam_2012:
      return "referenced_beam_2012";
    case make_demo_plans::DosePointLayout::fraction_verification:
      return "fraction_verification";
  }
  return "?";
}

// Up to 10 significant digits, as the DS values in the plans are written; no negative zero.
std::string number_text(double value) { return fmt::format("{:.10g}", value + 0.0 == 0.0 ? 0.0 : value); }
std::string optional_text(const std::optional<double>& value) { return value ? number_text(*value) : "-"; }

void write_plans(const std::vector<make_demo_plans::PlanSpec>& plans, const std::filesystem::path& dir) {
  std::filesystem::create_directories(dir);
  std::ofstream manifest(dir / "EXPECTED_BEAMS.tsv");
  manifest
      << "# Expected per-beam values of the INVENTED demo plans, written by tools/make_demo_plans from its\n"
         "# own plan specification (not by reading the DICOM files back). Doses in Gy, distances in mm.\n"
         "file\tpatient_position\tsetup_technique\tlayout\tbeam_number\tbeam_name\tdelivery_type\tenergy_mv\t"
         "gantry_deg\tcontrol_points\tmlc\twedge_id\ttray_id\tmeterset_mu\tbeam_dose_gy\tssd_mm\tdepth_mm\t"
         "off_axis_mm\tdose_point_mm\n";
  for (const auto& plan : plans) {
    auto file = make_demo_plans::build_plan(plan);
    const auto path = dir / plan.file_name;
    if (file->saveFile(path.c_str(), EXS_LittleEndianExplicit).bad())
      throw std::runtime_error("cannot write " + path.string());
    for (const auto& beam : plan.beams) {
      manifest << fmt::format(
          "{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\\{}\\{}\n",
          plan.file_name, plan.patient_position, plan.setup_technique, layout_name(plan.layout), beam.number,
          beam.name, beam.delivery_type, beam.energy_mv, beam.control_points.front().gantry_deg,
          beam.control_points.size(), beam.has_mlc ? "MLCX" : "-",
          beam.wedge_id.empty() ? "-" : beam.wedge_id, beam.tray_id.empty() ? "-" : beam.tray_id,
          optional_text(beam.meterset_mu), optional_text(beam.beam_dose_gy), number_text(beam.ssd_mm),
          number_text(beam.depth_mm), number_text(beam.off_axis_mm), number_text(beam.dose_point_mm[0]),
          number_text(beam.dose_point_mm[1]), number_text(beam.dose_point_mm[2]));
    }
  }
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: make_demo_plans <testdata-dir>\n";
    return 3;
  }
  // The corpus deliberately writes datasets that no longer match their meta header; DCMTK's
  // warnings about that are expected.
  OFLog::getLogger("dcmtk").setLogLevel(OFLogger::ERROR_LOG_LEVEL);
  try {
    const std::filesystem::path root = argv[1];
    const auto plans = make_demo_plans::demo_plans();
    write_plans(plans, root / "plans");
    make_demo_plans::write_electron_plans(root / "plans");
    make_demo_plans::write_malformed_corpus(plans, root / "malformed");
    std::cout << "wrote " << plans.size() << " demo plans and the malformed corpus under " << root.string()
              << "\n";
    return 0;
  } catch (const std::exception& e) {
    std::cerr << "make_demo_plans: " << e.what() << "\n";
    return 1;
  }
}
