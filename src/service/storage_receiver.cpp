#include <countersign/service/plan_intake.hpp>
#include <countersign/service/private_files.hpp>
#include <countersign/service/stop_signals.hpp>
#include <countersign/service/storage_receiver.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcdict.h>
#include <dcmtk/dcmdata/dcfilefo.h>
#include <dcmtk/dcmdata/dcuid.h>
#include <dcmtk/dcmnet/diutil.h>
#include <dcmtk/dcmnet/scppool.h>
#include <dcmtk/dcmnet/scpthrd.h>

#include <arpa/inet.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <stdio.h>  // renameat2
#include <sys/socket.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cstring>
#include <thread>

namespace countersign::service {

namespace fs = std::filesystem;

namespace {

std::string trimmed(const std::string& text) {
  const auto first = text.find_first_not_of(' ');
  if (first == std::string::npos) return {};
  return text.substr(first, text.find_last_not_of(' ') - first + 1);
}

// What every worker of one receiver shares (read-only, plus the thread-safe log).
struct ReceiverContext {
  ReceiverSettings settings;
  ServiceLog* log = nullptr;
};

// One association at a time, on a pool thread: Verification and RT Plan Storage only. DCMTK's
// DcmStorageSCP does this job for a single-threaded DcmSCP; in DCMTK 3.6.7 only a DcmThreadSCP can
// run inside DcmSCPPool, so the storage part is written here on the same DcmSCP primitives.
class PlanStorageScp : public DcmThreadSCP {
 public:
  explicit PlanStorageScp(const ReceiverContext& context) : context_(context) {}

 protected:
  void notifyAssociationRequest(const T_ASC_Parameters& params, DcmSCPActionType& /*action*/) override {
    calling_ae_ = trimmed(params.DULparams.callingAPTitle);
    peer_ = params.DULparams.callingPresentationAddress;
  }

  OFBool checkCalledAETitleAccepted(const OFString& called) override {
    if (trimmed(called.c_str()) == context_.settings.ae_title) return OFTrue;
    context_.log->line("refused association from " + describe_peer() + ": called AE title \"" +
                       trimmed(called.c_str()) + "\" is not ours (\"" + context_.settings.ae_title + "\")");
    return OFFalse;
  }

  OFBool checkCallingAETitleAccepted(const OFString& calling) override {
    const std::string title = trimmed(calling.c_str());
    const auto& allowed = context_.settings.allowed_calling_ae_titles;
    if (std::find(allowed.begin(), allowed.end(), title) != allowed.end()) return OFTrue;
    context_.log->line("refused association from " + describe_peer() +
                       ": calling AE title not on the allow-list (--allow-ae)");
    return OFFalse;
  }

  OFCondition handleIncomingCommand(T_DIMSE_Message* message,
                                    const DcmPresentationContextInfo& info) override {
    if (message == nullptr || message->CommandField != DIMSE_C_STORE_RQ) {
      // C-ECHO is answered by DcmSCP; anything else is refused there as an unsupported command.
      return DcmSCP::handleIncomingCommand(message, info);
    }
    T_DIMSE_C_StoreRQ& request = message->msg.CStoreRQ;
    DcmFileFormat file;
    DcmDataset* dataset = file.getDataset();
    OFCondition status = receiveSTORERequest(request, info.presentationContextID, dataset);
    if (status.bad()) {
      context_.log->line("receive from " + describe_peer() + " failed: " + status.text());
      if (status == DIMSE_OUTOFRESOURCES) {
        sendSTOREResponse(info.presentationContextID, request, STATUS_STORE_Refused_OutOfResources);
      }
      return status;
    }
    return sendSTOREResponse(info.presentationContextID, request, store(request, file));
  }

 private:
  std::string describe_peer() const { return "AE \"" + calling_ae_ + "\" at " + peer_; }

  Uint16 refuse(Uint16 status, const std::string& why) {
    context_.log->line("refused C-STORE from " + describe_peer() + ": " + why);
    return status;
  }

