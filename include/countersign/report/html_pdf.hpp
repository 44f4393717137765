#pragma once

// PDF of the HTML record by Debian's headless Chromium, started with a fresh profile, no sandbox,
// no GPU and no network services. Chromium is optional: callers check find_chromium() first and
// tell the user how to get a PDF when it is absent.

#include <countersign/check/check_plan.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace countersign::report {

// COUNTERSIGN_CHROMIUM when set and executable, else `chromium` or `chromium-browser` on PATH.
[[nodiscard]] std::optional<std::filesystem::path> find_chromium();

// The one-line message for a missing renderer.
[[nodiscard]] std::string no_chromium_message(const std::filesystem::path& pdf_file);

// The command line used (for tests and logs); profile_dir is a fresh, empty folder.
[[nodiscard]] std::vector<std::string> chromium_print_arguments(const std::filesystem::path& chromium,
                                                                const std::filesystem::path& html_file,
                                                                const std::filesystem::path& pdf_file,
                                                                const std::filesystem::path& profile_dir);

// Prints an HTML file to a PDF file. Errors (kind io) name the PDF file and quote Chromium's last
// message line. Chromium is stopped after `timeout`.
[[nodiscard]] Expected<std::filesystem::path> print_pdf(
    const std::filesystem::path& html_file, const std::filesystem::path& pdf_file,
    const std::filesystem::path& chromium, std::chrono::seconds timeout = std::chrono::seconds(120));

// The record of `check` as a PDF (the HTML is written to a temporary folder first).
[[nodiscard]] Expected<std::filesystem::path> write_pdf(const check::PlanCheck& check,
                                                        const std::filesystem::path& pdf_file,
                                                        const std::filesystem::path& chromium,
                                                        const HtmlOptions& options = {});

// file:// URL of an absolute path, percent-encoding what a URL path cannot hold.
[[nodiscard]] std::string file_url(const std::filesystem::path& absolute_path);

}  // namespace countersign::report
