// Indexing files for a study (headers only) and the shared file loading of the study reader.

#include <countersign/dicom/read_study.hpp>

#include "study_parts.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/oflog/oflog.h>

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <fstream>
#include <mutex>

namespace countersign::dicom {

namespace detail {

namespace {

void quiet_dcmtk_logging() {
  static std::once_flag once;
  std::call_once(once, [] { OFLog::getLogger("dcmtk").setLogLevel(OFLogger::FATAL_LOG_LEVEL); });
}

// The 128-byte preamble followed by "DICM" (PS3.10 7.1).
bool has_part10_preamble(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::array<char, 132> head{};
  if (!in.read(head.data(), head.size())) return false;
  return head[128] == 'D' && head[129] == 'I' && head[130] == 'C' && head[131] == 'M';
}

}  // namespace

Expected<std::unique_ptr<DcmFileFormat>> load_part10(const std::filesystem::path& path,
                                                     const DcmTagKey& stop_at) {
  quiet_dcmtk_logging();
  if (!has_part10_preamble(path))
    return Error{ErrorKind::not_dicom, path.string(), "", "", "not a DICOM Part 10 file (no DICM preamble)"};
  auto file = std::make_unique<DcmFileFormat>();
  // Values longer than 4 KiB stay on disk until used, so headers cost little.
  constexpr Uint32 lazy_above_bytes = 4096;
  const OFCondition status = file->loadFileUntilTag(path.c_str(), EXS_Unknown, EGL_noChange, lazy_above_bytes,
                                                    ERM_fileOnly, stop_at);
  if (status.bad()) {
    return Error{ErrorKind::truncated, path.string(), "", "",
                 fmt::format("cannot be read as DICOM ({})", status.text())};
  }
  return file;
}

study::Problem as_problem(const Error& error, study::ProblemKind kind) {
  return study::Problem{kind, error.file, error.attribute, error.tag, error.detail};
}

}  // namespace detail

namespace {

void add_index_entry(const std::filesystem::path& path, StudyFileIndex& index) {
  // Everything the index needs is in groups 0008 and 0020, before the Frame of Reference UID.
  auto file = detail::load_part10(path, DcmTagKey(0x0020, 0x0053));
  if (!file) {
    index.not_dicom.push_back(path);
    return;
  }
  detail::ErrorSink sink;
  const std::string name = path.string();
  const detail::ItemReader top(*file.value()->getDataset(), name, "", sink);
  StudyFile entry;
  entry.path = path;
  entry.sop_class_uid = top.text(DCM_SOPClassUID, detail::Need::optional);
  entry.sop_instance_uid = top.text(DCM_SOPInstanceUID, detail::Need::optional);
  entry.study_instance_uid = top.text(DCM_StudyInstanceUID, detail::Need::optional);
  entry.series_instance_uid = top.text(DCM_SeriesInstanceUID, detail::Need::optional);
  entry.frame_of_reference_uid = top.text(DCM_FrameOfReferenceUID, detail::Need::optional);
  if (sink.failed() || entry.sop_class_uid.empty() || entry.sop_instance_uid.empty()) {
    index.not_dicom.push_back(path);
    return;
  }
  index.files.push_back(std::move(entry));
}

}  // namespace

StudyFileIndex index_study_files(std::span<const std::filesystem::path> files_or_folders) {
  namespace fs = std::filesystem;
  std::vector<fs::path> paths;
  for (const fs::path& given : files_or_folders) {
    std::error_code ec;
    if (!fs::is_directory(given, ec)) {
      paths.push_back(given);
      continue;
    }
    for (auto it = fs::recursive_directory_iterator(given, fs::directory_options::skip_permission_denied, ec);
         !ec && it != fs::recursive_directory_iterator(); it.increment(ec)) {
      if (it->is_regular_file(ec)) paths.push_back(it->path());
    }
  }
  std::sort(paths.begin(), paths.end());
  paths.erase(std::unique(paths.begin(), paths.end()), paths.end());
  StudyFileIndex index;
  for (const fs::path& path : paths) add_index_entry(path, index);
  return index;
}

}  // namespace countersign::dicom
