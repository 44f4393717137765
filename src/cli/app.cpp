#include <countersign/cli/commands.hpp>
#include <countersign/util/assert.hpp>
#include <countersign/util/version.hpp>

#include <exception>
#include <ostream>

namespace countersign::cli {

int run(int argc, const char* const* argv, Io io) {
  CLI::App app{
      "countersign: an independent check of the monitor units of each beam of a DICOM RT Plan,\n"
      "recomputing the dose at the beam's dose point from the clinic's own beam-data tables.\n"
      "It supports, and does not replace, the physicist's review under local regulations and\n"
      "licensed practice."};
  app.set_version_flag("--version", std::string{"countersign "} + version_string);
  app.require_subcommand(1);

  CommandContext context{io};
  add_show_command(app, context);
  add_check_command(app, context);
  add_beamdata_command(app, context);
  add_selftest_command(app, context);
  add_watch_command(app, context);
  add_receive_command(app, context);
  add_history_command(app, context);
  add_explain_command(app, context);
  add_review_command(app, context);
  add_audit_command(app, context);
  add_send_command(app, context);
  add_serve_command(app, context);
  add_user_command(app, context);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    // --help and --version are "errors" with exit code 0 in CLI11.
    const int cli_code = app.exit(e, io.out, io.err);
    return cli_code == 0 ? 0 : static_cast<int>(ExitCode::bad_input);
  } catch (const util::InternalError& e) {
    // A defect of this program: said as such, with its own exit code, never as bad input.
    io.err << "countersign: " << e.error().message() << "\n";
    return static_cast<int>(ExitCode::internal_error);
  } catch (const std::exception& e) {
    io.err << "countersign: internal error: " << e.what()
           << "; please report this with the input that caused it\n";
    return static_cast<int>(ExitCode::internal_error);
  }
  return static_cast<int>(context.exit_code);
}

}  // namespace countersign::cli
