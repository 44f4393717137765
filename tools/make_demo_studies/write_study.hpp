#pragma once

// Writes a phantom as a CT series (CT Image Storage, one slice per file) and an RT Structure Set
// with DCMTK: fixed UIDs (the make_demo_plans scheme, so the plans' references match) and dates, so
// the output is byte-for-byte reproducible.

#include "phantom.hpp"

#include <filesystem>
#include <string>
#include <vector>

namespace make_demo_studies {

// UIDs of a phantom's objects: <root>.<suffix>.<kind>.<number>, kinds as in make_demo_plans
// (2 study, 4 frame of reference, 6 structure set) and 7 CT series, 8 CT image, 9 structure-set series.
[[nodiscard]] std::string study_uid(const PhantomSpec& phantom, int kind, int number = 0);

// CT<NNN>.dcm, NNN = 001.. in increasing z; returns the file names.
std::vector<std::string> write_ct_series(const PhantomSpec& phantom, const std::filesystem::path& dir);

// RS.dcm: every region as an ROI with one closed planar contour per CT slice.
void write_structure_set(const PhantomSpec& phantom, const std::filesystem::path& dir);

}  // namespace make_demo_studies
