#pragma once

// The patients' CT studies as the services receive them: every CT image and RT Structure Set that
// arrives is kept under RESULTS/studies/<Study Instance UID>/<Series Instance UID>/<SOP Instance
// UID>.dcm (files 0640, folders 0750), for the plans made on them. A plan that names a structure set
// waits until the structure set and the CT images its contours were drawn on are all there, or
// until the study wait has passed since the plan arrived; it is then checked without a CT and every
// output says so. The wait is measured from the plan file's status-change time in the inbox, so it
// survives a restart. Files older than the keep age are purged (at start, then hourly).

#include <countersign/dicom/read_study.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

namespace countersign::service {

struct StudyStoreSettings {
  std::chrono::seconds wait{120};    // --study-wait: how long a plan waits for its study
  std::chrono::hours keep{24 * 30};  // --study-keep-days: files older than this are purged
};

// Where a plan's study is, or what of it is missing.
struct StudyLookup {
  dicom::StudyArrival arrival;
  std::vector<std::filesystem::path> folders;  // to read the study from (when complete)
};

class StudyStore {
 public:
  using Clock = std::chrono::system_clock;

  // Creates RESULTS/studies (0750) when missing and purges what is older than the keep age.
  [[nodiscard]] static Expected<std::unique_ptr<StudyStore>> open(const std::filesystem::path& results,
                                                                  StudyStoreSettings settings,
                                                                  ServiceLog& log);

  // Moves one CT image or RT Structure Set file into the store (replacing an earlier copy of the same
  // SOP instance), durably, mode 0640, its time set to now (the keep age counts from arrival).
  [[nodiscard]] Expected<std::filesystem::path> keep(const std::filesystem::path& file,
                                                     const dicom::StudyFile& identity);

  // The study of the structure set with this SOP Instance UID, as far as it has arrived.
  [[nodiscard]] StudyLookup find(const std::string& structure_set_uid) const;

  // Removes the files older than the keep age (and folders left empty); the number removed.
  std::size_t purge(Clock::time_point now);
  // purge() at most once an hour.
  void purge_if_due(Clock::time_point now);

  [[nodiscard]] const StudyStoreSettings& settings() const { return settings_; }
  [[nodiscard]] const std::filesystem::path& root() const { return root_; }

 private:
  StudyStore(std::filesystem::path root, StudyStoreSettings settings, ServiceLog& log)
      : root_(std::move(root)), settings_(settings), log_(log) {}

  std::filesystem::path root_;
  StudyStoreSettings settings_;
  ServiceLog& log_;
  Clock::time_point next_purge_{};
};

}  // namespace countersign::service
