#include "receiver_store.hpp"

#include <countersign/service/plan_intake.hpp>
#include <countersign/service/private_files.hpp>

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>
#include <dcmtk/dcmdata/dcostrma.h>
#include <dcmtk/dcmdata/dcostrmf.h>
#include <dcmtk/dcmnet/diutil.h>

#include <fcntl.h>
#include <stdio.h>  // renameat2
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <filesystem>

namespace countersign::service::detail {

namespace fs = std::filesystem;

namespace {

// Writes to a file until `limit` bytes, then only counts (DCMTK keeps reading the rest of the
// dataset, so that the association stays usable for the failure response).
class BoundedFileConsumer : public DcmConsumer {
 public:
  BoundedFileConsumer(int fd, std::uint64_t limit) : fd_(fd), limit_(limit) {}
  OFBool good() const override { return OFTrue; }
  OFCondition status() const override { return EC_Normal; }
  OFBool isFlushed() const override { return OFTrue; }
  offile_off_t avail() const override { return offile_off_t{1} << 30; }
  void flush() override {}
  offile_off_t write(const void* buffer, offile_off_t length) override {
    const auto size = static_cast<std::uint64_t>(length);
    total_ += size;
    if (total_ > limit_) exceeded_ = true;
    if (exceeded_ || error_ != 0) return length;
    const char* data = static_cast<const char*>(buffer);
    std::uint64_t done = 0;
    while (done < size) {
      const ssize_t written = ::write(fd_, data + done, size - done);
      if (written < 0 && errno == EINTR) continue;
      if (written <= 0) {
        error_ = written < 0 ? errno : ENOSPC;
        break;
      }
      done += static_cast<std::uint64_t>(written);
    }
    return length;
  }
  [[nodiscard]] bool exceeded() const { return exceeded_; }
  [[nodiscard]] int error() const { return error_; }
  [[nodiscard]] std::uint64_t total() const { return total_; }

 private:
  int fd_;
  std::uint64_t limit_;
  std::uint64_t total_ = 0;
  bool exceeded_ = false;
  int error_ = 0;
};

class BoundedFileStream : public DcmOutputStream {
 public:
  // The base only keeps the consumer's address; it is constructed right after.
  BoundedFileStream(int fd, std::uint64_t limit) : DcmOutputStream(&consumer_), consumer_(fd, limit) {}
  [[nodiscard]] const BoundedFileConsumer& consumer() const { return consumer_; }

