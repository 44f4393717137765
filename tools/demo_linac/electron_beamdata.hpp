#pragma once

// The electron beams of the demo library (electron_model.hpp tabulated into beamdata/FERN-LINAC-1/<E>E/),
// for make_demo_beamdata. INVENTED demo data, not for clinical use.

#include <filesystem>
#include <functional>
#include <ostream>

namespace demo_linac {

// Writes one file: the path and what to write into it; false when it could not be written.
using WriteFile =
    std::function<bool(const std::filesystem::path&, const std::function<void(std::ostream&)>&)>;

// Writes every electron beam's PDD and cutout-factor tables under machine_dir through `write`.
[[nodiscard]] bool write_electron_tables(const std::filesystem::path& machine_dir, const WriteFile& write);

// The manifest's [[bolus]] entries and electron [[beam]] sections.
void write_electron_manifest(std::ostream& out);

}  // namespace demo_linac
