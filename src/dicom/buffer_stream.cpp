#include "buffer_stream.hpp"

namespace countersign::dicom::detail {

namespace {

class BufferStreamFactory : public DcmInputStreamFactory {
 public:
  explicit BufferStreamFactory(std::span<const std::byte> bytes) : bytes_(bytes) {}
  // DCMTK's interface hands ownership of both to the caller (it deletes them).
  DcmInputStream* create() const override { return new ReopenableBufferStream(bytes_); }
  DcmInputStreamFactory* clone() const override { return new BufferStreamFactory(bytes_); }
  // DCMTK only distinguishes temporary files (deleted after use) from everything else.
  DcmInputStreamFactoryType ident() const override { return DFT_DcmInputFileStreamFactory; }

 private:
  std::span<const std::byte> bytes_;
};

}  // namespace

ReopenableBufferStream::ReopenableBufferStream(std::span<const std::byte> bytes) : bytes_(bytes) {
  setBuffer(bytes_.data(), static_cast<offile_off_t>(bytes_.size()));
  setEos();
}

DcmInputStreamFactory* ReopenableBufferStream::newFactory() const {
  if (compressed_) return nullptr;
  return new BufferStreamFactory(bytes_);
}

OFCondition ReopenableBufferStream::installCompressionFilter(E_StreamCompression filter_type) {
  compressed_ = true;
  return DcmInputBufferStream::installCompressionFilter(filter_type);
}

}  // namespace countersign::dicom::detail
