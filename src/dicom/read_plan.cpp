// Loading: bytes or a file become a DCMTK dataset, then read_plan_dataset reads the plan.
// All transfer syntaxes DCMTK detects on its own (implicit/explicit VR, little/big endian,
// deflated) go through the same path.

#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_plan_dataset.hpp>

#include "buffer_stream.hpp"
#include "item_reader.hpp"

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>
#include <dcmtk/dcmdata/dcistrmb.h>
#include <dcmtk/dcmdata/dcstack.h>
#include <dcmtk/oflog/oflog.h>

#include <fmt/format.h>

#include <fstream>
#include <mutex>
#include <system_error>

namespace countersign::dicom {

namespace {

constexpr std::uintmax_t max_file_bytes = 256u * 1024u * 1024u;  // an RT Plan is far smaller

// DCMTK logs its own parse errors (dcmdata); ours are reported as one line by the caller. Other
// DCMTK loggers (the network library) keep their level; the services route them to their log.
void quiet_dcmtk_logging() {
  static std::once_flag once;
  std::call_once(once, [] { OFLog::getLogger("dcmtk.dcmdata").setLogLevel(OFLogger::FATAL_LOG_LEVEL); });
}

bool has_part10_preamble(std::span<const std::byte> bytes) {
  constexpr std::size_t offset = 128;
  return bytes.size() >= offset + 4 && bytes[offset] == std::byte{'D'} &&
         bytes[offset + 1] == std::byte{'I'} && bytes[offset + 2] == std::byte{'C'} &&
         bytes[offset + 3] == std::byte{'M'};
}

// The last element DCMTK managed to read, to say where a truncated file ends.
DcmObject* last_element_read(DcmDataset& dataset) {
  DcmStack stack;
  DcmObject* last = nullptr;
  while (dataset.nextObject(stack, OFTrue).good()) {
    DcmObject* object = stack.top();
    if (object != nullptr && object->ident() != EVR_item && object->ident() != EVR_SQ) last = object;
  }
  return last;
}

Error load_error(const std::string& name, bool part10, const OFCondition& condition, DcmDataset& partial) {
  Error error;
  error.file = name;
  if (!part10) {
    error.kind = ErrorKind::not_dicom;
    error.detail = "not a DICOM file (no DICOM preamble and not readable as a DICOM dataset)";
    return error;
  }
  error.kind = ErrorKind::truncated;
  if (DcmObject* last = last_element_read(partial)) {
    error.attribute = detail::keyword(last->getTag());
    error.tag = detail::tag_text(last->getTag());
    error.detail =
        fmt::format("the DICOM file is truncated or corrupt; reading stopped at or after this element ({})",
                    condition.text());
  } else {
    error.detail = fmt::format("the DICOM file is truncated or corrupt ({})", condition.text());
  }
  return error;
}

}  // namespace

Expected<plan::Plan> read_plan_bytes(std::span<const std::byte> bytes, std::string display_name) {
  quiet_dcmtk_logging();
  if (bytes.empty())
    return Error{ErrorKind::not_dicom, display_name, "", "", "the file is empty, not a DICOM file"};
  const bool part10 = has_part10_preamble(bytes);

  // Reopenable, so that a declared length beyond the end of the bytes is an error, not an allocation.
  detail::ReopenableBufferStream stream(bytes);
  DcmFileFormat file_format;
  file_format.transferInit();
  const OFCondition condition = file_format.read(stream, EXS_Unknown, EGL_noChange, DCM_MaxReadLength);
  file_format.transferEnd();

  DcmDataset* dataset = file_format.getDataset();
  if (dataset == nullptr) return Error{ErrorKind::not_dicom, display_name, "", "", "no DICOM dataset found"};
  if (condition.bad()) return load_error(display_name, part10, condition, *dataset);
  if (!part10 && !dataset->tagExists(DCM_SOPClassUID)) {
    return Error{ErrorKind::not_dicom, display_name, detail::keyword(DCM_SOPClassUID),
                 detail::tag_text(DCM_SOPClassUID),
                 "not a DICOM file (no DICOM preamble and no SOP Class UID)"};
  }
  return read_plan_dataset(*dataset, std::move(display_name));
}

Expected<plan::Plan> read_plan_file(const std::filesystem::path& path) {
  const std::string name = path.string();
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec))
    return Error{ErrorKind::io, name, "", "", "is a directory, not a file"};
  const auto size = std::filesystem::file_size(path, ec);
  if (ec) return Error{ErrorKind::io, name, "", "", "cannot be read: " + ec.message()};
  if (size > max_file_bytes) {
    return Error{ErrorKind::not_dicom, name, "", "",
                 fmt::format("is {} bytes, too large for an RT Plan", size)};
  }
  std::ifstream in(path, std::ios::binary);
  if (!in) return Error{ErrorKind::io, name, "", "", "cannot be opened"};
  std::vector<std::byte> bytes(static_cast<std::size_t>(size));
  in.read(reinterpret_cast<char*>(bytes.data()), static_cast<std::streamsize>(bytes.size()));
  if (!in) return Error{ErrorKind::io, name, "", "", "cannot be read completely"};
  return read_plan_bytes(bytes, name);
}

}  // namespace countersign::dicom
