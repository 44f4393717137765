// Fraction Group Sequence (300A,0070), with the dose-point depth in each of the places DICOM has
// kept it: directly in the Referenced Beam Sequence item (2012 edition) and in that item's Beam
// Dose Verification Control Point Sequence (later editions).

#include "parse.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>

#include <fmt/format.h>

#include <algorithm>

namespace countersign::dicom::detail {

namespace {

constexpr double max_distance_mm = 10000.0;

plan::ReferencedBeam parse_referenced_beam(const ItemReader& raw_item,
                                           const std::vector<plan::DoseReference>& dose_refs) {
  plan::ReferencedBeam beam;
  beam.beam_number = raw_item.integer(DCM_ReferencedBeamNumber, Need::required).value_or(0);
  const ItemReader item = raw_item.described(fmt::format(" (beam {})", beam.beam_number));
  beam.meterset_mu =
      item.within(DCM_BeamMeterset, item.number(DCM_BeamMeterset, Need::optional), 0.0, 100000.0, "MU");
  beam.dose_gy = item.within(DCM_BeamDose, item.number(DCM_BeamDose, Need::optional), 0.0, 1000.0, "Gy");
  beam.dose_type = item.text(DCM_BeamDoseType, Need::optional);
  const auto point = item.numbers(DCM_RETIRED_BeamDoseSpecificationPoint, Need::optional, 3);
  if (point) beam.dose_specification_point_mm = plan::PointMm{(*point)[0], (*point)[1], (*point)[2]};
  auto& direct = beam.distances_in_referenced_beam;
  direct.depth_mm = item.within(DCM_BeamDosePointDepth, item.number(DCM_BeamDosePointDepth, Need::optional),
                                0.0, max_distance_mm, "mm");
  direct.equivalent_depth_mm =
      item.within(DCM_BeamDosePointEquivalentDepth,
                  item.number(DCM_BeamDosePointEquivalentDepth, Need::optional), 0.0, max_distance_mm, "mm");
  direct.ssd_mm = item.within(DCM_BeamDosePointSSD, item.number(DCM_BeamDosePointSSD, Need::optional), 0.0,
                              max_distance_mm, "mm");

  const auto verification = item.sequence(DCM_BeamDoseVerificationControlPointSequence, Need::optional);
  if (!verification.empty()) {
    const auto& first = verification.front();
    beam.distances_in_verification_sequence = parse_verification_distances(first);
    beam.verification_dose_reference_number =
        first.integer(DCM_ReferencedDoseReferenceNumber, Need::optional);
  }
  // Editions that name the dose reference by UID in the Referenced Beam item.
  const std::string ref_uid = item.text(DCM_ReferencedDoseReferenceUID, Need::optional);
  if (!beam.verification_dose_reference_number && !ref_uid.empty()) {
    const auto found = std::find_if(dose_refs.begin(), dose_refs.end(),
                                    [&ref_uid](const plan::DoseReference& d) { return d.uid == ref_uid; });
    if (found == dose_refs.end()) {
      item.fail(ErrorKind::inconsistent, DCM_ReferencedDoseReferenceUID,
                "no item of DoseReferenceSequence (300A,0010) has DoseReferenceUID " + printable(ref_uid));
    } else {
      beam.verification_dose_reference_number = found->number;
    }
  }
  return beam;
}

}  // namespace

std::vector<plan::FractionGroup> parse_fraction_groups(const ItemReader& dataset,
                                                       const std::vector<plan::DoseReference>& dose_refs) {
  std::vector<plan::FractionGroup> groups;
  for (const auto& raw_item : dataset.sequence(DCM_FractionGroupSequence, Need::required)) {
    plan::FractionGroup group;
    group.number = raw_item.integer(DCM_FractionGroupNumber, Need::required).value_or(0);
    const ItemReader item = raw_item.described(fmt::format(" (fraction group {})", group.number));
    group.fractions_planned = item.integer(DCM_NumberOfFractionsPlanned, Need::optional);
    if (group.fractions_planned && *group.fractions_planned < 0) {
      item.fail(ErrorKind::bad_value, DCM_NumberOfFractionsPlanned, "is negative");
    }
    group.beam_dose_meaning = item.term<plan::BeamDoseMeaning>(DCM_BeamDoseMeaning, Need::optional);
    const auto declared = item.integer(DCM_NumberOfBeams, Need::required);
    const auto beams = item.sequence(DCM_ReferencedBeamSequence, Need::optional);
    if (item.failed()) return groups;
    if (*declared != static_cast<int>(beams.size())) {
      item.fail(ErrorKind::inconsistent, DCM_NumberOfBeams,
                fmt::format("says {} but ReferencedBeamSequence (300C,0004) has {} items", *declared,
                            beams.size()));
      return groups;
    }
    for (const auto& beam_item : beams) {
      group.beams.push_back(parse_referenced_beam(beam_item, dose_refs));
      if (item.failed()) return groups;
      const int number = group.beams.back().beam_number;
      if (std::count_if(group.beams.begin(), group.beams.end(),
                        [number](const plan::ReferencedBeam& b) { return b.beam_number == number; }) > 1) {
        beam_item.fail(ErrorKind::inconsistent, DCM_ReferencedBeamNumber,
                       fmt::format("beam {} is referenced twice in one fraction group", number));
        return groups;
      }
    }
    if (std::any_of(groups.begin(), groups.end(),
                    [&group](const plan::FractionGroup& g) { return g.number == group.number; })) {
      item.fail(ErrorKind::inconsistent, DCM_FractionGroupNumber,
                fmt::format("fraction group number {} is used twice", group.number));
      return groups;
    }
    groups.push_back(std::move(group));
  }
  return groups;
}

}  // namespace countersign::dicom::detail
