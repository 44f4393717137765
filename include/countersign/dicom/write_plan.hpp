#pragma once

// The plan model written back as an RT Plan file (DCMTK stays in this module). What the reader
// reads is written, so that reading the file gives the same plan (tests check the round trip, with
// pydicom as a second reader and dciodvfy as the judge). Used by `selftest` for its synthetic plans.
// A control point repeats every value in force (allowed by PS3.3 C.8.8.14.5; the reader carries
// forward either way). Beam dose-point distances are written in the layout the plan holds them in.

#include <countersign/plan/plan.hpp>
#include <countersign/util/error.hpp>

#include <filesystem>

namespace countersign::dicom {

// Writes `plan` to `path` (Explicit VR Little Endian, with a file meta header). The plan needs a
// SOP Instance UID, a patient ID and at least one beam; an absent value is left out, never made up.
[[nodiscard]] Expected<void> write_plan_file(const plan::Plan& plan, const std::filesystem::path& path);

// A new unique identifier (DCMTK's generator under its root), for plans made by the program.
[[nodiscard]] std::string new_uid();

}  // namespace countersign::dicom