 private:
  BoundedFileConsumer consumer_;
};

const AcceptedStorageClass* accepted_class(const char* sop_class_uid) {
  const auto found = std::find_if(
      accepted_storage_classes.begin(), accepted_storage_classes.end(),
      [&](const AcceptedStorageClass& c) { return std::strcmp(c.sop_class_uid, sop_class_uid) == 0; });
  return found == accepted_storage_classes.end() ? nullptr : &*found;
}

std::string size_text(std::uint64_t bytes) {
  if (bytes < (std::uint64_t{1} << 20)) return std::to_string((bytes + 1023) >> 10) + " KiB";
  return std::to_string((bytes + (std::uint64_t{1} << 19)) >> 20) + " MiB";
}

// The hidden file's SOP class and instance must be those of the request.
Uint16 check_received(const fs::path& file, const T_DIMSE_C_StoreRQ& request, std::string& why) {
  DcmFileFormat format;
  // Long values are not loaded: only the identifying attributes are needed here.
  if (const OFCondition loaded = format.loadFile(file.c_str(), EXS_Unknown, EGL_noChange, 4096);
      loaded.bad()) {
    why = std::string{"the received object cannot be read as DICOM: "} + loaded.text();
    return STATUS_STORE_Error_CannotUnderstand;
  }
  OFString sop_class;
  OFString sop_instance;
  format.getDataset()->findAndGetOFString(DCM_SOPClassUID, sop_class);
  format.getDataset()->findAndGetOFString(DCM_SOPInstanceUID, sop_instance);
  if (sop_class != request.AffectedSOPClassUID) {
    why = std::string{"SOPClassUID (0008,0016) \""} + sop_class.c_str() + "\" differs from the request's";
    return STATUS_STORE_Error_DataSetDoesNotMatchSOPClass;
  }
  if (sop_instance != request.AffectedSOPInstanceUID) {
    why = std::string{"SOPInstanceUID (0008,0018) \""} + sop_instance.c_str() +
          "\" differs from the request's Affected SOP Instance UID";
    return STATUS_STORE_Error_DataSetDoesNotMatchSOPClass;
  }
  return STATUS_Success;
}

// Reads and drops the dataset that follows a command we refuse (it comes whatever we answer).
OFCondition discard_dataset(T_ASC_Association* association, int timeout_s) {
  DIC_UL bytes = 0;
  DIC_UL fragments = 0;
  return DIMSE_ignoreDataSet(association, DIMSE_NONBLOCKING, timeout_s, &bytes, &fragments);
}

struct Received {
  OFCondition network;             // bad: nothing more can be said on this association
  Uint16 status = STATUS_Success;  // otherwise: Success, or why the object is refused
  std::string problem;
};

// The meta header as DCMTK writes it for a received object (transfer syntax of the presentation
// context, the sender's AE title), then the dataset's bytes as they arrive, up to the size limit.
Received receive_to_file(T_ASC_Association* association, const T_DIMSE_C_StoreRQ& request,
                         T_ASC_PresentationContextID context_id, const fs::path& file,
                         const ReceiverSettings& settings) {
  Received received;
  DcmOutputFileStream* header_stream = nullptr;
  received.network = DIMSE_createFilestream(OFFilename{file.c_str()}, &request, association, context_id,
                                            OFTrue, &header_stream);
  delete header_stream;  // DCMTK hands the stream over; deleting it closes the file
  if (received.network.bad()) return received;
  const UniqueFd fd{::open(file.c_str(), O_WRONLY | O_APPEND | O_CLOEXEC)};
  BoundedFileStream stream(fd.get(), settings.max_object_bytes);
  T_ASC_PresentationContextID data_context = context_id;
  received.network = DIMSE_receiveDataSetInFile(association, DIMSE_NONBLOCKING,
                                                static_cast<int>(settings.dimse_timeout.count()),
                                                &data_context, &stream, nullptr, nullptr);
  if (received.network.bad()) return received;
  const BoundedFileConsumer& written = stream.consumer();
  if (written.exceeded()) {
    received.status = STATUS_STORE_Refused_OutOfResources;
    received.problem = "the object (" + size_text(written.total()) + ") is larger than the limit of " +
                       size_text(settings.max_object_bytes) + " (--max-object-mb)";
  } else if (!fd.valid() || written.error() != 0 || ::fchmod(fd.get(), 0640) != 0 || ::fsync(fd.get()) != 0) {
    const int error = written.error() != 0 ? written.error() : errno;
    received.status = STATUS_STORE_Refused_OutOfResources;
    received.problem = std::string{"cannot write the received object to disk: "} + std::strerror(error);
  }
  return received;
}

}  // namespace

StoreOutcome receive_and_store(T_ASC_Association* association, const T_DIMSE_C_StoreRQ& request,
                               T_ASC_PresentationContextID context_id, const ReceiverSettings& settings,
                               ServiceLog& log, const std::string& who) {
  StoreOutcome outcome;
  const auto refuse = [&](Uint16 status, const std::string& why) {
    log.line("refused C-STORE of " + std::string{request.AffectedSOPInstanceUID} + " from " + who + ": " +
             why);
    outcome.status = status;
    return outcome;
  };
  const auto timeout_s = static_cast<int>(settings.dimse_timeout.count());
  const AcceptedStorageClass* storage_class = accepted_class(request.AffectedSOPClassUID);
  if (storage_class == nullptr) {
    outcome.network = discard_dataset(association, timeout_s);
    if (outcome.network.bad()) return outcome;
    return refuse(STATUS_STORE_Refused_SOPClassNotSupported,
                  std::string{"SOP class "} + request.AffectedSOPClassUID + " is not accepted here");
  }
  // Hidden while written: the watcher never takes a partial file, and the next start removes one
  // left by a crash.
  std::string pattern = (settings.inbox / ".countersign-rx.XXXXXX").string();
  if (UniqueFd created{::mkstemp(pattern.data())}; !created.valid()) {
    const std::string why = std::string{"cannot create a file in the inbox: "} + std::strerror(errno);
    outcome.network = discard_dataset(association, timeout_s);
    if (outcome.network.bad()) return outcome;
    return refuse(STATUS_STORE_Refused_OutOfResources, why);
  }
  const fs::path temporary{pattern};
  const Received received = receive_to_file(association, request, context_id, temporary, settings);
  outcome.network = received.network;
  if (outcome.network.bad()) {
    ::unlink(temporary.c_str());
    log.line("receive from " + who + " failed: " + outcome.network.text());
    return outcome;
  }
  std::string why = received.problem;
  Uint16 status = received.status;
  if (status == STATUS_Success) status = check_received(temporary, request, why);
  if (status != STATUS_Success) {
    ::unlink(temporary.c_str());
    return refuse(status, why);
  }
  const std::string uid =
      is_safe_uid(request.AffectedSOPInstanceUID) ? request.AffectedSOPInstanceUID : "unnamed";
  const fs::path final_name = settings.inbox / (std::string{storage_class->file_prefix} + "." + uid + "." +
                                                pattern.substr(pattern.size() - 6) + ".dcm");
  if (::renameat2(AT_FDCWD, temporary.c_str(), AT_FDCWD, final_name.c_str(), RENAME_NOREPLACE) != 0) {
    const std::string error = std::strerror(errno);
    ::unlink(temporary.c_str());
    return refuse(STATUS_STORE_Refused_OutOfResources,
                  "cannot move the received object into the inbox: " + error);
  }
  if (auto synced = sync_directory(settings.inbox); !synced) {
    // The object is in place; only its durability across a power cut is in doubt.
    log.line("warning: " + synced.error().message());
  }
  log.line("received " + std::string{storage_class->name} + " " + uid + " from " + who + " as " +
           final_name.filename().string());
  outcome.status = STATUS_Success;
  return outcome;
}

}  // namespace countersign::service::detail
