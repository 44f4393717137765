// Plans on the demo phantoms. The stand-in planner of make_demo_plans computes in water at a depth;
// here it is given the radiological depth (the effective path length of the phantom's polygons with
// the demo CT table), so the planned doses are heterogeneity-corrected the way the check's
// radiological-depth method should reproduce. The written plan then states the geometric SSD and
// depth and the equivalent depth, as a planning system would.

#include "study_plans.hpp"

#include "write_study.hpp"

#include <make_demo_plans/planner.hpp>
#include <make_demo_plans/write_plan.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcsequen.h>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <memory>
#include <numbers>
#include <stdexcept>

namespace make_demo_studies {

namespace {

using make_demo_plans::BeamSpec;
using make_demo_plans::PlanSpec;

constexpr double sad_mm = 1000.0;  // FERN-LINAC-1

// Parameters t in [0, 1] where segment s -> e crosses an edge of the polygons.
void crossings(const std::vector<Polygon>& polygons, const Point2& s, const Point2& e,
               std::vector<double>& ts) {
  const double dx = e[0] - s[0], dy = e[1] - s[1];
  for (const auto& polygon : polygons) {
    for (std::size_t a = 0, b = polygon.size() - 1; a < polygon.size(); b = a++) {
      const double ex = polygon[a][0] - polygon[b][0], ey = polygon[a][1] - polygon[b][1];
      const double den = dx * ey - dy * ex;
      if (den == 0.0) continue;
      const double wx = polygon[b][0] - s[0], wy = polygon[b][1] - s[1];
      const double t = (wx * ey - wy * ex) / den;
      const double u = (wx * dy - wy * dx) / den;
      if (t >= 0.0 && t <= 1.0 && u >= 0.0 && u <= 1.0) ts.push_back(t);
    }
  }
}

// The centre of the voxel that holds coordinate c along one axis of the phantom's grid.
double voxel_centre(double c, double first_centre, double spacing) {
  return first_centre + std::round((c - first_centre) / spacing) * spacing;
}

// The radiological depth a planning system computes on the CT: the CT number of the voxel holding
// each point (decided by the voxel's centre), integrated by the midpoint rule in 0.01 mm steps
// (a different method from countersign's exact voxel crossings).
double radiological_depth_on_ct(const PhantomSpec& phantom, const Point2& from, const Point2& to,
                                double z_mm) {
  const double z = voxel_centre(z_mm, phantom.first_centre_mm[2], phantom.slice_mm);
  const PlaneOutlines plane(phantom, z);
  const double length = std::hypot(to[0] - from[0], to[1] - from[1]);
  const auto steps = static_cast<std::size_t>(std::ceil(length / 0.01));
  double sum = 0.0;
  for (std::size_t n = 0; n < steps; ++n) {
    const double t = (static_cast<double>(n) + 0.5) / static_cast<double>(steps);
    const double x =
        voxel_centre(from[0] + t * (to[0] - from[0]), phantom.first_centre_mm[0], phantom.pixel_mm);
    const double y =
        voxel_centre(from[1] + t * (to[1] - from[1]), phantom.first_centre_mm[1], phantom.pixel_mm);
    sum += demo_density(plane.hu_at(x, y));
  }
  return sum * length / static_cast<double>(steps);
}

// The central axis of gantry angle g (HFS, couch 0) through the isocentre, in the plane z = iso z:
// where it enters the body outline (exact, from the polygons), SSD and depth of the isocentre.
BeamGeometry axis_geometry(const PhantomSpec& phantom, const std::array<double, 3>& iso, double gantry_deg) {
  const double g = gantry_deg * std::numbers::pi / 180.0;
  const Point2 dir{-std::sin(g), std::cos(g)};  // source towards isocentre (IEC 61217, HFS)
  const Point2 source{iso[0] - sad_mm * dir[0], iso[1] - sad_mm * dir[1]};
  const Point2 end{iso[0] + sad_mm * dir[0], iso[1] + sad_mm * dir[1]};
  const auto body = phantom.body.outline(iso[2]);
  std::vector<double> ts{0.0, 1.0};
  crossings(body, source, end, ts);
  std::sort(ts.begin(), ts.end());
  BeamGeometry out;
  out.gantry_deg = gantry_deg;
  out.isocenter_mm = iso;
  for (std::size_t i = 1; i < ts.size(); ++i) {
    const double mid = 0.5 * (ts[i - 1] + ts[i]);
    if (!inside(body, source[0] + mid * (end[0] - source[0]), source[1] + mid * (end[1] - source[1])))
      continue;
    out.ssd_mm = ts[i - 1] * 2.0 * sad_mm;
    out.entry_mm = {source[0] + ts[i - 1] * (end[0] - source[0]),
                    source[1] + ts[i - 1] * (end[1] - source[1]), iso[2]};
    out.depth_mm = sad_mm - out.ssd_mm;
    out.radiological_depth_mm =
        radiological_depth_on_ct(phantom, {out.entry_mm[0], out.entry_mm[1]}, {iso[0], iso[1]}, iso[2]);
    return out;
  }
  throw std::logic_error("a demo beam misses its phantom");
}

BeamSpec beam_on(int number, const std::string& name, double gantry_deg, double dose_gy,
                 std::array<double, 4> jaws_mm, const BeamGeometry& geometry) {
  BeamSpec beam;
  beam.number = number;
  beam.name = name;
  beam.description = "INVENTED demo beam on a CT phantom";
  beam.energy_mv = 6.0;
  beam.jaws_mm = jaws_mm;
  beam.control_points = {{gantry_deg, {}}, {gantry_deg, {}}};
  beam.depth_mm = geometry.radiological_depth_mm;  // what the stand-in planner computes with
  beam.ssd_mm = sad_mm - geometry.radiological_depth_mm;
  beam.planned_dose_gy = dose_gy;
  return beam;
}

std::string ds(double value) { return fmt::format("{:.2f}", std::round(value * 100.0) / 100.0 + 0.0); }

DcmItem* child(DcmItem& parent, const DcmTagKey& sequence, long index) {
  DcmItem* item = nullptr;
  if (parent.findAndGetSequenceItem(sequence, item, index).bad() || item == nullptr)
    throw std::runtime_error("plan writer output lacks " + DcmTag(sequence).toString());
  return item;
}

// Geometric depth, equivalent depth and SSD in one Beam Dose Verification Control Point item.
void put_distances(DcmItem& item, const BeamGeometry& g) {
  auto fl = [](double v) { return static_cast<Float32>(std::round(v * 100.0) / 100.0); };
  item.putAndInsertFloat32(DCM_BeamDosePointDepth, fl(g.depth_mm));
  item.putAndInsertFloat32(DCM_BeamDosePointEquivalentDepth, fl(g.radiological_depth_mm));
  item.putAndInsertFloat32(DCM_BeamDosePointSSD, fl(g.ssd_mm));
  item.putAndInsertString(DCM_BeamDosePointSourceToExternalContourDistance, ds(g.ssd_mm).c_str());
}

// PS3.3 asks for two or more items (one per control point); give control point 0 its own item
// when the plan writer wrote only the last one.
void complete_verification_items(DcmItem& reference) {
  DcmSequenceOfItems* items = nullptr;
  if (reference.findAndGetSequence(DCM_BeamDoseVerificationControlPointSequence, items).bad() ||
      items == nullptr)
    throw std::runtime_error("plan writer output lacks BeamDoseVerificationControlPointSequence");
  if (items->card() != 1) return;
  auto first = std::make_unique<DcmItem>();
  first->putAndInsertString(DCM_CumulativeMetersetWeight, "0");
  first->putAndInsertString(DCM_ReferencedControlPointIndex, "0");
  if (items->insert(first.get(), 0, OFTrue).bad())
    throw std::runtime_error("cannot insert a verification item");
  first.release();  // owned by the sequence now
}

// The plan as a planning system would state it: geometric SSD and depth, equivalent depth
// (rounded to 0.01 mm). The beam's items are found by Beam Number.
void state_patient_geometry(DcmDataset& dataset, const std::vector<BeamGeometry>& geometry) {
  if (!dataset.tagExists(DCM_OperatorsName))
    dataset.putAndInsertString(DCM_OperatorsName, "");  // RT Series, Type 2
  for (long b = 0;; ++b) {
    DcmItem* beam = nullptr;
    if (dataset.findAndGetSequenceItem(DCM_BeamSequence, beam, b).bad() || beam == nullptr) break;
    long number = 0;
    beam->findAndGetLongInt(DCM_BeamNumber, number);
    const auto g = std::find_if(geometry.begin(), geometry.end(),
                                [&](const BeamGeometry& x) { return x.beam_number == number; });
    if (g == geometry.end()) continue;
    child(*beam, DCM_ControlPointSequence, 0)
        ->putAndInsertString(DCM_SourceToSurfaceDistance, ds(g->ssd_mm).c_str());
    DcmItem* reference = child(*beam, DCM_ReferencedDoseReferenceSequence, 0);
    complete_verification_items(*reference);
    DcmItem* item = nullptr;
    for (long i = 0;
         reference->findAndGetSequenceItem(DCM_BeamDoseVerificationControlPointSequence, item, i).good(); ++i)
      put_distances(*item, *g);
  }
}

struct BeamPlan {
  int number;
  std::string name;
  double gantry_deg;
  double dose_gy;
  std::array<double, 4> jaws_mm;  // X1, X2, Y1, Y2 at the isocentre plane
};

void write_plan(const PhantomSpec& phantom, const std::string& file_name, const std::string& label,
                const std::string& name, const std::array<double, 3>& iso, const std::vector<BeamPlan>& beams,
                const std::filesystem::path& dir, std::vector<BeamGeometry>& rows) {
  PlanSpec plan;
  plan.file_name = file_name;
  plan.uid_suffix = phantom.uid_suffix;
  plan.label = label;
  plan.name = name;
  plan.description =
      "INVENTED demo plan on a CT phantom of the fictional Fernhollow Radiotherapy Unit; not for "
      "clinical use";
  plan.patient_id = phantom.patient_id;
  plan.patient_name = phantom.patient_name;
  plan.isocenter_mm = iso;
  plan.fractions = 25;
  std::vector<BeamGeometry> geometry;
  for (const auto& b : beams) {
    geometry.push_back(axis_geometry(phantom, iso, b.gantry_deg));
    geometry.back().plan_file = file_name;
    geometry.back().beam_number = b.number;
    geometry.back().beam_name = b.name;
    plan.beams.push_back(beam_on(b.number, b.name, b.gantry_deg, b.dose_gy, b.jaws_mm, geometry.back()));
  }
  make_demo_plans::plan_doses(plan);
  for (auto& beam : plan.beams) beam.dose_point_mm = iso;
  auto file = make_demo_plans::build_plan(plan);
  state_patient_geometry(*file->getDataset(), geometry);
  if (file->saveFile((dir / file_name).c_str(), EXS_LittleEndianExplicit).bad())
    throw std::runtime_error("cannot write " + (dir / file_name).string());
  rows.insert(rows.end(), geometry.begin(), geometry.end());
}

}  // namespace

std::vector<BeamGeometry> write_study_plans(const PhantomSpec& phantom, const std::filesystem::path& dir) {
  std::vector<BeamGeometry> rows;
  const std::array<double, 4> square{-50.0, 50.0, -50.0, 50.0};
  if (phantom.folder == "fern_lung_slab" || phantom.folder == "fern_bench_512") {
    // AP through 40 mm water, 40 mm lung, 40 mm water; the others through water only.
    write_plan(phantom, "RP.fern_lung_4field.dcm", "LUNG4", "Lung slab 4F", {0.0, 20.0, 0.0},
               {{1, "AP", 0.0, 0.60, square},
                {2, "LAT-L", 90.0, 0.40, square},
                {3, "PA", 180.0, 0.60, square},
                {4, "LAT-R", 270.0, 0.40, square}},
               dir, rows);
  } else if (phantom.folder == "fern_breast") {
    // Tangential pair along the chest wall under the left breast, isocentre 20 mm in front of the
    // wall (on a slice centre, z = 2.5); the anterior jaw overshoots the skin (flash), so part of
    // each field misses tissue.
    write_plan(phantom, "RP.fern_breast_tangents.dcm", "BRTAN", "Left breast tangents", {55.0, -98.0, 2.5},
               {{1, "MED-TAN", 285.0, 1.0, {-25.0, 45.0, -40.0, 40.0}},
                {2, "LAT-TAN", 105.0, 1.0, {-45.0, 25.0, -40.0, 40.0}}},
               dir, rows);
  } else if (phantom.folder == "fern_oblique") {
    const std::array<double, 4> small{-40.0, 40.0, -40.0, 40.0};
    write_plan(phantom, "RP.fern_oblique.dcm", "OBLQ", "Oblique surface", {0.0, 0.0, 0.0},
               {{1, "AP", 0.0, 1.0, small}, {2, "LAO", 30.0, 0.5, small}, {3, "RAO", 330.0, 0.5, small}}, dir,
               rows);
  }
  return rows;
}

}  // namespace make_demo_studies
