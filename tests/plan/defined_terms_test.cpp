// DICOM defined terms as the reader parses them. The spellings are those of DICOM PS3.3 (RT Beams,
// RT Patient Setup and RT Fraction Scheme modules, from memory of the standard's tables).

#include <countersign/plan/defined_terms.hpp>

#include <gtest/gtest.h>

namespace countersign::plan {
namespace {

TEST(DefinedTerms, ListedSpellingsParseToTheirTerm) {
  EXPECT_EQ(parse_term<RadiationType>("PHOTON"), RadiationType::photon);
  EXPECT_EQ(parse_term<DeliveryType>("CONTINUATION"), DeliveryType::continuation);
  EXPECT_EQ(parse_term<BeamType>("STATIC"), BeamType::static_beam);
  EXPECT_EQ(parse_term<DosimeterUnit>("MINUTE"), DosimeterUnit::minute);
  EXPECT_EQ(parse_term<SetupTechnique>("FIXED_SSD"), SetupTechnique::fixed_ssd);
  EXPECT_EQ(parse_term<PatientPosition>("HFDL"), PatientPosition::hfdl);
  EXPECT_EQ(parse_term<DeviceType>("MLCY"), DeviceType::mlcy);
  EXPECT_EQ(parse_term<WedgeType>("MOTORIZED"), WedgeType::motorized);
  EXPECT_EQ(parse_term<RotationDirection>("CC"), RotationDirection::cc);
  EXPECT_EQ(parse_term<BeamDoseMeaning>("FRACTION_LEVEL"), BeamDoseMeaning::fraction_level);
  EXPECT_EQ(parse_term<DoseReferenceStructure>("COORDINATES"), DoseReferenceStructure::coordinates);
  EXPECT_EQ(parse_term<WedgePositionState>("OUT"), WedgePositionState::out);
}

// Messages quote the plan's own text, so an unknown spelling keeps it.
TEST(DefinedTerms, AnyOtherTextIsOtherAndKept) {
  const Coded<RadiationType> coded = parse_term<RadiationType>("photon");  // code strings are upper case
  EXPECT_EQ(coded, RadiationType::other);
  EXPECT_EQ(coded.text, "photon");
  EXPECT_EQ(parse_term<DeviceType>("JAWX").text, "JAWX");
}

TEST(DefinedTerms, EmptyIsAbsent) {
  const Coded<SetupTechnique> coded = parse_term<SetupTechnique>("");
  EXPECT_TRUE(coded.absent());
  EXPECT_TRUE(coded.text.empty());
}

TEST(DefinedTerms, TermCarriesItsSpelling) {
  EXPECT_EQ(term(DeviceType::asymx).text, "ASYMX");
  EXPECT_EQ(term(PatientPosition::ffp), parse_term<PatientPosition>("FFP"));
  EXPECT_TRUE(spelling(RadiationType::other).empty());
  EXPECT_TRUE(spelling(RadiationType::absent).empty());
}

// Every listed term reads back from its own spelling.
template <class Term>
void expect_round_trip() {
  for (const auto& [listed, text] : DefinedTerms<Term>::spellings) {
    EXPECT_EQ(parse_term<Term>(std::string{text}), listed) << text;
    EXPECT_EQ(spelling(listed), text);
  }
}

TEST(DefinedTerms, EverySpellingRoundTrips) {
  expect_round_trip<RadiationType>();
  expect_round_trip<DeliveryType>();
  expect_round_trip<BeamType>();
  expect_round_trip<DosimeterUnit>();
  expect_round_trip<SetupTechnique>();
  expect_round_trip<PatientPosition>();
  expect_round_trip<DeviceType>();
  expect_round_trip<WedgeType>();
  expect_round_trip<RotationDirection>();
  expect_round_trip<BeamDoseMeaning>();
  expect_round_trip<DoseReferenceStructure>();
  expect_round_trip<WedgePositionState>();
}

}  // namespace
}  // namespace countersign::plan
