#pragma once

// Where the services put a check's files (RESULTS/<UID>/<check id>.json, .html, .sr.dcm) and its
// history (RESULTS/history.sqlite), for the service tests.

#include <countersign/store/store.hpp>

#include <filesystem>
#include <memory>
#include <string>
#include <vector>

namespace countersign::test {

// The newest file of plan `uid` with `suffix` (".json", ".html"), or a path that does not exist.
inline std::filesystem::path result_file(const std::filesystem::path& results, const std::string& uid,
                                         const std::string& suffix) {
  std::filesystem::path newest = results / uid / ("none" + suffix);
  long best = -1;
  std::error_code ec;
  for (const auto& entry : std::filesystem::directory_iterator{results / uid, ec}) {
    const std::string name = entry.path().filename().string();
    if (name.size() <= suffix.size() || name.compare(name.size() - suffix.size(), suffix.size(), suffix) != 0)
      continue;
    const std::string stem = name.substr(0, name.size() - suffix.size());
    if (stem.find_first_not_of("0123456789") != std::string::npos) continue;
    if (std::stol(stem) > best) {
      best = std::stol(stem);
      newest = entry.path();
    }
  }
  return newest;
}

// Files with `suffix` in the plans' folders of `results` (not the quarantine, outbox or plans kept).
inline std::size_t count_results(const std::filesystem::path& results, const std::string& suffix) {
  std::size_t n = 0;
  std::error_code ec;
  for (const auto& folder : std::filesystem::directory_iterator{results, ec}) {
    const std::string uid = folder.path().filename().string();
    if (!folder.is_directory() || uid.find_first_not_of("0123456789.") != std::string::npos) continue;
    for (const auto& entry : std::filesystem::directory_iterator{folder.path(), ec}) {
      const std::string name = entry.path().filename().string();
      if (name.front() != '.' && name.size() > suffix.size() &&
          name.compare(name.size() - suffix.size(), suffix.size(), suffix) == 0)
        ++n;
    }
  }
  return n;
}

inline Expected<std::unique_ptr<store::Store>> open_history(const std::filesystem::path& file,
                                                            store::Access access) {
  return store::Store::open(store::StoreLocation::parse(file.string()), access);
}

// Every check recorded in the SQLite history of `results` (empty when it cannot be read).
inline std::vector<store::CheckRecord> recorded_checks(const std::filesystem::path& results) {
  auto history = open_history(store::default_history_file(results), store::Access::read_only);
  if (!history) return {};
  auto all = history.value()->list_checks({});
  return all ? all.value() : std::vector<store::CheckRecord>{};
}

}  // namespace countersign::test
