#pragma once

// Writes a planned demo PlanSpec as a DICOM RT Plan dataset with DCMTK (fixed UIDs and dates so
// that the output is reproducible).

#include "plan_spec.hpp"

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcfilefo.h>

#include <memory>

namespace make_demo_plans {

// Root of the invented UIDs: 2.25 followed by a fixed decimal number (PS3.5 B.2 form).
inline constexpr const char* uid_root = "2.25.301642988147209845366118572013";

[[nodiscard]] std::unique_ptr<DcmFileFormat> build_plan(const PlanSpec& plan);

}  // namespace make_demo_plans
