# Writes an INVENTED electron RT Plan with pydicom (an independent DICOM writer) for the reader test
# tests/dicom/electron_plan_test.cpp: one 9 MeV beam with applicator A10 (ELECTRON_SQUARE), a 6 x 8 cm
# cutout (Block Type APERTURE), a bolus and SSD 105 cm. Usage: pydicom_electron_plan.py OUT.dcm
import sys

from pydicom.dataset import Dataset, FileDataset, FileMetaDataset
from pydicom.sequence import Sequence
from pydicom.uid import ExplicitVRLittleEndian

RT_PLAN = "1.2.840.10008.5.1.4.1.1.481.5"


def item(**values):
    ds = Dataset()
    for key, value in values.items():
        setattr(ds, key, value)
    return ds


meta = FileMetaDataset()
meta.MediaStorageSOPClassUID = RT_PLAN
meta.MediaStorageSOPInstanceUID = "2.25.19190001"
meta.TransferSyntaxUID = ExplicitVRLittleEndian
ds = FileDataset(sys.argv[1], {}, file_meta=meta, preamble=b"\0" * 128)
ds.SOPClassUID = RT_PLAN
ds.SOPInstanceUID = "2.25.19190001"
ds.Modality = "RTPLAN"
ds.PatientName = "Invented^Electron"
ds.PatientID = "FERN-E-READER"
ds.RTPlanLabel = "E READER"
ds.RTPlanGeometry = "PATIENT"
ds.FrameOfReferenceUID = "2.25.19190002"
ds.PatientSetupSequence = Sequence([item(PatientSetupNumber=1, PatientPosition="HFS",
                                         SetupTechnique="FIXED_SSD")])
ds.DoseReferenceSequence = Sequence([item(DoseReferenceNumber=1, DoseReferenceUID="2.25.19190003",
                                          DoseReferenceStructureType="COORDINATES",
                                          DoseReferenceDescription="E POINT", DoseReferenceType="TARGET",
                                          DoseReferencePointCoordinates=[0.0, 0.0, 0.0])])
ds.FractionGroupSequence = Sequence([item(
    FractionGroupNumber=1, NumberOfFractionsPlanned=10, NumberOfBeams=1, NumberOfBrachyApplicationSetups=0,
    ReferencedBeamSequence=Sequence([item(ReferencedBeamNumber=1, BeamMeterset=211.5, BeamDose=2.0)]))])
control_points = []
for index, weight in enumerate([0.0, 1.0]):
    cp = item(ControlPointIndex=index, CumulativeMetersetWeight=weight)
    if index == 0:
        cp.NominalBeamEnergy = 9.0
        cp.GantryAngle = 0.0
        cp.GantryRotationDirection = "NONE"
        cp.BeamLimitingDeviceAngle = 0.0
        cp.BeamLimitingDeviceRotationDirection = "NONE"
        cp.PatientSupportAngle = 0.0
        cp.PatientSupportRotationDirection = "NONE"
        cp.IsocenterPosition = [0.0, -70.0, 0.0]
        cp.SourceToSurfaceDistance = 1050.0
        cp.BeamLimitingDevicePositionSequence = Sequence([
            item(RTBeamLimitingDeviceType="X", LeafJawPositions=[-100.0, 100.0]),
            item(RTBeamLimitingDeviceType="Y", LeafJawPositions=[-100.0, 100.0])])
    cp.ReferencedDoseReferenceSequence = Sequence([item(ReferencedDoseReferenceNumber=1,
                                                        CumulativeDoseReferenceCoefficient=weight)])
    control_points.append(cp)
beam = item(
    BeamNumber=1, BeamName="E CHEST", TreatmentMachineName="TEST-LINAC-E", PrimaryDosimeterUnit="MU",
    SourceAxisDistance=1000.0, BeamType="STATIC", RadiationType="ELECTRON", TreatmentDeliveryType="TREATMENT",
    NumberOfWedges=0, NumberOfCompensators=0, NumberOfBoli=1, NumberOfBlocks=1,
    FinalCumulativeMetersetWeight=1.0, NumberOfControlPoints=2, ReferencedPatientSetupNumber=1,
    BeamLimitingDeviceSequence=Sequence([item(RTBeamLimitingDeviceType="X", NumberOfLeafJawPairs=1),
                                         item(RTBeamLimitingDeviceType="Y", NumberOfLeafJawPairs=1)]),
    ApplicatorSequence=Sequence([item(ApplicatorID="A10", ApplicatorType="ELECTRON_SQUARE",
                                      ApplicatorDescription="INVENTED 10 CM CONE")]),
    ReferencedBolusSequence=Sequence([item(ReferencedROINumber=7, BolusID="BOLUS-5MM",
                                           BolusDescription="INVENTED SHEET")]),
    BlockSequence=Sequence([item(BlockTrayID="INSERT", SourceToBlockTrayDistance=950.0, BlockType="APERTURE",
                                 BlockDivergence="PRESENT", BlockNumber=1, BlockName="CUTOUT",
                                 MaterialID="INVENTED-ALLOY", BlockThickness=10.0, BlockNumberOfPoints=4,
                                 BlockData=[-30.0, -40.0, 30.0, -40.0, 30.0, 40.0, -30.0, 40.0])]),
    ControlPointSequence=Sequence(control_points))
ds.BeamSequence = Sequence([beam])
ds.is_little_endian = True
ds.is_implicit_VR = False
ds.save_as(sys.argv[1], write_like_original=False)
