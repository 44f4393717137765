// Stage 5, scatter: the field sizes the scatter factors (Sc, Sp) and the TMR/PDD column are looked
// up with (equivalent squares), and for shaped fields the sector integration at the point.

#include "stages.hpp"

#include <countersign/beamdata/conversions.hpp>
#include <countersign/util/units.hpp>

namespace countersign::engine::stages {

ScatterInputs scatter_inputs(const geometry::Aperture& aperture, const ResolvedBeam& resolved,
                             const SectorSetup* setup) {
  const beamdata::BeamData& data = *resolved.data;
  const geometry::JawOpening& jaws = aperture.jaws();
  ScatterInputs scatter;
  // 4A/P of the opening, jaws intersected with the MLC (phantom scatter follows the irradiated field).
  scatter.open_field_cm = util::mm_to_cm(aperture.equivalent_square_mm());
  // Head scatter follows the opening the library names: the jaws (Sterling's rule for the rectangle)
  // or, for heads whose MLC shapes the head-scatter field, the jaws intersected with the MLC.
  scatter.collimator_field_cm =
      data.head_scatter_field_in_force() == beamdata::HeadScatterField::jaws_and_mlc &&
              aperture.shaped_by_mlc()
          ? scatter.open_field_cm
          : beamdata::equivalent_square_cm(util::mm_to_cm(jaws.width_mm()), util::mm_to_cm(jaws.length_mm()));
  if (setup == nullptr) return scatter;

  SectorField field;
  field.aperture = &aperture;
  field.blocks = &resolved.blocks;
  field.leaf_transmission = data.mlc_transmission.value_or(0.0);
  if (setup->options != nullptr && setup->options->outline_radius_mm && setup->frame != nullptr) {
    const OutlineRadius& hook = setup->options->outline_radius_mm;
    const geometry::BeamFrame& frame = *setup->frame;
    const plan::PointMm point_mm = setup->point_mm;
    field.outline_radius_mm = [&hook, &frame, point_mm](double direction_deg, double reach_mm) {
      return hook(frame, point_mm, direction_deg, reach_mm);
    };
  }
  const ScatterMaximumRatios smr(data, util::mm_to_cm(setup->depth_mm));
  scatter.sectors = integrate_sectors(field, setup->point.iso_plane_x_mm, setup->point.iso_plane_y_mm,
                                      setup->spd_mm / setup->sad_mm, smr, setup->max_sector_deg);
  return scatter;
}

void apply_sector_scatter(const beamdata::BeamData& data, const DoseInputs& in, const SectorScatter& sectors,
                          PointDose& dose) {
  // The equivalent-square calculation's Sp·TMR at the point's plane, with its transmission and OAR.
  const double s_d = dose.fields.point_cm;
  const double oar = dose.factors.oar.value;
  const double equivalent =
      data.sp.at(s_d).value * data.tmr.at(in.depth_cm, s_d).value * in.transmission * oar;
  const double sector = sectors.sp_tmr(oar);
  const double ratio = equivalent > 0.0 ? sector / equivalent : 0.0;
  dose.factors.sector_scatter = Factor{ratio, FactorBasis::formula, std::nullopt};
  dose.dose_per_mu_cgy *= ratio;
  dose.dose_cgy *= ratio;
}

}  // namespace countersign::engine::stages
