#pragma once

// Patient positions (DICOM Patient Position (0018,5100)) the check supports, and the rotation that
// takes a vector in the DICOM patient coordinate system (x: patient's left, y: posterior,
// z: head) to the IEC 61217 table-top system (X: right when facing the gantry, Y: towards the
// gantry, Z: up) with the couch at 0 degrees.

#include <countersign/plan/defined_terms.hpp>

#include <Eigen/Core>
#include <optional>
#include <string_view>

namespace countersign::geometry {

enum class PatientPosition { hfs, hfp, ffs, ffp };

// The supported position for a plan's Patient Position; nullopt for any other (decubitus, absent, ...).
[[nodiscard]] std::optional<PatientPosition> supported_patient_position(plan::PatientPosition position);

[[nodiscard]] std::string_view to_code(PatientPosition position);

// Rotation patient (LPS) -> IEC 61217 table top (couch angle 0), a proper rotation (det = +1).
[[nodiscard]] Eigen::Matrix3d patient_to_table_top(PatientPosition position);

}  // namespace countersign::geometry
