// Beam Sequence (300A,00B0) and its control points, read strictly (DICOM PS3.3 RT Beams Module).

#include "parse.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <map>
#include <set>

namespace countersign::dicom::detail {

namespace {

constexpr double max_coordinate_mm = 10000.0;  // plausibility bound for positions and distances

std::optional<plan::PointMm> point(const ItemReader& item, const DcmTagKey& tag, Need need) {
  const auto values = item.numbers(tag, need, 3);
  if (!values) return std::nullopt;
  return plan::PointMm{(*values)[0], (*values)[1], (*values)[2]};
}

// An angle on an IEC 61217 scale: 0 <= angle < 360 degrees.
std::optional<double> angle(const ItemReader& item, const DcmTagKey& tag, Need need) {
  const auto value = item.number(tag, need);
  if (value && (*value < 0.0 || *value >= 360.0)) {
    item.fail(ErrorKind::bad_value, tag, fmt::format("angle {} deg is outside 0 <= angle < 360", *value));
    return std::nullopt;
  }
  return value;
}

std::optional<int> count_attribute(const ItemReader& item, const DcmTagKey& tag) {
  const auto count = item.integer(tag, Need::required);
  if (count && *count < 0) {
    item.fail(ErrorKind::bad_value, tag, fmt::format("count {} is negative", *count));
    return std::nullopt;
  }
  return count;
}

// A sequence whose item count a separate "Number of ..." attribute states (type 1 in the RT Beams Module).
std::vector<ItemReader> counted_sequence(const ItemReader& beam, const DcmTagKey& count_tag,
                                         const DcmTagKey& seq_tag) {
  const auto count = count_attribute(beam, count_tag);
  auto items = beam.sequence(seq_tag, Need::optional);
  if (count && static_cast<std::size_t>(*count) != items.size()) {
    beam.fail(ErrorKind::inconsistent, count_tag,
              fmt::format("says {} but {} {} has {} items", *count, keyword(seq_tag), tag_text(seq_tag),
                          items.size()));
  }
  return items;
}

std::vector<plan::BeamLimitingDevice> parse_devices(const ItemReader& beam) {
  std::vector<plan::BeamLimitingDevice> devices;
  std::set<std::string> seen;
  for (const auto& item : beam.sequence(DCM_BeamLimitingDeviceSequence, Need::required)) {
    plan::BeamLimitingDevice device;
    device.type = item.term<plan::DeviceType>(DCM_RTBeamLimitingDeviceType, Need::required);
    device.source_to_device_distance_mm = item.within(
        DCM_SourceToBeamLimitingDeviceDistance,
        item.number(DCM_SourceToBeamLimitingDeviceDistance, Need::optional), 0.0, max_coordinate_mm, "mm");
    device.pair_count = item.integer(DCM_NumberOfLeafJawPairs, Need::required).value_or(0);
    if (item.failed()) return devices;
    if (device.pair_count < 1) {
      item.fail(ErrorKind::bad_value, DCM_NumberOfLeafJawPairs,
                fmt::format("{} pairs, expected at least 1", device.pair_count));
      return devices;
    }
    if (!seen.insert(device.type.text).second) {
      item.fail(ErrorKind::inconsistent, DCM_RTBeamLimitingDeviceType,
                "device " + printable(device.type.text) + " is declared twice");
      return devices;
    }
    const bool is_mlc = device.type == plan::DeviceType::mlcx || device.type == plan::DeviceType::mlcy;
    if (is_mlc) {
      const auto boundaries = item.numbers(DCM_LeafPositionBoundaries, Need::required, 0);
      if (!boundaries) return devices;
      if (boundaries->size() != static_cast<std::size_t>(device.pair_count) + 1) {
        item.fail(ErrorKind::inconsistent, DCM_LeafPositionBoundaries,
                  fmt::format("has {} values, expected NumberOfLeafJawPairs + 1 = {}", boundaries->size(),
                              device.pair_count + 1));
        return devices;
      }
      if (std::adjacent_find(boundaries->begin(), boundaries->end(), std::greater_equal<>()) !=
          boundaries->end()) {
        item.fail(ErrorKind::bad_value, DCM_LeafPositionBoundaries, "values are not strictly increasing");
        return devices;
      }
      device.leaf_boundaries_mm = *boundaries;
    }
    devices.push_back(std::move(device));
  }
  return devices;
}

std::vector<plan::Wedge> parse_wedges(const ItemReader& beam) {
  std::vector<plan::Wedge> wedges;
  for (const auto& item : counted_sequence(beam, DCM_NumberOfWedges, DCM_WedgeSequence)) {
    plan::Wedge wedge;
    wedge.number = item.integer(DCM_WedgeNumber, Need::required);
    wedge.type = item.term<plan::WedgeType>(DCM_WedgeType, Need::optional);
    wedge.id = item.text(DCM_WedgeID, Need::optional);
    wedge.angle_deg =
        item.within(DCM_WedgeAngle, item.number(DCM_WedgeAngle, Need::optional), 0.0, 90.0, "deg");
    wedge.factor = item.within(DCM_WedgeFactor, item.number(DCM_WedgeFactor, Need::optional), 0.0, 10.0, "");
    wedge.orientation_deg = angle(item, DCM_WedgeOrientation, Need::optional);
    wedges.push_back(std::move(wedge));
  }
  return wedges;
}

// Items of an accessory sequence; number_tag is absent for sequences without a number attribute.
std::vector<plan::Accessory> parse_accessories(const std::vector<ItemReader>& items,
                                               const std::optional<DcmTagKey>& number_tag,
                                               const DcmTagKey& id_tag, const DcmTagKey& type_tag,
                                               Need number_need) {
  std::vector<plan::Accessory> accessories;
  for (const auto& item : items) {
    plan::Accessory accessory;
    if (number_tag) accessory.number = item.integer(*number_tag, number_need);
    accessory.id = item.text(id_tag, Need::optional);
    accessory.type = item.text(type_tag, Need::optional);
    accessories.push_back(std::move(accessory));
  }
  return accessories;
}

// Applicator Sequence (300A,0107): ID, Type as a defined term (an electron cutout is not here but in
// the Block Sequence, Block Type APERTURE), Description.
std::vector<plan::Applicator> parse_applicators(const ItemReader& beam_item) {
  std::vector<plan::Applicator> applicators;
  for (const auto& item : beam_item.sequence(DCM_ApplicatorSequence, Need::optional)) {
    plan::Applicator applicator;
    applicator.id = item.text(DCM_ApplicatorID, Need::optional);
    applicator.type = item.term<plan::ApplicatorType>(DCM_ApplicatorType, Need::optional);
    applicator.description = item.text(DCM_ApplicatorDescription, Need::optional);
    applicators.push_back(std::move(applicator));
  }
  return applicators;
}

// Block Data (300A,0106): Block Number of Points (300A,0104) (x, y) pairs, at least a triangle.
std::vector<std::array<double, 2>> block_outline(const ItemReader& item) {
  std::vector<std::array<double, 2>> outline;
  const auto points = item.integer(DCM_BlockNumberOfPoints, Need::required);
  const auto values = item.numbers(DCM_BlockData, Need::required, 0);
  if (!points || !values) return outline;
  if (*points < 3) {
    item.fail(ErrorKind::bad_value, DCM_BlockNumberOfPoints,
              fmt::format("is {}; a block outline needs at least 3 points", *points));
    return outline;
  }
  if (values->size() % 2 != 0) {
    item.fail(ErrorKind::bad_value, DCM_BlockData,
              fmt::format("has {} values; it holds (x, y) pairs, so the count must be even", values->size()));
    return outline;
  }
  if (values->size() != 2 * static_cast<std::size_t>(*points)) {
    item.fail(ErrorKind::inconsistent, DCM_BlockData,
              fmt::format("has {} values but BlockNumberOfPoints (300A,0104) says {} points ({} values)",
                          values->size(), *points, 2 * *points));
    return outline;
  }
  for (std::size_t i = 0; i < values->size(); i += 2) {
    if (std::abs((*values)[i]) > max_coordinate_mm || std::abs((*values)[i + 1]) > max_coordinate_mm) {
      item.fail(ErrorKind::bad_value, DCM_BlockData,
                fmt::format("vertex ({}, {}) mm is implausible", (*values)[i], (*values)[i + 1]));
      return outline;
    }
    outline.push_back({(*values)[i], (*values)[i + 1]});
  }
  return outline;
}

// Block Sequence (300A,00F4): every block with its outline (PS3.3 C.8.8.14, Block Sequence).
std::vector<plan::Block> parse_blocks(const ItemReader& beam) {
  std::vector<plan::Block> blocks;
  for (const auto& item : counted_sequence(beam, DCM_NumberOfBlocks, DCM_BlockSequence)) {
    plan::Block block;
    block.number = item.integer(DCM_BlockNumber, Need::required);
    block.tray_id = item.text(DCM_BlockTrayID, Need::optional);
    block.name = item.text(DCM_BlockName, Need::optional);
    block.type = item.term<plan::BlockType>(DCM_BlockType, Need::required);
    if (!item.failed() && block.type != plan::BlockType::shielding &&
        block.type != plan::BlockType::aperture) {
      item.fail(ErrorKind::bad_value, DCM_BlockType,
                "\"" + printable(block.type.text) + "\" is not SHIELDING or APERTURE");
    }
    block.divergence = item.term<plan::BlockDivergence>(DCM_BlockDivergence, Need::optional);
    block.mounting_position = item.text(DCM_BlockMountingPosition, Need::optional);
    block.source_to_tray_mm =
        item.within(DCM_SourceToBlockTrayDistance, item.number(DCM_SourceToBlockTrayDistance, Need::optional),
                    1.0, max_coordinate_mm, "mm");
    block.material_id = item.text(DCM_MaterialID, Need::optional);
    block.thickness_mm = item.within(DCM_BlockThickness, item.number(DCM_BlockThickness, Need::optional), 0.0,
                                     max_coordinate_mm, "mm");
    block.transmission =
        item.within(DCM_BlockTransmission, item.number(DCM_BlockTransmission, Need::optional), 0.0, 1.0, "");
    block.outline_mm = block_outline(item);
    if (item.failed()) return blocks;
    blocks.push_back(std::move(block));
  }
  return blocks;
}

// Values that a later control point may omit when they do not change (PS3.3 C.8.8.14).
struct CarriedState {
  std::optional<double> energy_mv;
  std::optional<double> dose_rate_mu_per_min;
  std::optional<double> gantry_deg;
  plan::Coded<plan::RotationDirection> gantry_rotation;
  std::optional<double> collimator_deg;
  plan::Coded<plan::RotationDirection> collimator_rotation;
  std::optional<double> couch_deg;
  plan::Coded<plan::RotationDirection> couch_rotation;
  std::optional<plan::PointMm> isocenter_mm;
  std::map<std::string, std::vector<double>> devices;
  std::vector<plan::WedgePosition> wedge_positions;
};

void read_device_positions(const ItemReader& cp, const std::vector<plan::BeamLimitingDevice>& declared,
                           bool first, CarriedState& state) {
  const auto items =
      cp.sequence(DCM_BeamLimitingDevicePositionSequence, first ? Need::required : Need::optional);
  std::set<std::string> seen;
  for (const auto& item : items) {
    const std::string type = item.text(DCM_RTBeamLimitingDeviceType, Need::required);
    if (item.failed()) return;
    const auto device =
        std::find_if(declared.begin(), declared.end(),
                     [&type](const plan::BeamLimitingDevice& d) { return d.type.text == type; });
    if (device == declared.end()) {
      item.fail(ErrorKind::inconsistent, DCM_RTBeamLimitingDeviceType,
                "device " + printable(type) + " is not declared in BeamLimitingDeviceSequence (300A,00B6)");
      return;
    }
    if (!seen.insert(type).second) {
      item.fail(ErrorKind::inconsistent, DCM_RTBeamLimitingDeviceType,
                "device " + printable(type) + " appears twice");
      return;
    }
    const auto positions =
        item.numbers(DCM_LeafJawPositions, Need::required, 2 * static_cast<std::size_t>(device->pair_count));
    if (!positions) return;
    const auto pairs = static_cast<std::size_t>(device->pair_count);
    for (std::size_t i = 0; i < positions->size(); ++i) {
      if (std::abs((*positions)[i]) > max_coordinate_mm) {
        item.fail(ErrorKind::bad_value, DCM_LeafJawPositions,
                  fmt::format("position {} mm is implausible", (*positions)[i]));
        return;
      }
    }
    for (std::size_t i = 0; i < pairs; ++i) {
      if ((*positions)[i] > (*positions)[pairs + i]) {
        item.fail(ErrorKind::bad_value, DCM_LeafJawPositions,
                  fmt::format("{} pair {}: bank A at {} mm is beyond bank B at {} mm", type, i + 1,
                              (*positions)[i], (*positions)[pairs + i]));
        return;
      }
    }
    state.devices[type] = *positions;
  }
  if (first) {
    for (const auto& device : declared) {
      if (!state.devices.contains(device.type.text)) {
        cp.fail(ErrorKind::missing_attribute, DCM_BeamLimitingDevicePositionSequence,
                "no positions for device " + printable(device.type.text) +
                    " declared in BeamLimitingDeviceSequence");
        return;
      }
    }
  }
}

plan::ControlPoint parse_control_point(const ItemReader& cp, std::size_t position, const plan::Beam& beam,
                                       CarriedState& state) {
  const bool first = position == 0;
  const Need first_only = first ? Need::required : Need::optional;
  plan::ControlPoint point_out;
  const auto index = cp.integer(DCM_ControlPointIndex, Need::required);
  if (index && *index != static_cast<int>(position)) {
    cp.fail(ErrorKind::inconsistent, DCM_ControlPointIndex,
            fmt::format("is {} but the item is number {} of the sequence (expected index {})", *index,
                        position + 1, position));
  }
  point_out.index = index.value_or(0);

  auto carry = [](auto& slot, auto value) {
    if (value) slot = value;
  };
  auto carry_term = [](auto& slot, auto value) {
    if (!value.absent()) slot = std::move(value);
  };
  carry(state.energy_mv, cp.within(DCM_NominalBeamEnergy, cp.number(DCM_NominalBeamEnergy, Need::optional),
                                   0.001, 1000.0, "MV"));
  carry(state.dose_rate_mu_per_min,
        cp.within(DCM_DoseRateSet, cp.number(DCM_DoseRateSet, Need::optional), 0.0, 100000.0, "MU/min"));
  carry(state.gantry_deg, angle(cp, DCM_GantryAngle, first_only));
  carry_term(state.gantry_rotation,
             cp.term<plan::RotationDirection>(DCM_GantryRotationDirection, Need::optional));
  carry(state.collimator_deg, angle(cp, DCM_BeamLimitingDeviceAngle, first_only));
  carry_term(state.collimator_rotation,
             cp.term<plan::RotationDirection>(DCM_BeamLimitingDeviceRotationDirection, Need::optional));
  carry(state.couch_deg, angle(cp, DCM_PatientSupportAngle, first_only));
  carry_term(state.couch_rotation,
             cp.term<plan::RotationDirection>(DCM_PatientSupportRotationDirection, Need::optional));
  const auto iso = point(cp, DCM_IsocenterPosition, Need::optional);
  if (iso) {
    for (const double c : *iso) {
      if (std::abs(c) > max_coordinate_mm)
        cp.fail(ErrorKind::bad_value, DCM_IsocenterPosition,
                fmt::format("coordinate {} mm is implausible", c));
    }
  }
  carry(state.isocenter_mm, iso);
  read_device_positions(cp, beam.beam_limiting_devices, first, state);

  const auto wedge_items = cp.sequence(DCM_WedgePositionSequence, Need::optional);
  if (!wedge_items.empty()) {
    std::vector<plan::WedgePosition> positions;
    for (const auto& item : wedge_items) {
      plan::WedgePosition wedge_position;
      wedge_position.wedge_number = item.integer(DCM_ReferencedWedgeNumber, Need::required).value_or(0);
      wedge_position.position = item.term<plan::WedgePositionState>(DCM_WedgePosition, Need::required);
      if (!item.failed() && std::none_of(beam.wedges.begin(), beam.wedges.end(), [&](const plan::Wedge& w) {
            return w.number == wedge_position.wedge_number;
          })) {
        item.fail(ErrorKind::inconsistent, DCM_ReferencedWedgeNumber,
                  fmt::format("wedge {} is not in WedgeSequence (300A,00D1)", wedge_position.wedge_number));
      }
      positions.push_back(std::move(wedge_position));
    }
    state.wedge_positions = std::move(positions);
  }

  point_out.nominal_energy_mv = state.energy_mv;
  point_out.dose_rate_mu_per_min = state.dose_rate_mu_per_min;
  point_out.gantry_deg = state.gantry_deg;
  point_out.gantry_rotation = state.gantry_rotation;
  point_out.collimator_deg = state.collimator_deg;
  point_out.collimator_rotation = state.collimator_rotation;
  point_out.couch_deg = state.couch_deg;
  point_out.couch_rotation = state.couch_rotation;
  point_out.isocenter_mm = state.isocenter_mm;
  // The SSD belongs to this control point's geometry; it is not carried forward.
  point_out.ssd_mm =
      cp.within(DCM_SourceToSurfaceDistance, cp.number(DCM_SourceToSurfaceDistance, Need::optional), 0.0,
                max_coordinate_mm, "mm");
  for (const auto& device : beam.beam_limiting_devices) {
    const auto found = state.devices.find(device.type.text);
    if (found != state.devices.end()) point_out.devices.push_back({device.type, found->second});
  }
  point_out.cumulative_meterset_weight = cp.within(
      DCM_CumulativeMetersetWeight, cp.number(DCM_CumulativeMetersetWeight, Need::optional), 0.0, 1.0e9, "");
  for (const auto& item : cp.sequence(DCM_ReferencedDoseReferenceSequence, Need::optional)) {
    plan::DoseReferenceCoefficient coefficient;
    coefficient.dose_reference_number =
        item.integer(DCM_ReferencedDoseReferenceNumber, Need::required).value_or(0);
    coefficient.cumulative_coefficient = item.number(DCM_CumulativeDoseReferenceCoefficient, Need::optional);
    point_out.dose_reference_coefficients.push_back(coefficient);
  }
  point_out.wedge_positions = state.wedge_positions;
  return point_out;
}

void check_meterset_weights(const ItemReader& beam_item, const plan::Beam& beam) {
  std::optional<double> previous;
  bool any = false;
  for (const auto& cp : beam.control_points) {
    if (!cp.cumulative_meterset_weight) continue;
    any = true;
    if (previous && *cp.cumulative_meterset_weight < *previous) {
      beam_item.fail(ErrorKind::inconsistent, DCM_CumulativeMetersetWeight,
                     fmt::format("decreases from {} to {} at control point {}", *previous,
                                 *cp.cumulative_meterset_weight, cp.index));
      return;
    }
    previous = cp.cumulative_meterset_weight;
  }
  if (!any) return;
  if (!beam.final_cumulative_meterset_weight) {
    beam_item.fail(ErrorKind::missing_attribute, DCM_FinalCumulativeMetersetWeight,
                   "missing although the control points carry CumulativeMetersetWeight (300A,0134)");
    return;
  }
  const auto& last = beam.control_points.back().cumulative_meterset_weight;
  const double final_weight = *beam.final_cumulative_meterset_weight;
  if (!last || std::abs(*last - final_weight) > 1e-6 * std::max(1.0, std::abs(final_weight))) {
    beam_item.fail(
        ErrorKind::inconsistent, DCM_FinalCumulativeMetersetWeight,
        fmt::format("is {} but the last control point's CumulativeMetersetWeight (300A,0134) is {}",
                    final_weight, last ? fmt::format("{}", *last) : std::string{"empty"}));
  }
}

plan::Beam parse_beam(const ItemReader& raw_item) {
  plan::Beam beam;
  beam.number = raw_item.integer(DCM_BeamNumber, Need::required).value_or(0);
  const ItemReader item = raw_item.described(fmt::format(" (beam {})", beam.number));
  beam.name = item.text(DCM_BeamName, Need::optional);
  beam.description = item.text(DCM_BeamDescription, Need::optional);
  beam.machine_name = item.text(DCM_TreatmentMachineName, Need::optional);
  beam.radiation_type = item.term<plan::RadiationType>(DCM_RadiationType, Need::optional);
  beam.delivery_type = item.term<plan::DeliveryType>(DCM_TreatmentDeliveryType, Need::optional);
  beam.beam_type = item.term<plan::BeamType>(DCM_BeamType, Need::required);
  beam.primary_dosimeter_unit = item.term<plan::DosimeterUnit>(DCM_PrimaryDosimeterUnit, Need::optional);
  beam.sad_mm = item.within(DCM_SourceAxisDistance, item.number(DCM_SourceAxisDistance, Need::optional), 1.0,
                            max_coordinate_mm, "mm");
  beam.beam_limiting_devices = parse_devices(item);
  beam.wedges = parse_wedges(item);
  beam.compensators =
      parse_accessories(counted_sequence(item, DCM_NumberOfCompensators, DCM_CompensatorSequence),
                        DCM_CompensatorNumber, DCM_CompensatorID, DCM_CompensatorType, Need::optional);
  beam.boli = parse_accessories(counted_sequence(item, DCM_NumberOfBoli, DCM_ReferencedBolusSequence),
                                DCM_ReferencedROINumber, DCM_BolusID, DCM_BolusDescription, Need::required);
  beam.blocks = parse_blocks(item);
  beam.applicators = parse_applicators(item);
  beam.general_accessories = parse_accessories(item.sequence(DCM_GeneralAccessorySequence, Need::optional),
                                               DCM_GeneralAccessoryNumber, DCM_GeneralAccessoryID,
                                               DCM_GeneralAccessoryType, Need::required);
  beam.final_cumulative_meterset_weight =
      item.within(DCM_FinalCumulativeMetersetWeight,
                  item.number(DCM_FinalCumulativeMetersetWeight, Need::optional), 0.0, 1.0e9, "");
  beam.referenced_patient_setup_number = item.integer(DCM_ReferencedPatientSetupNumber, Need::optional);
  for (const auto& ref : item.sequence(DCM_ReferencedDoseReferenceSequence, Need::optional)) {
    plan::BeamDoseReference dose_ref;
    dose_ref.dose_reference_number =
        ref.integer(DCM_ReferencedDoseReferenceNumber, Need::required).value_or(0);
    const auto verification = ref.sequence(DCM_BeamDoseVerificationControlPointSequence, Need::optional);
    if (!verification.empty()) dose_ref.distances = parse_verification_distances(verification.front());
    beam.dose_references.push_back(dose_ref);
  }
  if (item.failed()) return beam;

  const auto declared_count = item.integer(DCM_NumberOfControlPoints, Need::required);
  const auto cps = item.sequence(DCM_ControlPointSequence, Need::required);
  if (item.failed()) return beam;
  if (*declared_count != static_cast<int>(cps.size())) {
    item.fail(ErrorKind::inconsistent, DCM_NumberOfControlPoints,
              fmt::format("says {} but ControlPointSequence (300A,0111) has {} items", *declared_count,
                          cps.size()));
    return beam;
  }
  if (cps.size() < 2) {
    item.fail(ErrorKind::bad_value, DCM_NumberOfControlPoints,
              fmt::format("is {}; a beam has at least 2 control points", cps.size()));
    return beam;
  }
  CarriedState state;
  for (std::size_t i = 0; i < cps.size(); ++i) {
    beam.control_points.push_back(parse_control_point(cps[i], i, beam, state));
    if (item.failed()) return beam;
  }
  check_meterset_weights(item, beam);
  return beam;
}

}  // namespace

plan::DosePointDistances parse_verification_distances(const ItemReader& item) {
  plan::DosePointDistances distances;
  distances.depth_mm =
      item.within(DCM_BeamDosePointDepth, item.number(DCM_BeamDosePointDepth, Need::optional), 0.0,
                  max_coordinate_mm, "mm");
  distances.equivalent_depth_mm = item.within(DCM_BeamDosePointEquivalentDepth,
                                              item.number(DCM_BeamDosePointEquivalentDepth, Need::optional),
                                              0.0, max_coordinate_mm, "mm");
  distances.ssd_mm = item.within(DCM_BeamDosePointSSD, item.number(DCM_BeamDosePointSSD, Need::optional), 0.0,
                                 max_coordinate_mm, "mm");
  distances.source_to_external_contour_mm =
      item.within(DCM_BeamDosePointSourceToExternalContourDistance,
                  item.number(DCM_BeamDosePointSourceToExternalContourDistance, Need::optional), 0.0,
                  max_coordinate_mm, "mm");
  return distances;
}

std::vector<plan::Beam> parse_beams(const ItemReader& dataset) {
  std::vector<plan::Beam> beams;
  for (const auto& item : dataset.sequence(DCM_BeamSequence, Need::required)) {
    beams.push_back(parse_beam(item));
    if (dataset.failed()) return beams;
    const int number = beams.back().number;
    if (std::count_if(beams.begin(), beams.end(),
                      [number](const plan::Beam& b) { return b.number == number; }) > 1) {
      item.fail(ErrorKind::inconsistent, DCM_BeamNumber,
                fmt::format("beam number {} is used by more than one beam", number));
      return beams;
    }
  }
  return beams;
}

}  // namespace countersign::dicom::detail