  // Stores the dataset atomically in the inbox; the DIMSE status for the sender.
  Uint16 store(const T_DIMSE_C_StoreRQ& request, DcmFileFormat& file) {
    if (std::strcmp(request.AffectedSOPClassUID, UID_RTPlanStorage) != 0) {
      return refuse(STATUS_STORE_Refused_SOPClassNotSupported,
                    std::string{"SOP class "} + request.AffectedSOPClassUID + " is not RT Plan Storage");
    }
    DcmDataset* dataset = file.getDataset();
    OFString sop_class;
    OFString sop_instance;
    dataset->findAndGetOFString(DCM_SOPClassUID, sop_class);
    dataset->findAndGetOFString(DCM_SOPInstanceUID, sop_instance);
    if (sop_class != UID_RTPlanStorage) {
      return refuse(
          STATUS_STORE_Error_DataSetDoesNotMatchSOPClass,
          std::string{"SOPClassUID (0008,0016) \""} + sop_class.c_str() + "\" is not RT Plan Storage");
    }
    if (sop_instance != request.AffectedSOPInstanceUID) {
      return refuse(STATUS_STORE_Error_DataSetDoesNotMatchSOPClass,
                    std::string{"SOPInstanceUID (0008,0018) \""} + sop_instance.c_str() +
                        "\" differs from the request's Affected SOP Instance UID");
    }

    const fs::path& inbox = context_.settings.inbox;
    // Hidden while written: the watcher never sees a partial file, and a crash leaves only a
    // temporary file that the next start removes.
    std::string pattern = (inbox / ".countersign-rx.XXXXXX").string();
    const UniqueFd fd{::mkstemp(pattern.data())};
    if (!fd.valid())
      return refuse(STATUS_STORE_Refused_OutOfResources,
                    std::string{"cannot create a file in the inbox: "} + std::strerror(errno));
    const fs::path temporary{pattern};
    const auto give_up = [&](const std::string& why) {
      ::unlink(temporary.c_str());
      return refuse(STATUS_STORE_Refused_OutOfResources, why);
    };
    if (const OFCondition saved = file.saveFile(temporary.c_str(), EXS_Unknown); saved.bad()) {
      return give_up(std::string{"cannot write the received plan: "} + saved.text());
    }
    {
      const UniqueFd written{::open(temporary.c_str(), O_RDONLY | O_CLOEXEC)};
      if (!written.valid() || ::fchmod(written.get(), 0640) != 0 || ::fsync(written.get()) != 0) {
        return give_up(std::string{"cannot flush the received plan to disk: "} + std::strerror(errno));
      }
    }
    const std::string uid = is_safe_uid(sop_instance.c_str()) ? std::string{sop_instance.c_str()} : "unnamed";
    const std::string unique = temporary.string().substr(temporary.string().size() - 6);
    const fs::path final_name = inbox / ("RP." + uid + "." + unique + ".dcm");
    if (::renameat2(AT_FDCWD, temporary.c_str(), AT_FDCWD, final_name.c_str(), RENAME_NOREPLACE) != 0) {
      return give_up(std::string{"cannot move the received plan into the inbox: "} + std::strerror(errno));
    }
    if (auto synced = sync_directory(inbox); !synced) {
      // The plan is in place; only its durability across a power cut is in doubt.
      context_.log->line("warning: " + synced.error().message());
    }
    context_.log->line("received RT Plan " + uid + " from " + describe_peer() + " as " +
                       final_name.filename().string());
    return STATUS_Success;
  }

  const ReceiverContext& context_;
  std::string calling_ae_;
  std::string peer_;
};

class PlanStoragePool : public DcmBaseSCPPool {
 public:
  explicit PlanStoragePool(const ReceiverContext& context) : context_(context) {}

 protected:
  // DCMTK owns the worker it gets: it deletes it when the association ends or the pool shuts down.
  DcmBaseSCPWorker* createSCPWorker() override { return new Worker(*this, context_); }

 private:
  struct Worker : DcmBaseSCPPool::DcmBaseSCPWorker, private PlanStorageScp {
    Worker(DcmBaseSCPPool& pool, const ReceiverContext& context)
        : DcmBaseSCPPool::DcmBaseSCPWorker(pool), PlanStorageScp(context) {}
    OFCondition setSharedConfig(const DcmSharedSCPConfig& config) override {
      return PlanStorageScp::setSharedConfig(config);
    }
    OFBool busy() override { return PlanStorageScp::isConnected(); }
    OFCondition workerListen(T_ASC_Association* const association) override {
      // DCMTK 3.6.7's OFThread::start() stores the new thread's id into this object after
      // pthread_create returns, while the pool deletes a worker as soon as its association ends.
      // A refused association can end before that store, which then writes into freed memory
      // (seen as heap corruption under load). The id appears once the store is done: wait for it.
      while (threadID() == 0) std::this_thread::sleep_for(std::chrono::microseconds{50});
      return PlanStorageScp::run(association);
    }
  };

