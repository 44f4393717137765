#include <countersign/dicom/canonical_dataset.hpp>

#include "buffer_stream.hpp"

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>
#include <dcmtk/dcmdata/dcostrmb.h>

#include <array>

namespace countersign::dicom {

Expected<std::string> canonical_dataset_bytes(std::span<const std::byte> bytes,
                                              const std::string& display_name) {
  if (bytes.empty()) return Error{ErrorKind::not_dicom, display_name, "", "", "the file is empty"};
  detail::ReopenableBufferStream input(bytes);
  DcmFileFormat file_format;
  file_format.transferInit();
  const OFCondition read = file_format.read(input, EXS_Unknown, EGL_noChange, DCM_MaxReadLength);
  file_format.transferEnd();
  DcmDataset* dataset = file_format.getDataset();
  if (read.bad() || dataset == nullptr || !dataset->tagExists(DCM_SOPInstanceUID)) {
    return Error{ErrorKind::not_dicom, display_name, "", "",
                 std::string{"cannot be read as a DICOM dataset: "} +
                     (read.bad() ? read.text() : "no SOP Instance UID")};
  }

  // Written in pieces through a fixed buffer: DCMTK asks for more room with EC_StreamNotifyClient.
  std::array<unsigned char, 64 * 1024> buffer{};
  DcmOutputBufferStream output(buffer.data(), buffer.size());
  std::string canonical;
  dataset->transferInit();
  OFCondition written = EC_StreamNotifyClient;
  while (written == EC_StreamNotifyClient) {
    written = dataset->write(output, EXS_LittleEndianImplicit, EET_ExplicitLength, nullptr, EGL_withoutGL,
                             EPD_withoutPadding);
    void* chunk = nullptr;
    offile_off_t length = 0;
    output.flushBuffer(chunk, length);
    canonical.append(static_cast<const char*>(chunk), static_cast<std::size_t>(length));
  }
  dataset->transferEnd();
  if (written.bad()) {
    return Error{ErrorKind::not_dicom, display_name, "", "",
                 std::string{"cannot re-encode the dataset for comparison: "} + written.text()};
  }
  return canonical;
}

}  // namespace countersign::dicom
