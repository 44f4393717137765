#pragma once

// DICOM code strings with defined terms (PS3.3 RT Beams, RT Patient Setup, RT Fraction Scheme and
// RT Prescription modules), parsed once by the reader. Each is kept as a Coded<Term>: the parsed
// value, which the rules compare, and the plan's own text, which messages and outputs quote. A term
// DICOM defines but this program does not list, and any other text, is `other` with its text kept;
// an absent or empty attribute is `absent` with empty text.

#include <string>
#include <string_view>
#include <utility>

namespace countersign::plan {

// Radiation Type (300A,00C6).
enum class RadiationType { absent, photon, electron, neutron, proton, ion, other };
// Treatment Delivery Type (300A,00CE).
enum class DeliveryType { absent, treatment, open_portfilm, trmt_portfilm, continuation, setup, other };
// Beam Type (300A,00C4).
enum class BeamType { absent, static_beam, dynamic, other };
// Primary Dosimeter Unit (300A,00B3).
enum class DosimeterUnit { absent, mu, minute, np, other };
// Setup Technique (300A,01B0).
enum class SetupTechnique { absent, isocentric, fixed_ssd, tbi, breast_bridge, skin_apposition, other };
// Patient Position (0018,5100).
enum class PatientPosition {
  absent,
  hfp,
  hfs,
  hfdr,
  hfdl,
  ffdr,
  ffdl,
  ffp,
  ffs,
  lfp,
  lfs,
  rfp,
  rfs,
  afdr,
  afdl,
  pfdr,
  pfdl,
  other
};
// RT Beam Limiting Device Type (300A,00B8).
enum class DeviceType { absent, x, y, asymx, asymy, mlcx, mlcy, other };
// Wedge Type (300A,00D3).
enum class WedgeType { absent, standard, dynamic, motorized, other };
// Gantry, Beam Limiting Device and Patient Support Rotation Direction (300A,011F/0121/0123).
enum class RotationDirection { absent, cw, cc, none, other };
// Beam Dose Meaning (300A,008B).
enum class BeamDoseMeaning { absent, beam_level, fraction_level, other };
// Dose Reference Structure Type (300A,0014).
enum class DoseReferenceStructure { absent, point, volume, coordinates, site, other };
// Wedge Position (300A,0118).
enum class WedgePositionState { absent, in, out, other };
// Block Type (300A,00F8): SHIELDING blocks inside the outline, APERTURE blocks outside it.
enum class BlockType { absent, shielding, aperture, other };
// Block Divergence (300A,00FA): whether the block's edges follow the diverging rays.
enum class BlockDivergence { absent, present, absent_divergence, other };
// Applicator Type (300A,0109).
enum class ApplicatorType {
  absent,
  electron_square,
  electron_rect,
  electron_circ,
  electron_short,
  electron_open,
  photon_square,
  photon_rect,
  photon_circ,
  intraoperative,
  stereotactic,
  other
};

// The DICOM spelling of each listed term; specialised below for every enum above.
template <class Term>
struct DefinedTerms;

#define COUNTERSIGN_DEFINED_TERMS(Term, ...)                                        \
  template <>                                                                       \
  struct DefinedTerms<Term> {                                                       \
    static constexpr std::pair<Term, std::string_view> spellings[] = {__VA_ARGS__}; \
  }

COUNTERSIGN_DEFINED_TERMS(RadiationType, {RadiationType::photon, "PHOTON"},
                          {RadiationType::electron, "ELECTRON"}, {RadiationType::neutron, "NEUTRON"},
                          {RadiationType::proton, "PROTON"}, {RadiationType::ion, "ION"});
COUNTERSIGN_DEFINED_TERMS(DeliveryType, {DeliveryType::treatment, "TREATMENT"},
                          {DeliveryType::open_portfilm, "OPEN_PORTFILM"},
                          {DeliveryType::trmt_portfilm, "TRMT_PORTFILM"},
                          {DeliveryType::continuation, "CONTINUATION"}, {DeliveryType::setup, "SETUP"});
COUNTERSIGN_DEFINED_TERMS(BeamType, {BeamType::static_beam, "STATIC"}, {BeamType::dynamic, "DYNAMIC"});
COUNTERSIGN_DEFINED_TERMS(DosimeterUnit, {DosimeterUnit::mu, "MU"}, {DosimeterUnit::minute, "MINUTE"},
                          {DosimeterUnit::np, "NP"});
COUNTERSIGN_DEFINED_TERMS(SetupTechnique, {SetupTechnique::isocentric, "ISOCENTRIC"},
                          {SetupTechnique::fixed_ssd, "FIXED_SSD"}, {SetupTechnique::tbi, "TBI"},
                          {SetupTechnique::breast_bridge, "BREAST_BRIDGE"},
                          {SetupTechnique::skin_apposition, "SKIN_APPOSITION"});
COUNTERSIGN_DEFINED_TERMS(PatientPosition, {PatientPosition::hfp, "HFP"}, {PatientPosition::hfs, "HFS"},
                          {PatientPosition::hfdr, "HFDR"}, {PatientPosition::hfdl, "HFDL"},
                          {PatientPosition::ffdr, "FFDR"}, {PatientPosition::ffdl, "FFDL"},
                          {PatientPosition::ffp, "FFP"}, {PatientPosition::ffs, "FFS"},
                          {PatientPosition::lfp, "LFP"}, {PatientPosition::lfs, "LFS"},
                          {PatientPosition::rfp, "RFP"}, {PatientPosition::rfs, "RFS"},
                          {PatientPosition::afdr, "AFDR"}, {PatientPosition::afdl, "AFDL"},
                          {PatientPosition::pfdr, "PFDR"}, {PatientPosition::pfdl, "PFDL"});
COUNTERSIGN_DEFINED_TERMS(DeviceType, {DeviceType::x, "X"}, {DeviceType::y, "Y"},
                          {DeviceType::asymx, "ASYMX"}, {DeviceType::asymy, "ASYMY"},
                          {DeviceType::mlcx, "MLCX"}, {DeviceType::mlcy, "MLCY"});
COUNTERSIGN_DEFINED_TERMS(WedgeType, {WedgeType::standard, "STANDARD"}, {WedgeType::dynamic, "DYNAMIC"},
                          {WedgeType::motorized, "MOTORIZED"});
COUNTERSIGN_DEFINED_TERMS(RotationDirection, {RotationDirection::cw, "CW"}, {RotationDirection::cc, "CC"},
                          {RotationDirection::none, "NONE"});
COUNTERSIGN_DEFINED_TERMS(BeamDoseMeaning, {BeamDoseMeaning::beam_level, "BEAM_LEVEL"},
                          {BeamDoseMeaning::fraction_level, "FRACTION_LEVEL"});
COUNTERSIGN_DEFINED_TERMS(DoseReferenceStructure, {DoseReferenceStructure::point, "POINT"},
                          {DoseReferenceStructure::volume, "VOLUME"},
                          {DoseReferenceStructure::coordinates, "COORDINATES"},
                          {DoseReferenceStructure::site, "SITE"});
COUNTERSIGN_DEFINED_TERMS(WedgePositionState, {WedgePositionState::in, "IN"},
                          {WedgePositionState::out, "OUT"});
COUNTERSIGN_DEFINED_TERMS(BlockType, {BlockType::shielding, "SHIELDING"}, {BlockType::aperture, "APERTURE"});
COUNTERSIGN_DEFINED_TERMS(BlockDivergence, {BlockDivergence::present, "PRESENT"},
                          {BlockDivergence::absent_divergence, "ABSENT"});
COUNTERSIGN_DEFINED_TERMS(
    ApplicatorType, {ApplicatorType::electron_square, "ELECTRON_SQUARE"},
    {ApplicatorType::electron_rect, "ELECTRON_RECT"}, {ApplicatorType::electron_circ, "ELECTRON_CIRC"},
    {ApplicatorType::electron_short, "ELECTRON_SHORT"}, {ApplicatorType::electron_open, "ELECTRON_OPEN"},
    {ApplicatorType::photon_square, "PHOTON_SQUARE"}, {ApplicatorType::photon_rect, "PHOTON_RECT"},
    {ApplicatorType::photon_circ, "PHOTON_CIRC"}, {ApplicatorType::intraoperative, "INTRAOPERATIVE"},
    {ApplicatorType::stereotactic, "STEREOTACTIC"});

#undef COUNTERSIGN_DEFINED_TERMS

// A code string as read: the term for the rules, the text for people.
template <class Term>
struct Coded {
  Term value = Term::absent;
  std::string text;  // as the plan spells it (surrounding spaces removed); empty when absent

  [[nodiscard]] bool absent() const { return value == Term::absent; }
  friend bool operator==(const Coded&, const Coded&) = default;
  friend bool operator==(const Coded& coded, Term term) { return coded.value == term; }
};

// The DICOM spelling of a listed term; empty for absent and other.
template <class Term>
[[nodiscard]] constexpr std::string_view spelling(Term term) {
  for (const auto& [listed, text] : DefinedTerms<Term>::spellings) {
    if (listed == term) return text;
  }
  return {};
}

// Parses a code string: absent when empty, the listed term it spells, otherwise `other`.
template <class Term>
[[nodiscard]] Coded<Term> parse_term(std::string text) {
  Coded<Term> coded{Term::absent, std::move(text)};
  if (coded.text.empty()) return coded;
  coded.value = Term::other;
  for (const auto& [listed, spelled] : DefinedTerms<Term>::spellings) {
    if (spelled == coded.text) coded.value = listed;
  }
  return coded;
}

// A listed term with its DICOM spelling as text (for plans built in code: tests, generators).
template <class Term>
[[nodiscard]] Coded<Term> term(Term value) {
  return Coded<Term>{value, std::string{spelling(value)}};
}

}  // namespace countersign::plan
