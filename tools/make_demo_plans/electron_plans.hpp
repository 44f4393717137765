#pragma once

// The INVENTED electron demo plans (electron_plans.cpp): written into `dir` beside the photon demo
// plans, their rows appended to dir/EXPECTED_BEAMS.tsv (which write_plans has written first).

#include <filesystem>

namespace make_demo_plans {

void write_electron_plans(const std::filesystem::path& dir);

}  // namespace make_demo_plans
