#include <countersign/service/study_store.hpp>

#include <countersign/service/plan_intake.hpp>
#include <countersign/service/private_files.hpp>

#include <fcntl.h>
#include <sys/stat.h>

#include <algorithm>
#include <cerrno>
#include <cstring>

namespace countersign::service {

namespace fs = std::filesystem;

namespace {

constexpr auto purge_interval = std::chrono::hours{1};

StudyStore::Clock::time_point modified_at(const fs::path& file) {
  struct stat s {};
  if (::lstat(file.c_str(), &s) != 0) return StudyStore::Clock::time_point::max();
  return StudyStore::Clock::time_point{std::chrono::duration_cast<StudyStore::Clock::duration>(
      std::chrono::seconds{s.st_mtim.tv_sec} + std::chrono::nanoseconds{s.st_mtim.tv_nsec})};
}

// The first series folder of the store holding <uid>.dcm: the structure set, by its instance UID.
std::optional<fs::path> find_instance(const fs::path& root, const std::string& uid) {
  std::error_code ec;
  for (const auto& study : fs::directory_iterator{root, ec}) {
    if (!study.is_directory(ec)) continue;
    for (const auto& series : fs::directory_iterator{study.path(), ec}) {
      const fs::path candidate = series.path() / (uid + ".dcm");
      if (series.is_directory(ec) && fs::is_regular_file(candidate, ec)) return candidate;
    }
  }
  return std::nullopt;
}

}  // namespace

Expected<std::unique_ptr<StudyStore>> StudyStore::open(const fs::path& results, StudyStoreSettings settings,
                                                       ServiceLog& log) {
  const fs::path root = results / "studies";
  if (auto made = ensure_private_directory(root); !made) return made.error();
  std::unique_ptr<StudyStore> store{new StudyStore(root, settings, log)};
  store->purge_if_due(Clock::now());
  return store;
}

Expected<fs::path> StudyStore::keep(const fs::path& file, const dicom::StudyFile& identity) {
  struct Named {
    const char* keyword;
    const char* tag;
    const std::string* uid;
  };
  for (const Named& n : {Named{"StudyInstanceUID", "(0020,000D)", &identity.study_instance_uid},
                         Named{"SeriesInstanceUID", "(0020,000E)", &identity.series_instance_uid},
                         Named{"SOPInstanceUID", "(0008,0018)", &identity.sop_instance_uid}}) {
    if (!is_safe_uid(*n.uid)) {
      return Error{ErrorKind::bad_value, file.string(), n.keyword, n.tag,
                   "\"" + *n.uid + "\" is not a UID of digits and dots (at most 64 characters)"};
    }
  }
  const fs::path study = root_ / identity.study_instance_uid;
  const fs::path series = study / identity.series_instance_uid;
  for (const auto& dir : {study, series}) {
    if (auto made = ensure_private_directory(dir); !made) return made.error();
  }
  auto moved = move_file_durably(file, series / (identity.sop_instance_uid + ".dcm"), OnExisting::replace);
  if (!moved) return moved.error();
  // Readable by the service's group (a viewer, a backup), by nobody else; its age counts from now.
  const timespec now[2] = {{0, UTIME_NOW}, {0, UTIME_NOW}};
  if (::chmod(moved->c_str(), 0640) != 0 || ::utimensat(AT_FDCWD, moved->c_str(), now, 0) != 0) {
    return Error{ErrorKind::io, moved->string(), "", "",
                 std::string{"cannot set its mode or time: "} + std::strerror(errno)};
  }
  return moved;
}

StudyLookup StudyStore::find(const std::string& structure_set_uid) const {
  StudyLookup lookup;
  const auto structure_set = find_instance(root_, structure_set_uid);
  if (!structure_set) return lookup;
  // The CT is normally in the structure set's study; otherwise the whole store is read.
  const fs::path study_folder = structure_set->parent_path().parent_path();
  lookup.folders = {study_folder};
  lookup.arrival = dicom::study_arrival(dicom::index_study_files(lookup.folders), structure_set_uid);
  if (lookup.arrival.ct_found == 0) {
    lookup.folders = {root_};
    lookup.arrival = dicom::study_arrival(dicom::index_study_files(lookup.folders), structure_set_uid);
  }
  return lookup;
}

std::size_t StudyStore::purge(Clock::time_point now) {
  const auto oldest_kept = now - settings_.keep;
  std::size_t removed = 0;
  std::vector<fs::path> folders;
  std::error_code ec;
  for (auto it = fs::recursive_directory_iterator{root_, ec}; !ec && it != fs::recursive_directory_iterator{};
       it.increment(ec)) {
    if (it->is_directory(ec)) {
      folders.push_back(it->path());
    } else if (modified_at(it->path()) < oldest_kept && ::unlink(it->path().c_str()) == 0) {
      ++removed;
    }
  }
  // Deepest first, so that a study folder is empty once its series folders are gone.
  std::sort(folders.begin(), folders.end(),
            [](const fs::path& a, const fs::path& b) { return a.native().size() > b.native().size(); });
  for (const auto& folder : folders) {
    if (fs::is_empty(folder, ec)) fs::remove(folder, ec);
  }
  if (removed > 0) {
    [[maybe_unused]] const auto synced = sync_directory(root_);
    log_.line("study store: removed " + std::to_string(removed) + " file(s) older than " +
              std::to_string(settings_.keep.count() / 24) + " days (--study-keep-days)");
  }
  return removed;
}

void StudyStore::purge_if_due(Clock::time_point now) {
  if (now < next_purge_) return;
  next_purge_ = now + purge_interval;
  purge(now);
}

}  // namespace countersign::service
