// The INVENTED electron demo plans of the fictional Fernhollow Radiotherapy Unit (issue 19): a
// chest-wall field with a cutout at an extended SSD, a scar field with bolus, and a boost field whose
// MU carry a deliberate +8 % copying error. Patients are phantoms.
//
// The stand-in planning system computes each beam's dose per MU from the continuous electron model
// (tools/demo_linac/electron_model.hpp), independently of countersign's tables and code:
//   D/MU = output x applicator factor x CF x PDD(d, cutout)/100 x ((SSD_eff + d_m)/(SSD_eff + g + d_m))^2
// with an elongated cutout through the square-root rule of the rectangle of its area and aspect
// (AAPM TG-71 electron formalism, from memory). Each plan is written with make_demo_plans' writer
// (write_plan.hpp) and its beam item then made an electron beam: Radiation Type ELECTRON, the
// Applicator Sequence, the cutout (Block Type APERTURE) and the bolus.

#include "electron_plans.hpp"

#include "plan_spec.hpp"
#include "write_plan.hpp"

#include <demo_linac/electron_model.hpp>
#include <demo_linac/model.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>

#include <fmt/format.h>

#include <cmath>
#include <fstream>
#include <numbers>
#include <stdexcept>

namespace make_demo_plans {

namespace {

using Outline = std::vector<std::array<double, 2>>;

struct ElectronPlan {
  PlanSpec plan;  // one static beam; the geometry and the planned dose
  double applicator_cm = 10.0;
  Outline cutout_mm;     // at the isocentre plane; empty: the open applicator
  std::string bolus_id;  // empty: none
  double bolus_cm = 0.0;
};

void put(DcmItem& item, const DcmTagKey& tag, const std::string& value) {
  if (item.putAndInsertString(tag, value.c_str()).bad())
    throw std::runtime_error("cannot write " + DcmTag(tag).toString() + " = " + value);
}

DcmItem& new_item(DcmItem& parent, const DcmTagKey& sequence, long index) {
  DcmItem* item = nullptr;
  if (parent.findOrCreateSequenceItem(sequence, item, index).bad() || item == nullptr)
    throw std::runtime_error("cannot create sequence item");
  return *item;
}

std::string number(double value) { return fmt::format("{:.10g}", value + 0.0 == 0.0 ? 0.0 : value); }

// A rectangle with cut corners (an octagon), centred on the axis.
Outline chamfered_rectangle_mm(double x_mm, double y_mm, double corner_mm) {
  const double hx = x_mm / 2.0, hy = y_mm / 2.0, c = corner_mm;
  return {{-hx + c, -hy}, {hx - c, -hy}, {hx, -hy + c}, {hx, hy - c},
          {hx - c, hy},   {-hx + c, hy}, {-hx, hy - c}, {-hx, -hy + c}};
}

Outline circle_mm(double diameter_mm, int vertices) {
  Outline outline;
  for (int i = 0; i < vertices; ++i) {
    const double a = 2.0 * std::numbers::pi * i / vertices;
    outline.push_back({std::round(diameter_mm / 2.0 * std::cos(a) * 100.0) / 100.0,
                       std::round(diameter_mm / 2.0 * std::sin(a) * 100.0) / 100.0});
  }
  return outline;
}

// Area (cm2), perimeter (cm) and principal-axes aspect of an outline (mm, SAD = the tables' SSD).
struct Shape {
  double area_cm2 = 0.0;
  double perimeter_cm = 0.0;
  double aspect = 1.0;
};
Shape shape_of(const Outline& v) {
  double twice = 0.0, length = 0.0, sx = 0.0, sy = 0.0, sxx = 0.0, syy = 0.0, sxy = 0.0;
  for (std::size_t i = 0, j = v.size() - 1; i < v.size(); j = i++) {
    const double x0 = v[j][0], y0 = v[j][1], x1 = v[i][0], y1 = v[i][1], c = x0 * y1 - x1 * y0;
    twice += c;
    length += std::hypot(x1 - x0, y1 - y0);
    sx += (x0 + x1) * c;
    sy += (y0 + y1) * c;
    sxx += (x0 * x0 + x0 * x1 + x1 * x1) * c;
    syy += (y0 * y0 + y0 * y1 + y1 * y1) * c;
    sxy += (x0 * y1 + 2.0 * x0 * y0 + 2.0 * x1 * y1 + x1 * y0) * c;
  }
  const double area = twice / 2.0, cx = sx / (3.0 * twice), cy = sy / (3.0 * twice);
  const double ixx = syy / 12.0 - area * cy * cy, iyy = sxx / 12.0 - area * cx * cx,
               ixy = sxy / 24.0 - area * cx * cy;
  const double mean = (ixx + iyy) / 2.0, radius = std::hypot((ixx - iyy) / 2.0, ixy);
  return {std::abs(area) / 100.0, length / 10.0, std::sqrt((mean + radius) / (mean - radius))};
}

// The stand-in planning system's dose per MU at the point (continuous model, not the tables).
double planned_dose_per_mu_cgy(const ElectronPlan& e) {
  const BeamSpec& beam = e.plan.beams.front();
  const double energy = beam.energy_mv;
  Shape shape{e.applicator_cm * e.applicator_cm, 4.0 * e.applicator_cm, 1.0};
  if (!e.cutout_mm.empty()) shape = shape_of(e.cutout_mm);
  const double area_cm2 = shape.area_cm2;
  const double perimeter_cm = shape.perimeter_cm;
  const bool elongated = shape.aspect > 1.25;
  const double shorter = std::sqrt(area_cm2 / shape.aspect);
  const double longer = std::sqrt(area_cm2 * shape.aspect);
  const double square_cm = 4.0 * area_cm2 / perimeter_cm;
  const double depth_cm = beam.depth_mm / 10.0 + e.bolus_cm;
  const auto cf = [&](double s) { return demo_linac::cutout_factor(energy, e.applicator_cm, s); };
  const auto pdd = [&](double s) { return demo_linac::electron_pdd(energy, depth_cm, s) / 100.0; };
  const double cutout = elongated ? std::sqrt(cf(shorter) * cf(longer)) : cf(square_cm);
  const double depth_dose = elongated ? std::sqrt(pdd(shorter) * pdd(longer)) : pdd(square_cm);
  const double dmax_cm = std::round(demo_linac::electron_dmax_cm(energy, 10.0) * 10.0) / 10.0;
  const double effective_cm = demo_linac::effective_ssd_cm(energy, e.applicator_cm);
  const double gap_cm = beam.ssd_mm / 10.0 - e.bolus_cm - demo_linac::electron_standard_ssd_cm;
  const double inverse_square = std::pow((effective_cm + dmax_cm) / (effective_cm + gap_cm + dmax_cm), 2.0);
  return demo_linac::electron_output_cgy_per_mu * demo_linac::applicator_factor(e.applicator_cm) * cutout *
         depth_dose * inverse_square;
}

// The dose point on the central axis and the isocentre the SSD implies (HFS, couch and collimator 0).
void place(ElectronPlan& e, const std::array<double, 3>& point_mm) {
  BeamSpec& beam = e.plan.beams.front();
  const double gantry_rad = beam.control_points.front().gantry_deg * std::numbers::pi / 180.0;
  const double beyond_iso_mm = beam.ssd_mm + beam.depth_mm - demo_linac::sad_cm * 10.0;
  const double ax = -std::sin(gantry_rad), ay = std::cos(gantry_rad);  // source to isocentre, HFS
  const auto micrometre = [](double mm) { return std::round(mm * 1000.0) / 1000.0 + 0.0; };
  e.plan.isocenter_mm = {micrometre(point_mm[0] - ax * beyond_iso_mm),
                         micrometre(point_mm[1] - ay * beyond_iso_mm), point_mm[2]};
  beam.dose_point_mm = point_mm;
}

void finish(ElectronPlan& e, const std::array<double, 3>& point_mm) {
  place(e, point_mm);
  BeamSpec& beam = e.plan.beams.front();
  const double dose_per_mu = planned_dose_per_mu_cgy(e);
  beam.meterset_mu =
      std::round(beam.planned_dose_gy * 100.0 / dose_per_mu * 10.0) / 10.0 * beam.mu_error_factor;
  beam.beam_dose_gy = beam.planned_dose_gy;
  beam.cumulative_weights = {0.0, 1.0};
  beam.cumulative_dose_fraction = {0.0, 1.0};
}

ElectronPlan electron_plan(const std::string& file, const std::string& suffix, const std::string& label,
                           const std::string& name, const std::string& patient_id, double energy_mev,
                           double applicator_cm, double gantry_deg, double ssd_mm, double depth_mm,
                           double dose_gy) {
  ElectronPlan e;
  PlanSpec& plan = e.plan;
  plan.file_name = file;
  plan.uid_suffix = suffix;
  plan.label = label;
  plan.name = name;
  plan.description =
      "INVENTED electron demo plan of the fictional Fernhollow Radiotherapy Unit; not for clinical use";
  plan.patient_id = patient_id;
  plan.patient_name = "PHANTOM^ELECTRON";
  plan.setup_technique = "FIXED_SSD";
  plan.fractions = 10;
  BeamSpec beam;
  beam.number = 1;
  beam.name = label;
  beam.description = "INVENTED electron demo beam";
  beam.energy_mv = energy_mev;  // MeV: Nominal Beam Energy (300A,0114)
  beam.jaw_kind = JawKind::symmetric_xy;
  const double jaw_mm = (applicator_cm + 5.0) * 5.0;  // the jaws open 5 cm beyond the applicator (invented)
  beam.jaws_mm = {-jaw_mm, jaw_mm, -jaw_mm, jaw_mm};
  beam.control_points = {{gantry_deg, {}}, {gantry_deg, {}}};
  beam.ssd_mm = ssd_mm;
  beam.depth_mm = depth_mm;
  beam.fixed_ssd = true;
  beam.planned_dose_gy = dose_gy;
  plan.beams = {beam};
  e.applicator_cm = applicator_cm;
  return e;
}

std::vector<ElectronPlan> electron_plans() {
  // Chest wall: 9 MeV, applicator A15, an 8 x 13 cm cutout with 1 cm corners cut, SSD 105 cm
  // (extended: the shoulder), gantry 20, 2 Gy at 1.5 cm.
  ElectronPlan chest = electron_plan("fern_electron_chestwall.dcm", "191", "E CHW", "Chest wall 9 MeV",
                                     "FERN-PH-0191", 9.0, 15.0, 20.0, 1050.0, 15.0, 2.0);
  chest.cutout_mm = chamfered_rectangle_mm(80.0, 130.0, 10.0);
  finish(chest, {40.0, -90.0, 120.0});
  // Scar: 6 MeV, applicator A10, a 5 cm round cutout, the 5 mm bolus sheet, SSD 100 cm to the skin,
  // 2.5 Gy at 0.5 cm below the skin (1.0 cm below the bolus surface).
  ElectronPlan scar = electron_plan("fern_electron_scar.dcm", "192", "E SCAR", "Scar 6 MeV bolus",
                                    "FERN-PH-0192", 6.0, 10.0, 0.0, 1000.0, 5.0, 2.5);
  scar.cutout_mm = circle_mm(50.0, 24);
  scar.bolus_id = demo_linac::demo_boli.front().id;
  scar.bolus_cm = demo_linac::demo_boli.front().thickness_cm;
  finish(scar, {-30.0, -60.0, 40.0});
  // Boost: 12 MeV, open applicator A10, SSD 100 cm, 2 Gy at 2 cm; the MU carry a deliberate +8 %
  // copying error that the check must flag.
  ElectronPlan boost = electron_plan("fern_electron_mu_error.dcm", "193", "E BOOST", "Boost 12 MeV",
                                     "FERN-PH-0193", 12.0, 10.0, 0.0, 1000.0, 20.0, 2.0);
  boost.plan.beams.front().mu_error_factor = 1.08;
  finish(boost, {0.0, -40.0, 0.0});
  return {chest, scar, boost};
}

// The electron parts of the beam item build_plan wrote as a photon beam.
void make_electron_beam(DcmItem& beam, const ElectronPlan& e) {
  put(beam, DCM_RadiationType, "ELECTRON");
  DcmItem& applicator = new_item(beam, DCM_ApplicatorSequence, 0);
  put(applicator, DCM_ApplicatorID, demo_linac::applicator_id(e.applicator_cm));
  put(applicator, DCM_ApplicatorType, "ELECTRON_SQUARE");
  put(applicator, DCM_ApplicatorDescription, "INVENTED square electron applicator");
  put(beam, DCM_NumberOfBlocks, e.cutout_mm.empty() ? "0" : "1");
  if (!e.cutout_mm.empty()) {
    DcmItem& block = new_item(beam, DCM_BlockSequence, 0);
    put(block, DCM_SourceToBlockTrayDistance, "950");
    put(block, DCM_BlockType, "APERTURE");
    put(block, DCM_BlockDivergence, "ABSENT");
    put(block, DCM_BlockNumber, "1");
    put(block, DCM_BlockName, "CUTOUT");
    put(block, DCM_MaterialID, "INVENTED-ALLOY");
    put(block, DCM_BlockThickness, "12");
    put(block, DCM_BlockNumberOfPoints, std::to_string(e.cutout_mm.size()));
    std::string data;
    for (const auto& v : e.cutout_mm) data += (data.empty() ? "" : "\\") + number(v[0]) + "\\" + number(v[1]);
    put(block, DCM_BlockData, data);
  }
  put(beam, DCM_NumberOfBoli, e.bolus_id.empty() ? "0" : "1");
  if (!e.bolus_id.empty()) {
    DcmItem& bolus = new_item(beam, DCM_ReferencedBolusSequence, 0);
    put(bolus, DCM_ReferencedROINumber, "9");
    put(bolus, DCM_BolusID, e.bolus_id);
    put(bolus, DCM_BolusDescription, "INVENTED bolus sheet");
  }
}

}  // namespace

void write_electron_plans(const std::filesystem::path& dir) {
  std::ofstream manifest(dir / "EXPECTED_BEAMS.tsv", std::ios::app);
  for (const ElectronPlan& e : electron_plans()) {
    auto file = build_plan(e.plan);
    DcmItem* beam_item = nullptr;
    if (file->getDataset()->findAndGetSequenceItem(DCM_BeamSequence, beam_item, 0).bad() ||
        beam_item == nullptr)
      throw std::runtime_error("no beam item in " + e.plan.file_name);
    make_electron_beam(*beam_item, e);
    const auto path = dir / e.plan.file_name;
    if (file->saveFile(path.c_str(), EXS_LittleEndianExplicit).bad())
      throw std::runtime_error("cannot write " + path.string());
    const BeamSpec& beam = e.plan.beams.front();
    const auto& p = beam.dose_point_mm;
    manifest << fmt::format(
        "{}\t{}\t{}\tbeam_level\t{}\t{}\t{}\t{}\t{}\t2\t-\t-\t-\t{}\t{}\t{}\t{}\t0\t{}\\{}\\{}\n",
        e.plan.file_name, e.plan.patient_position, e.plan.setup_technique, beam.number, beam.name,
        beam.delivery_type, number(beam.energy_mv), number(beam.control_points.front().gantry_deg),
        number(*beam.meterset_mu), number(*beam.beam_dose_gy), number(beam.ssd_mm), number(beam.depth_mm),
        number(p[0]), number(p[1]), number(p[2]));
  }
  if (!manifest) throw std::runtime_error("cannot append to " + (dir / "EXPECTED_BEAMS.tsv").string());
}

}  // namespace make_demo_plans
