#pragma once

// Sector rays end at the body outline (missing tissue): the hook EngineOptions::outline_radius_mm
// made from a patient model. For one part (its beam frame) and the dose point, a sector direction in
// the beam-limiting-device frame is a direction in the plane through the point perpendicular to the
// central axis (the plane's u, v axes are the device's X, Y). The body's extent along it in that plane
// is scaled to the isocentre plane, where the sectors are drawn, by SAD / SPD: projection from the
// source maps the point's plane onto the isocentre plane by that factor about the central axis and
// keeps directions.

#include <countersign/geometry/beam_frame.hpp>
#include <countersign/plan/plan.hpp>

#include <functional>
#include <optional>

namespace countersign::patient {
class PatientModel;
}

namespace countersign::engine {

// For a part's frame, the dose point (patient mm), a sector direction (degrees, device X towards Y)
// and how far the ray may run (isocentre plane, mm): the isocentre-plane distance at which the body
// ends, or nullopt (it does not end before the reach, or the CT ends first: tissue is assumed).
using OutlineRadius = std::function<std::optional<double>(
    const geometry::BeamFrame& frame, const plan::PointMm& point_mm, double direction_deg, double reach_mm)>;

// The hook for a study's patient model. Keeps a reference: the model must outlive the hook's use.
[[nodiscard]] OutlineRadius outline_radius_from(const patient::PatientModel& model);

}  // namespace countersign::engine
