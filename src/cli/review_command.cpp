// `countersign review CHECK_ID --accept|--reject --reason TEXT [--beam N]`: records a physicist's
// decision about a flagged or not-checked plan (or one such beam of it) with the reviewer (the
// operating-system user), the time and the reason. A review is never edited: a later one follows it.

#include <countersign/cli/commands.hpp>
#include <countersign/report/json_text.hpp>
#include <countersign/util/text.hpp>

#include "history_output.hpp"
#include "store_options.hpp"

#include <memory>
#include <optional>
#include <ostream>
#include <string>

namespace countersign::cli {

namespace {

struct ReviewCommandOptions {
  StoreFlags store;
  std::int64_t check_id = 0;
  bool accept = false;
  bool reject = false;
  std::optional<int> beam;
  std::string reason;
  bool json = false;
};

ExitCode run_review(const ReviewCommandOptions& options, Io& io) {
  auto history = open_store(options.store, store::Access::read_write);
  if (!history) {
    io.err << "countersign review: " << escape_control_characters(history.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  store::NewReview review;
  review.check_id = options.check_id;
  review.beam_number = options.beam;
  review.decision = options.accept ? store::Decision::accepted : store::Decision::rejected;
  review.reason = options.reason;
  review.reviewer = store::Reviewer{operating_system_user(), store::ReviewerKind::os_user};
  auto recorded = history.value()->add_review(review, store::utc_timestamp_now());
  if (!recorded) {
    io.err << "countersign review: " << escape_control_characters(recorded.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  if (options.json) {
    io.out << report::json_text(review_to_json(recorded.value()));
    return ExitCode::all_within_tolerance;
  }
  const store::Review& r = recorded.value();
  io.out << "review #" << r.id << " recorded: check #" << r.check_id
         << (r.beam_number ? ", beam " + std::to_string(*r.beam_number) : std::string{}) << " "
         << store::to_string(r.decision) << " by " << escape_control_characters(r.reviewer.name) << " at "
         << r.reviewed_at_utc
         << (r.follows_review_id ? " (follows review #" + std::to_string(*r.follows_review_id) + ")"
                                 : std::string{})
         << "; audit entry " << r.audit_seq.value_or(0) << "\n";
  return ExitCode::all_within_tolerance;
}

}  // namespace

void add_review_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<ReviewCommandOptions>();
  auto* command = app.add_subcommand(
      "review",
      "Record a decision about a check that is outside tolerance or not checked (the whole plan, or one such "
      "beam with --beam): accepted or rejected, why, by whom (the operating-system user) and when. Reviews "
      "join the audit trail and are never changed; a later review of the same plan or beam follows the "
      "earlier one. `history --open` lists flagged checks nobody has reviewed. The decision is the "
      "physicist's, under local regulations and licensed practice.");
  command->add_option("check_id", options->check_id, "the check (its number in `countersign history`)")
      ->required()
      ->check(CLI::PositiveNumber);
  auto* accept =
      command->add_flag("--accept", options->accept, "the result is accepted (say why in --reason)");
  auto* reject =
      command->add_flag("--reject", options->reject, "the result is rejected (say why in --reason)");
  accept->excludes(reject);
  command->add_option("--beam", options->beam, "only this beam (its Beam Number) of the plan");
  command->add_option("--reason", options->reason, "why: what was looked at and what it showed")->required();
  add_store_options(*command, options->store);
  command->add_flag("--json", options->json, "write the recorded review as JSON");
  command->callback([options, &context] {
    if (!options->accept && !options->reject) {
      context.io.err << "countersign review: say --accept or --reject\n";
      context.exit_code = ExitCode::bad_input;
      return;
    }
    context.exit_code = run_review(*options, context.io);
  });
}

}  // namespace countersign::cli
