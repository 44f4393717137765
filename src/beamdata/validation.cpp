#include <countersign/beamdata/validation.hpp>

#include "inspection.hpp"

#include <algorithm>

namespace countersign::beamdata {

std::size_t ValidationReport::error_count() const {
  return static_cast<std::size_t>(std::count_if(
      problems.begin(), problems.end(), [](const Problem& p) { return p.severity == Severity::error; }));
}

std::size_t ValidationReport::warning_count() const { return problems.size() - error_count(); }

ValidationReport validate_library(const std::filesystem::path& folder) {
  detail::Inspection inspection = detail::inspect_library(folder);
  ValidationReport report;
  report.sha256_hex = inspection.sha256_hex;
  report.machine_count = inspection.machine_count;
  report.beam_count = inspection.beam_count;
  // Physics rules run on everything that could be read, even when other parts could not.
  detail::PhysicsFindings physics = detail::check_physics(inspection);
  report.problems = std::move(inspection.problems);
  report.problems.insert(report.problems.end(), physics.problems.begin(), physics.problems.end());
  report.consistency_nodes_compared = physics.consistency_nodes_compared;
  report.consistency_nodes_skipped = physics.consistency_nodes_skipped;
  report.readable = inspection.readable_library();
  return report;
}

}  // namespace countersign::beamdata
