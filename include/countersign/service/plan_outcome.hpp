#pragma once

// What the automatic services need from the checking pipeline, and nothing more: a processor turns
// the bytes of one complete plan file into an outcome (verdict, report texts, history fields) or an
// Error. The watcher, the receiver and the history are written and tested against this seam, so
// they depend on no engine internals.

#include <countersign/store/verdict.hpp>
#include <countersign/util/error.hpp>

#include <cstddef>
#include <filesystem>
#include <functional>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::service {

// The verdict words and the history fields of a beam are the store's (plain values shared with the
// command line and the web view).
using store::beam_verdict_from_string;
using store::BeamOutcome;
using store::BeamVerdict;
using store::plan_verdict_from_string;
using store::PlanVerdict;
using store::to_string;

// Everything the services keep about one checked plan.
struct PlanOutcome {
  std::string sop_instance_uid;  // SOP Instance UID (0008,0018); names the result files
  std::string patient_id;        // Patient ID (0010,0020)
  std::string plan_label;        // RT Plan Label (300A,0002)
  PlanVerdict verdict = PlanVerdict::not_checked;
  std::string json_text;  // the machine-readable report, written as <UID>/<check id>.json
  std::optional<std::string>
      html_text;  // the printable record, written as <UID>/<check id>.html when present
  // The structured result as a DICOM SR file (<UID>/<check id>.sr.dcm), kept with the record so that
  // it can be sent, and sent again, as it was made; absent when it could not be made (sr_problem says why).
  std::optional<std::string> sr_bytes;
  std::string sr_problem;
  std::vector<BeamOutcome> beams;
  std::string beamdata_sha256;  // hash of the beam-data library used
  std::string policy_sha256;    // hash of the tolerance policy in force (every key and value)
};

// The patient's study for one plan, as the service's study store has it: the folders to read it
// from when it is complete; otherwise (a plan that named one, waited for, in vain) the sentence that
// every output carries about checking without it. Both empty: the service keeps no studies.
struct StudyContext {
  std::vector<std::filesystem::path> folders;
  std::string note;
  // Set with `note` when the plan named this structure set and it (or its CT) did not arrive in time:
  // the intake checks the plan again when the study comes (not used by the processor).
  std::string awaited_structure_set_uid;
};

// Turns one complete plan file into an outcome. `file` names it for messages; `bytes` is its whole
// content as read once by the caller; `study` says where its CT study is, if anywhere. An Error means the
// file cannot be checked as it stands; the caller decides whether it is still being written (retry) or bad
// (quarantine). Must be safe to call from one thread at a time; it is never called concurrently.
using PlanProcessor = std::function<Expected<PlanOutcome>(
    const std::filesystem::path& file, std::span<const std::byte> bytes, const StudyContext& study)>;

}  // namespace countersign::service
