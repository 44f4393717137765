#include <countersign/dicom/plan_files.hpp>

#include <algorithm>
#include <array>

namespace countersign::dicom {

namespace fs = std::filesystem;

namespace {

bool ends_with(std::string_view text, std::string_view suffix) {
  return text.size() >= suffix.size() && text.substr(text.size() - suffix.size()) == suffix;
}

void list_into(const fs::path& folder, Subfolders subfolders, FolderListing& listing) {
  std::error_code ec;
  std::vector<fs::path> children;
  for (fs::directory_iterator it{folder, ec}, end; !ec && it != end; it.increment(ec)) {
    std::error_code entry_ec;
    const fs::file_status status = it->symlink_status(entry_ec);
    if (entry_ec || !is_candidate_name(it->path().filename().string())) continue;
    if (fs::is_regular_file(status)) {
      listing.files.push_back(it->path());
    } else if (fs::is_directory(status)) {
      children.push_back(it->path());
    }
  }
  std::sort(children.begin(), children.end());
  for (const fs::path& child : children) {
    listing.subfolders.push_back(child);
    if (subfolders == Subfolders::include) list_into(child, subfolders, listing);
  }
}

}  // namespace

bool is_candidate_name(std::string_view file_name) {
  if (file_name.empty() || file_name.front() == '.') return false;
  constexpr std::array<std::string_view, 7> temporary_suffixes{".part", ".partial", ".tmp",       ".temp",
                                                               ".swp",  "~",        ".reason.txt"};
  return std::none_of(temporary_suffixes.begin(), temporary_suffixes.end(),
                      [file_name](std::string_view suffix) { return ends_with(file_name, suffix); });
}

FolderListing list_candidates(const fs::path& folder, Subfolders subfolders) {
  FolderListing listing;
  list_into(folder, subfolders, listing);
  std::sort(listing.files.begin(), listing.files.end());
  return listing;
}

FileContent content_of(const Error& read_error) {
  switch (read_error.kind) {
    case ErrorKind::not_dicom:
      return FileContent::not_dicom;
    case ErrorKind::wrong_sop_class:
      return FileContent::other_object;
    case ErrorKind::io:
      return FileContent::unreadable;
    default:
      return FileContent::rt_plan;
  }
}

}  // namespace countersign::dicom
