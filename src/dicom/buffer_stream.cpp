#include "buffer_stream.hpp"

namespace countersign::dicom::detail {

namespace {

class BufferStreamFactory : public DcmInputStreamFactory {
 public:
  // A factory for streams positioned at `offset`, where the value to be loaded later starts.
  BufferStreamFactory(std::span<const std::byte> bytes, offile_off_t offset)
      : bytes_(bytes), offset_(offset) {}
  // DCMTK's interface hands ownership of both to the caller (it deletes them).
  DcmInputStream* create() const override {
    auto* stream = new ReopenableBufferStream(bytes_);
    stream->skip(offset_);
    return stream;
  }
  DcmInputStreamFactory* clone() const override { return new BufferStreamFactory(bytes_, offset_); }
  // DCMTK only distinguishes temporary files (deleted after use) from everything else.
  DcmInputStreamFactoryType ident() const override { return DFT_DcmInputFileStreamFactory; }

 private:
  std::span<const std::byte> bytes_;
  offile_off_t offset_;
};

}  // namespace

ReopenableBufferStream::ReopenableBufferStream(std::span<const std::byte> bytes) : bytes_(bytes) {
  setBuffer(bytes_.data(), static_cast<offile_off_t>(bytes_.size()));
  setEos();
}

DcmInputStreamFactory* ReopenableBufferStream::newFactory() const {
  if (compressed_) return nullptr;
  return new BufferStreamFactory(bytes_, tell());
}

OFCondition ReopenableBufferStream::installCompressionFilter(E_StreamCompression filter_type) {
  compressed_ = true;
  return DcmInputBufferStream::installCompressionFilter(filter_type);
}

}  // namespace countersign::dicom::detail
