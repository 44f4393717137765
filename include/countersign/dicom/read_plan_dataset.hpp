#pragma once

// For the modules allowed to see DCMTK (dicom, service): read a plan from a dataset already in
// memory, e.g. one a C-STORE provider has just received. Other modules use read_plan.hpp.

#include <countersign/plan/plan.hpp>
#include <countersign/util/error.hpp>

#include <string>

class DcmItem;  // DCMTK dataset or item; only the caller's translation unit needs its definition

namespace countersign::dicom {

// Reads the RT Plan in `dataset` (not modified). display_name stands for the file name in messages.
[[nodiscard]] Expected<plan::Plan> read_plan_dataset(DcmItem& dataset, std::string display_name);

}  // namespace countersign::dicom
