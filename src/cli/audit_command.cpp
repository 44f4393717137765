// `countersign audit verify [--results DIR | --db FILE|URI]`: recomputes the audit trail's chain,
// compares every entry with the records as they are now and the files of each check with the
// SHA-256 recorded, and names the first entry that was changed, deleted or whose file differs.
// Exit 0 only when everything holds.

#include <countersign/cli/commands.hpp>
#include <countersign/report/json_text.hpp>
#include <countersign/store/audit.hpp>
#include <countersign/util/text.hpp>

#include "store_options.hpp"

#include <nlohmann/json.hpp>

#include <memory>
#include <ostream>
#include <string>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct AuditCommandOptions {
  StoreFlags store;
  std::string station;
  bool json = false;
};

// Whose files this run can see: the results folder named (every check of its own SQLite file, or
// the checks this station recorded into it when the store is shared).
std::optional<store::FileScope> file_scope(const AuditCommandOptions& options) {
  const auto folder = results_folder_from(options.store);
  if (!folder) return std::nullopt;
  store::FileScope scope;
  scope.results_folder = *folder;
  scope.station = options.station;
  scope.every_check = store_location_from(options.store).backend == store::Backend::sqlite;
  return scope;
}

nlohmann::json report_to_json(const store::AuditReport& report) {
  nlohmann::json problems = nlohmann::json::array();
  for (const auto& finding : report.problems) {
    problems.push_back(
        {{"kind", store::to_string(finding.kind)},
         {"entry", finding.seq},
         {"check_id", finding.check_id ? nlohmann::json(*finding.check_id) : nlohmann::json()},
         {"review_id", finding.review_id ? nlohmann::json(*finding.review_id) : nlohmann::json()},
         {"message", finding.message}});
  }
  return {{"intact", report.intact()},
          {"entries", report.entries},
          {"checks", report.checks},
          {"reviews", report.reviews},
          {"files_checked", report.files_checked},
          {"head_entry", report.head ? nlohmann::json(report.head->seq) : nlohmann::json()},
          {"head_sha256", report.head ? nlohmann::json(report.head->entry_hash) : nlohmann::json()},
          {"problems", problems},
          {"notes", report.notes}};
}

void print_report(std::ostream& out, const store::AuditReport& report, const std::string& where) {
  out << "Audit trail of " << escape_control_characters(where) << ": " << report.entries << " entries, "
      << report.checks << " checks, " << report.reviews << " reviews, " << report.files_checked
      << " files compared\n";
  if (report.intact()) {
    out << "INTACT: every entry follows the one before, matches its record, and every file compared matches "
           "its SHA-256\n";
  } else {
    out << "NOT INTACT: " << report.problems.size() << " problem(s); the first:\n  "
        << escape_control_characters(report.problems.front().message) << "\n";
    for (std::size_t i = 1; i < report.problems.size(); ++i)
      out << "  then: " << escape_control_characters(report.problems[i].message) << "\n";
  }
  for (const auto& note : report.notes) out << "note: " << escape_control_characters(note) << "\n";
  if (report.head) {
    out << "head: entry " << report.head->seq << " " << report.head->entry_hash
        << " (note it elsewhere: a later run shows whether the trail still holds it)\n";
  }
}

ExitCode run_verify(const AuditCommandOptions& options, Io& io) {
  auto history = open_store(options.store, store::Access::read_only);
  if (!history) {
    io.err << "countersign audit verify: " << escape_control_characters(history.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  auto trail = history.value()->read_audit_trail();
  if (!trail) {
    io.err << "countersign audit verify: " << escape_control_characters(trail.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  const auto scope = file_scope(options);
  std::optional<store::AuditHead> anchor;
  if (scope) {
    auto head = store::read_audit_head(store::audit_head_file(scope->results_folder));
    if (!head) {
      io.err << "countersign audit verify: " << escape_control_characters(head.error().message()) << "\n";
      return ExitCode::bad_input;
    }
    anchor = head.value();
  }
  const store::AuditReport report = store::verify_trail(trail.value(), scope, anchor);
  if (options.json) {
    io.out << report::json_text(report_to_json(report));
  } else {
    print_report(io.out, report, history.value()->location().describe());
  }
  return report.intact() ? ExitCode::all_within_tolerance : ExitCode::outside_tolerance;
}

}  // namespace

void add_audit_command(CLI::App& app, CommandContext& context) {
  auto* audit = app.add_subcommand("audit", "Integrity of the history and the records");
  audit->require_subcommand(1);
  auto options = std::make_shared<AuditCommandOptions>();
  auto* verify = audit->add_subcommand(
      "verify",
      "Recompute the audit trail (each entry's SHA-256 covers its content and the entry before), compare "
      "every "
      "entry with the check or review as it is now, and every file of a check (result, record, structured "
      "result, plan) with the SHA-256 recorded; name the first entry that was changed, deleted or whose file "
      "differs. Exit 0 only when all hold, 1 when something was changed, 3 when the history cannot be read.");
  add_store_options(*verify, options->store);
  verify->add_option(
      "--station", options->station,
      "with a shared (PostgreSQL) history: compare the files of the checks this host recorded");
  verify->add_flag("--json", options->json, "write JSON");
  verify->callback([options, &context] { context.exit_code = run_verify(*options, context.io); });
}

}  // namespace countersign::cli
