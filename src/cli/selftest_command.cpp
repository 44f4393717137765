// `countersign selftest [--beamdata DIR] [--policy FILE] [--html FILE]`: the deliberate-error
// self-test (AAPM TG-114 (2011) advises testing a check with known errors). It makes its own plans
// for the library, writes each with the DICOM writer into a private temporary folder and reads it
// back, then injects errors of known size (check/self_test.hpp has the rules).

#include <countersign/beamdata/library.hpp>
#include <countersign/check/self_test.hpp>
#include <countersign/cli/commands.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/write_plan.hpp>
#include <countersign/report/self_test_report.hpp>

#include "bundled_data.hpp"
#include "shared_options.hpp"

#include <filesystem>
#include <fstream>
#include <memory>
#include <ostream>
#include <random>
#include <string>
#include <system_error>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct SelfTestOptions {
  CheckFlags flags;
  std::string html;  // --html FILE; empty: no page
};

// A private folder for the written plans, removed when the self-test ends.
class TemporaryFolder {
 public:
  TemporaryFolder() {
    std::random_device random;
    path_ = fs::temp_directory_path() / ("countersign-selftest-" + std::to_string(random()));
    fs::create_directories(path_);
    fs::permissions(path_, fs::perms::owner_all, fs::perm_options::replace);
  }
  ~TemporaryFolder() {
    std::error_code ignored;
    fs::remove_all(path_, ignored);
  }
  TemporaryFolder(const TemporaryFolder&) = delete;
  TemporaryFolder& operator=(const TemporaryFolder&) = delete;
  [[nodiscard]] const fs::path& path() const { return path_; }

 private:
  fs::path path_;
};

void run_selftest(const SelfTestOptions& options, CommandContext& context) {
  use_bundled_reader_dictionary();
  const auto check_options = check_options_from(options.flags);
  if (!check_options) {
    context.io.err << check_options.error().message() << '\n';
    context.exit_code = ExitCode::bad_input;
    return;
  }
  const auto library = beamdata::load_library(beamdata_folder(options.flags.beamdata));
  if (!library) {
    context.io.err << library.error().message() << '\n';
    context.exit_code = ExitCode::bad_input;
    return;
  }
  const TemporaryFolder folder;
  const check::PlanRoundTrip round_trip = [&folder](const plan::Plan& plan) -> Expected<plan::Plan> {
    const fs::path file = folder.path() / plan.source_file;
    TRY(dicom::write_plan_file(plan, file));
    return dicom::read_plan_file(file);
  };
  const check::SelfTestReport report = check::run_self_test(*library, *check_options, round_trip);
  context.io.out << report::self_test_text(report, check_options->policy.source);
  if (!options.html.empty()) {
    std::ofstream page(options.html, std::ios::binary | std::ios::trunc);
    page << report::self_test_html(report, check_options->policy.source);
    if (!page.flush()) {
      context.io.err << options.html << ": cannot write the self-test page\n";
      context.exit_code = ExitCode::record_not_written;
      return;
    }
  }
  // A self-test that misses an error, flags a clean plan or runs nothing has failed: exit 1.
  context.exit_code = report.passed() ? ExitCode::all_within_tolerance : ExitCode::outside_tolerance;
}

}  // namespace

void add_selftest_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<SelfTestOptions>();
  auto* command = app.add_subcommand(
      "selftest",
      "Deliberate-error self-test on plans it makes for the library: every machine, energy, wedge and tray;\n"
      "isocentric and fixed-SSD, on and off axis, static MLC, step-and-shoot and arc. Each plan is written "
      "as\n"
      "DICOM and read back, must pass as it stands, then gets errors of known size (MU, beam dose, SSD, "
      "depth,\n"
      "energy, wedge, tray, jaw, point position, patient position). Exit 0 when every error its rule says "
      "must\n"
      "be flagged is flagged and no clean plan is; 1 otherwise or when nothing ran.");
  add_check_flags(*command, options->flags);
  command->add_option("--html", options->html, "also write the results and the sensitivity as an HTML page");
  command->callback([options, &context] { run_selftest(*options, context); });
}

}  // namespace countersign::cli
