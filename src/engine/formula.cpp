// Stage 7, formula: the formalism (TMR or PDD form) and the inputs of the point-dose formula
// (point_dose.cpp holds the formula itself).

#include "stages.hpp"

#include <countersign/util/units.hpp>

namespace countersign::engine::stages {

void choose_method(const ResolvedBeam& resolved, MethodChoice choice, BeamDose& r) {
  r.setup_technique = resolved.setup->setup_technique;
  switch (choice) {
    case MethodChoice::tmr:
      r.method = Method::tmr;
      r.method_basis = MethodBasis::user_choice;
      return;
    case MethodChoice::pdd:
      r.method = Method::pdd;
      r.method_basis = MethodBasis::user_choice;
      return;
    case MethodChoice::by_setup_technique:
      break;
  }
  r.method_basis = MethodBasis::setup_technique;
  r.method = r.setup_technique == plan::SetupTechnique::fixed_ssd ? Method::pdd : Method::tmr;
}

DoseInputs formula_inputs(const BeamDose& r, const ResolvedBeam& resolved, const PartGeometry& part,
                          const ScatterInputs& scatter, const PrimaryPath& path) {
  DoseInputs in;
  in.method = r.method;
  in.meterset_mu = part.meterset_mu;
  in.depth_cm = util::mm_to_cm(part.depth_mm);
  in.spd_cm = util::mm_to_cm(part.spd_mm);
  in.ssd_cm = util::mm_to_cm(part.ssd_mm);
  in.sad_cm = util::mm_to_cm(r.sad_mm);
  in.off_axis_cm = util::mm_to_cm(part.off_axis_mm);
  in.collimator_field_cm = scatter.collimator_field_cm;
  // Behind the leaves: the jaw field's dose times the MLC transmission.
  in.field_at_isocentre_cm = path.under_leaves ? scatter.collimator_field_cm : scatter.open_field_cm;
  in.wedge = resolved.wedge;
  in.wedge_axes = wedge_axes(resolved, part.iso_plane_x_mm, part.iso_plane_y_mm);
  in.tray = resolved.tray;
  in.transmission = path.transmission;
  return in;
}

}  // namespace countersign::engine::stages
