// libFuzzer harness: any bytes given to the RT Plan reader must give a plan or a clean Error (a
// message naming the input), never a crash, hang, leak or unbounded allocation. A plan that reads
// is also checked against the demo beam data, so the engine meets hostile plans as well.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/dicom/read_plan.hpp>

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <span>
#include <string>

namespace {

const countersign::beamdata::Library& demo_library() {
  // Loaded once per process, as the watcher does.
  static const countersign::beamdata::Library library = [] {
    auto loaded = countersign::beamdata::load_library(COUNTERSIGN_FUZZ_BEAMDATA_DIR);
    if (!loaded) std::abort();  // the harness itself is broken, not the input
    return std::move(loaded).value();
  }();
  return library;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string name = "fuzz-input.dcm";
  const auto bytes = std::as_bytes(std::span{data, size});
  auto plan = countersign::dicom::read_plan_bytes(bytes, name);
  if (!plan) {
    // A clean error names the input and says something.
    const countersign::Error& error = plan.error();
    if (error.file != name || error.detail.empty() || error.message().empty()) std::abort();
    return 0;
  }
  const countersign::check::PlanCheck check =
      countersign::check::check_plan(*plan, demo_library(), countersign::check::CheckOptions{});
  // Every beam ends with a status and a sentence; a silent blank verdict is a defect.
  for (const auto& beam : check.beams) {
    if (beam.reason.sentence.empty()) std::abort();
  }
  return 0;
}
