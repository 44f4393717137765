#pragma once

// The bundled demo inputs the benchmarks run on, read once per process (as the watcher does):
// the demo beam-data library and the demo plans as bytes and as parsed plans.

#include <countersign/beamdata/library.hpp>
#include <countersign/plan/plan.hpp>

#include <cstddef>
#include <filesystem>
#include <string>
#include <vector>

namespace countersign::bench {

[[nodiscard]] std::filesystem::path source_dir();
[[nodiscard]] std::filesystem::path demo_plan_path(const std::string& file_name);

// The demo library under beamdata/; aborts when it does not load (a broken benchmark, not a result).
[[nodiscard]] const beamdata::Library& demo_library();

// File content and parsed plan of testdata/plans/<file_name>; aborts on failure.
[[nodiscard]] std::vector<std::byte> demo_plan_bytes(const std::string& file_name);
[[nodiscard]] plan::Plan demo_plan(const std::string& file_name);

}  // namespace countersign::bench
