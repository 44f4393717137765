#pragma once

// An in-memory DCMTK input stream that DCMTK can reopen (internal to the dicom module).
//
// Why: DCMTK allocates an element's whole declared length before reading it. From a plain buffer
// stream a few bytes declaring a 4 GB element therefore cost a 4 GB allocation. A stream that
// returns a factory lets DCMTK treat values longer than maxReadLength as it does for files: it
// skips them, rejects a length beyond the end of the data ("larger than remaining bytes"), and
// loads a value that fits only when it is accessed.

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcistrmb.h>

#include <cstddef>
#include <span>

namespace countersign::dicom::detail {

class ReopenableBufferStream : public DcmInputBufferStream {
 public:
  // `bytes` must outlive the stream, every stream created from it and every dataset read from it.
  explicit ReopenableBufferStream(std::span<const std::byte> bytes);

  // Makes streams over the same bytes, positioned where this one is now; none once a compression filter
  // (deflate) is installed, because offsets then count inflated bytes. DCMTK takes ownership of the factory.
  DcmInputStreamFactory* newFactory() const override;
  OFCondition installCompressionFilter(E_StreamCompression filter_type) override;

 private:
  std::span<const std::byte> bytes_;
  bool compressed_ = false;
};

}  // namespace countersign::dicom::detail
