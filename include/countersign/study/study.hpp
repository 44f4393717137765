#pragma once

// A patient study as plain values: the CT volume the plan was made on, the structure set that
// links them, and the body outline. Made by dicom::load_study*; used by the patient module.

#include <countersign/study/body.hpp>
#include <countersign/study/volume.hpp>

#include <string>
#include <vector>

namespace countersign::study {

// One ROI of the structure set (contours are read for the body only).
struct RoiSummary {
  int number = 0;                // ROI Number (3006,0022)
  std::string name;              // ROI Name (3006,0026)
  std::string interpreted_type;  // RT ROI Interpreted Type (3006,00A4), e.g. "EXTERNAL"; empty if absent
  std::string frame_of_reference_uid;  // Referenced Frame of Reference UID (3006,0024)
};

struct StructureSet {
  std::string file;                    // where it was read from
  std::string sop_instance_uid;        // (0008,0018)
  std::string label;                   // Structure Set Label (3006,0002)
  std::string frame_of_reference_uid;  // Referenced Frame of Reference Sequence (3006,0010) item used
  std::string ct_series_uid;           // ... > RT Referenced Study > RT Referenced Series > (0020,000E)
  std::vector<std::string> contour_image_uids;  // ... > Contour Image Sequence (3006,0016), may be empty
  std::vector<RoiSummary> rois;
};

struct Study {
  CtVolume ct;
  StructureSet structure_set;
  Body body;
  std::string frame_of_reference_uid;  // shared by plan, structure set and CT (checked)
  // The CT's Station Name (0008,1010): chooses the library's ct/<STATION>.csv, else ct/default.csv.
  std::string station_name;
  std::vector<std::string> notes;  // stated methods and anything unusual found while loading
};

}  // namespace countersign::study
