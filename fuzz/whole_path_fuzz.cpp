// libFuzzer harness for the whole path a plan takes in every command and service: bytes → reader →
// check against the demo beam data → JSON (the check document and the plan document), the terminal
// text and the HTML record. Any input must end in a clean error or in outputs that are written
// without an exception: JSON that parses back and is UTF-8, text and a page. A crash, an uncaught
// exception (the JSON writer's, as in issue 10), a hang or a leak is a finding.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/report/check_json.hpp>
#include <countersign/report/check_text.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/report/json_text.hpp>
#include <countersign/report/plan_json.hpp>
#include <countersign/util/text.hpp>

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <span>
#include <sstream>
#include <string>

namespace {

const countersign::beamdata::Library& demo_library() {
  static const countersign::beamdata::Library library = [] {
    auto loaded = countersign::beamdata::load_library(COUNTERSIGN_FUZZ_BEAMDATA_DIR);
    if (!loaded) std::abort();  // the harness itself is broken, not the input
    return std::move(loaded).value();
  }();
  return library;
}

// The text of a JSON document must be UTF-8 and must parse back.
void expect_sound_json(const nlohmann::json& document) {
  const std::string text = countersign::report::json_text(document);
  if (!countersign::is_valid_utf8(text)) std::abort();
  if (nlohmann::json::parse(text, nullptr, false).is_discarded()) std::abort();
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  namespace report = countersign::report;
  const std::string name = "fuzz-input.dcm";
  auto plan = countersign::dicom::read_plan_bytes(std::as_bytes(std::span{data, size}), name);
  if (!plan) {
    // The error goes into the JSON of `check --json` as it is.
    const countersign::Error& error = plan.error();
    if (error.file != name || error.detail.empty()) std::abort();
    expect_sound_json(report::check_run_to_json({}, {error.message()}, 3));
    return 0;
  }
  const countersign::check::PlanCheck check =
      countersign::check::check_plan(*plan, demo_library(), countersign::check::CheckOptions{});
  for (const auto& beam : check.beams) {
    if (beam.reason.sentence.empty()) std::abort();  // a silent blank verdict is a defect
  }
  expect_sound_json(report::plan_to_json(*plan));
  expect_sound_json(report::check_run_to_json({check}, {}, static_cast<int>(check.exit_code())));
  std::ostringstream text;
  report::write_check_text(text, check);
  report::write_plan_summary_line(text, check);
  report::HtmlOptions html;
  html.plan = &plan.value();
  html.generated_at = "2026-12-02 08:15";  // fixed: the page must not depend on the clock here
  if (report::html_report(check, html).empty()) std::abort();
  return 0;
}
