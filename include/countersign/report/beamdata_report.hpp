#pragma once

// The commissioning review page of a beam-data library (`countersign beamdata report`): one
// self-contained HTML page (inline CSS and SVG, no scripts, no external requests) with the library's
// SHA-256, every validation finding, an SVG plot of every table, the PDD<->TMR consistency overlay
// of every photon beam with the differences beyond tolerance marked, a sign-off block and the caution.

#include <countersign/beamdata/validation.hpp>
#include <countersign/util/error.hpp>

#include <filesystem>
#include <string>

namespace countersign::report {

struct BeamdataReportOptions {
  std::string generated_at;  // printed in the header; empty: now, local time
};

// The page (UTF-8). Plots: one <svg class="table-plot" data-table="..."> per table, and
// <svg class="consistency-plot"> for the consistency overlay and its differences.
[[nodiscard]] std::string beamdata_report_html(const beamdata::ValidationReport& report,
                                               const std::filesystem::path& library_folder,
                                               const BeamdataReportOptions& options = {});

// Writes the page (temporary file, then rename); errors name the file.
[[nodiscard]] Expected<std::filesystem::path> write_beamdata_report(
    const beamdata::ValidationReport& report, const std::filesystem::path& library_folder,
    const std::filesystem::path& html_file, const BeamdataReportOptions& options = {});

}  // namespace countersign::report
