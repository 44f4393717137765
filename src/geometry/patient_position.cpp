#include <countersign/geometry/patient_position.hpp>

namespace countersign::geometry {

std::optional<PatientPosition> supported_patient_position(plan::PatientPosition position) {
  switch (position) {
    case plan::PatientPosition::hfs:
      return PatientPosition::hfs;
    case plan::PatientPosition::hfp:
      return PatientPosition::hfp;
    case plan::PatientPosition::ffs:
      return PatientPosition::ffs;
    case plan::PatientPosition::ffp:
      return PatientPosition::ffp;
    default:
      return std::nullopt;
  }
}

std::string_view to_code(PatientPosition position) {
  switch (position) {
    case PatientPosition::hfs:
      return "HFS";
    case PatientPosition::hfp:
      return "HFP";
    case PatientPosition::ffs:
      return "FFS";
    case PatientPosition::ffp:
      return "FFP";
  }
  return "";
}

Eigen::Matrix3d patient_to_table_top(PatientPosition position) {
  // Rows give table-top X, Y, Z in terms of patient x (left), y (posterior), z (head).
  // The patient's left is superior x anterior (right-handed body axes), so for each position
  // the X row follows from where the head and the face point.
  Eigen::Matrix3d m;
  switch (position) {
    case PatientPosition::hfs:  // head to gantry (+Y), face up (+Z): left = +X
      m << 1, 0, 0, 0, 0, 1, 0, -1, 0;
      break;
    case PatientPosition::hfp:  // head to gantry, face down: left = -X, posterior = +Z
      m << -1, 0, 0, 0, 0, 1, 0, 1, 0;
      break;
    case PatientPosition::ffs:  // feet to gantry, face up: left = -X
      m << -1, 0, 0, 0, 0, -1, 0, -1, 0;
      break;
    case PatientPosition::ffp:  // feet to gantry, face down: left = +X
      m << 1, 0, 0, 0, 0, -1, 0, 1, 0;
      break;
  }
  return m;
}

}  // namespace countersign::geometry
