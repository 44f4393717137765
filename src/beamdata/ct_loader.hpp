#pragma once

// The CT-number-to-density tables of a library folder (<library>/ct/*.csv).

#include "inspection.hpp"
#include "library_files.hpp"

#include <filesystem>

namespace countersign::beamdata::detail {

// Reads every ct/*.csv of `root` in file-name byte order into inspection.ct, adding each to the
// fingerprint as "ct/<file name>". Returns false when a table could not be used.
bool read_ct_tables(const std::filesystem::path& root, Inspection& inspection, Fingerprint& fingerprint);

}  // namespace countersign::beamdata::detail
