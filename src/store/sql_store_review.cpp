// Reviews: a decision about a flagged or not-checked plan, or one such beam, appended with its audit
// entry. Nothing is ever changed: a later decision about the same plan or beam follows the earlier.

#include "sql_rows.hpp"
#include "sql_store.hpp"

#include <countersign/store/audit.hpp>

#include <algorithm>
#include <cctype>

namespace countersign::store::detail {

namespace {

bool blank(const std::string& text) {
  return std::all_of(text.begin(), text.end(), [](unsigned char c) { return std::isspace(c) != 0; });
}

Error refused(const std::string& attribute, const std::string& detail) {
  return Error{ErrorKind::usage, "", attribute, "", detail};
}

std::string beam_numbers(const CheckRecord& check) {
  std::string list;
  for (const BeamOutcome& beam : check.beams)
    list += (list.empty() ? "" : ", ") + std::to_string(beam.beam_number);
  return list.empty() ? "none" : list;
}

// Why this review cannot be recorded against `check`, if it cannot.
std::optional<Error> review_refusal(const NewReview& review, const CheckRecord& check) {
  const std::string name = "check #" + std::to_string(check.id);
  if (!review.beam_number) {
    if (!is_flagged(check.verdict)) {
      return refused("",
                     name + " is within tolerance: only a plan outside tolerance or not checked is reviewed");
    }
    return std::nullopt;
  }
  const auto beam = std::find_if(check.beams.begin(), check.beams.end(),
                                 [&](const BeamOutcome& b) { return b.beam_number == *review.beam_number; });
  if (beam == check.beams.end()) {
    return refused("--beam", name + " has no beam " + std::to_string(*review.beam_number) +
                                 " (its beams: " + beam_numbers(check) + ")");
  }
  if (!is_flagged(beam->verdict)) {
    return refused("--beam", "beam " + std::to_string(*review.beam_number) + " of " + name + " is " +
                                 std::string{to_string(beam->verdict)} +
                                 ": only a beam outside tolerance or not checked is reviewed");
  }
  return std::nullopt;
}

}  // namespace

Expected<Review> SqlStore::add_review(const NewReview& review, const std::string& reviewed_at_utc) {
  if (blank(review.reason)) return refused("--reason", "a review needs a reason");
  if (blank(review.reviewer.name)) return refused("reviewer", "a review needs the reviewer's name");
  Transaction transaction{*this, TransactionKind::write};
  if (!transaction.began()) return transaction.began().error();
  auto checks = select_checks("WHERE c.id = $1", {review.check_id});
  if (!checks) return checks.error();
  if (checks->empty()) {
    return refused("CHECK_ID",
                   "there is no check #" + std::to_string(review.check_id) + " in " + location().describe());
  }
  if (auto refusal = review_refusal(review, checks->front())) return *refusal;

  Review stored;
  static_cast<NewReview&>(stored) = review;
  stored.reason = clean_text(review.reason);
  stored.reviewer.name = clean_text(review.reviewer.name);
  stored.reviewed_at_utc = reviewed_at_utc;
  const std::optional<std::int64_t> beam =
      review.beam_number ? std::optional<std::int64_t>{*review.beam_number} : std::nullopt;
  auto previous =
      review.beam_number
          ? run("SELECT MAX(id) FROM reviews WHERE check_id = $1 AND beam_number = $2",
                {review.check_id, nullable(beam)})
          : run("SELECT MAX(id) FROM reviews WHERE check_id = $1 AND beam_number IS NULL", {review.check_id});
  if (!previous) return previous.error();
  if (!previous->empty()) stored.follows_review_id = previous->front().optional_integer(0);
  auto id = next_counter("reviews", 1);
  if (!id) return id.error();
  stored.id = id.value();
  auto inserted =
      run("INSERT INTO reviews (id, check_id, beam_number, decision, reason, reviewer, reviewer_kind, "
          "reviewed_at_utc, "
          "follows_review_id) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9)",
          {stored.id, stored.check_id, nullable(beam), std::string{to_string(stored.decision)}, stored.reason,
           stored.reviewer.name, std::string{to_string(stored.reviewer.kind)}, reviewed_at_utc,
           nullable(stored.follows_review_id)});
  if (!inserted) return inserted.error();
  std::optional<AuditHead> head;
  auto entry = append_entry(AuditKind::review, stored.check_id, stored.id, review_content(stored),
                            reviewed_at_utc, head);
  if (!entry) return entry.error();
  stored.audit_seq = entry->seq;
  if (auto committed = transaction.commit(); !committed) return committed.error();
  return stored;
}

}  // namespace countersign::store::detail