  const ReceiverContext& context_;
};

// A clear error now rather than a failure on the listening thread later.
Expected<std::uint16_t> probe_port(std::uint16_t port) {
  const UniqueFd fd{::socket(AF_INET, SOCK_STREAM | SOCK_CLOEXEC, 0)};
  if (!fd.valid())
    return Error{ErrorKind::io, "", "", "", std::string{"cannot open a socket: "} + std::strerror(errno)};
  const int yes = 1;
  ::setsockopt(fd.get(), SOL_SOCKET, SO_REUSEADDR, &yes, sizeof yes);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_port = htons(port);
  address.sin_addr.s_addr = htonl(INADDR_ANY);
  if (::bind(fd.get(), reinterpret_cast<const sockaddr*>(&address), sizeof address) != 0) {
    return Error{ErrorKind::usage, "", "--port", "",
                 "cannot listen on port " + std::to_string(port) + ": " + std::strerror(errno)};
  }
  return port;
}

}  // namespace

bool is_valid_ae_title(const std::string& title) {
  if (title.empty() || title.size() > 16 || trimmed(title).empty()) return false;
  return std::all_of(title.begin(), title.end(), [](char c) { return c >= 0x20 && c < 0x7f && c != '\\'; });
}

struct StorageReceiver::Impl {
  explicit Impl(ReceiverContext c) : context(std::move(c)), pool(context) {}
  ReceiverContext context;
  PlanStoragePool pool;
  std::thread listener;
};

StorageReceiver::StorageReceiver(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}

StorageReceiver::~StorageReceiver() { stop(); }

void StorageReceiver::stop() {
  if (!impl_ || !impl_->listener.joinable()) return;
  impl_->pool.stopAfterCurrentAssociations();  // the listening loop notices within its 1 s accept timeout
  impl_->listener.join();
  impl_->context.log->line("receiver stopped");
}

Expected<std::unique_ptr<StorageReceiver>> StorageReceiver::start(const ReceiverSettings& settings,
                                                                  ServiceLog& log) {
  const auto usage = [](std::string option, std::string detail) {
    return Error{ErrorKind::usage, "", std::move(option), "", std::move(detail)};
  };
  if (settings.port == 0) return usage("--port", "a port between 1 and 65535 is required");
  if (!is_valid_ae_title(settings.ae_title)) {
    return usage("--ae-title",
                 "\"" + settings.ae_title + "\" is not a valid AE title (1 to 16 printable characters)");
  }
  if (settings.allowed_calling_ae_titles.empty()) {
    return usage("--allow-ae",
                 "at least one allowed calling AE title is required; no sender is trusted by default");
  }
  for (const auto& title : settings.allowed_calling_ae_titles) {
    if (!is_valid_ae_title(title)) return usage("--allow-ae", "\"" + title + "\" is not a valid AE title");
  }
  if (settings.max_associations == 0) return usage("--max-associations", "must be at least 1");
  if (auto made = ensure_private_directory(settings.inbox); !made) return made.error();
  if (!dcmDataDict.isDictionaryLoaded()) {
    return Error{ErrorKind::io, "", "", "", "the DICOM data dictionary is not loaded (check DCMDICTPATH)"};
  }
  if (auto probed = probe_port(settings.port); !probed) return probed.error();

  ReceiverContext context;
  context.settings = settings;
  context.settings.ae_title = trimmed(settings.ae_title);
  for (auto& title : context.settings.allowed_calling_ae_titles) title = trimmed(title);
  context.log = &log;
  auto impl = std::make_unique<Impl>(std::move(context));

  DcmSCPConfig& config = impl->pool.getConfig();
  config.setPort(settings.port);
  config.setAETitle(impl->context.settings.ae_title.c_str());
  config.setHostLookupEnabled(OFFalse);
  // Non-blocking accept with a short timeout, so that stop() is noticed.
  config.setConnectionBlockingMode(DUL_NOBLOCK);
  config.setConnectionTimeout(1);
  const auto timeout_s = static_cast<Uint32>(settings.network_timeout.count());
  config.setACSETimeout(timeout_s);
  config.setDIMSEBlockingMode(DIMSE_NONBLOCKING);
  config.setDIMSETimeout(timeout_s);
  OFList<OFString> syntaxes;
  syntaxes.push_back(UID_LittleEndianExplicitTransferSyntax);
  syntaxes.push_back(UID_BigEndianExplicitTransferSyntax);
  syntaxes.push_back(UID_LittleEndianImplicitTransferSyntax);
  for (const char* sop_class : {UID_VerificationSOPClass, UID_RTPlanStorage}) {
    if (const OFCondition added = config.addPresentationContext(sop_class, syntaxes); added.bad()) {
      return Error{ErrorKind::io, "", "", "", std::string{"cannot configure the receiver: "} + added.text()};
    }
  }
  impl->pool.setMaxThreads(settings.max_associations);

  Impl* raw = impl.get();
  impl->listener = std::thread([raw] {
    block_termination_signals_in_this_thread();  // the pool's worker threads inherit this mask
    const OFCondition ended = raw->pool.listen();
    if (ended.bad()) raw->context.log->line(std::string{"receiver stopped with an error: "} + ended.text());
  });
  log.line("receiving RT Plans as AE \"" + raw->context.settings.ae_title + "\" on port " +
           std::to_string(settings.port) + " into " + settings.inbox.string());
  return std::unique_ptr<StorageReceiver>{new StorageReceiver(std::move(impl))};
}

}  // namespace countersign::service
