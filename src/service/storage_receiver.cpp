#include <countersign/service/private_files.hpp>
#include <countersign/service/storage_receiver.hpp>

#include "receiver_association.hpp"
#include "receiver_listener.hpp"
#include "receiver_tls.hpp"
#include "receiver_watch.hpp"

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmdata/dcdict.h>
#include <dcmtk/dcmdata/dcuid.h>
#include <dcmtk/dcmnet/dul.h>
#include <dcmtk/dcmnet/scpcfg.h>

namespace countersign::service {

namespace {

Error usage(std::string option, std::string detail) {
  return Error{ErrorKind::usage, "", std::move(option), "", std::move(detail)};
}

Expected<ReceiverSettings> checked(const ReceiverSettings& settings) {
  if (settings.port == 0) return usage("--port", "a port between 1 and 65535 is required");
  if (!is_valid_ae_title(settings.ae_title)) {
    return usage("--ae-title",
                 "\"" + settings.ae_title + "\" is not a valid AE title (1 to 16 printable characters)");
  }
  if (settings.max_associations == 0) return usage("--max-associations", "must be at least 1");
  if (settings.acse_timeout.count() <= 0) return usage("--acse-timeout", "must be at least 1 s");
  if (settings.dimse_timeout.count() <= 0) return usage("--dimse-timeout", "must be at least 1 s");
  if (settings.max_object_bytes == 0) return usage("--max-object-mb", "must be at least 1");
  ReceiverSettings result = settings;
  result.ae_title = trim_spaces(settings.ae_title);
  return result;
}

// Verification and every accepted storage class, in the three uncompressed transfer syntaxes (and
// deflated, which a sender may prefer for plans).
Expected<DcmSCPConfig*> configure(DcmSCPConfig& config, const ReceiverSettings& settings) {
  config.setAETitle(settings.ae_title.c_str());
  config.setHostLookupEnabled(OFFalse);
  config.setACSETimeout(static_cast<Uint32>(settings.acse_timeout.count()));
  config.setDIMSEBlockingMode(DIMSE_NONBLOCKING);
  config.setDIMSETimeout(static_cast<Uint32>(settings.dimse_timeout.count()));
  config.setMaxReceivePDULength(65536);
  OFList<OFString> syntaxes;
  syntaxes.push_back(UID_LittleEndianExplicitTransferSyntax);
  syntaxes.push_back(UID_BigEndianExplicitTransferSyntax);
  syntaxes.push_back(UID_LittleEndianImplicitTransferSyntax);
  syntaxes.push_back(UID_DeflatedExplicitVRLittleEndianTransferSyntax);
  std::vector<const char*> classes{UID_VerificationSOPClass};
  for (const auto& c : accepted_storage_classes) classes.push_back(c.sop_class_uid);
  for (const char* sop_class : classes) {
    if (const OFCondition added = config.addPresentationContext(sop_class, syntaxes); added.bad()) {
      return Error{ErrorKind::io, "", "", "", std::string{"cannot configure the receiver: "} + added.text()};
    }
  }
  return &config;
}

}  // namespace

struct StorageReceiver::Impl {
  ReceiverSettings settings;
  PeerAllowList allow_list;
  ServiceLog* log = nullptr;
  std::shared_ptr<DcmTLSTransportLayer> tls;
  DcmSCPConfig config;
  std::unique_ptr<DcmSharedSCPConfig> shared_config;
  detail::NegotiationWatch watch;
  std::unique_ptr<detail::ConnectionListener> listener;
};

StorageReceiver::StorageReceiver(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}

StorageReceiver::~StorageReceiver() { stop(); }

void StorageReceiver::stop() {
  if (!impl_ || !impl_->listener) return;
  impl_->listener->stop();
  impl_->listener.reset();
  impl_->log->line("receiver stopped");
}

Expected<std::unique_ptr<StorageReceiver>> StorageReceiver::start(const ReceiverSettings& settings,
                                                                  ServiceLog& log) {
  auto impl = std::make_unique<Impl>();
  auto valid = checked(settings);
  if (!valid) return valid.error();
  impl->settings = std::move(valid.value());
  auto allow_list = PeerAllowList::parse(settings.allowed_senders);
  if (!allow_list) return allow_list.error();
  impl->allow_list = std::move(allow_list.value());
  impl->log = &log;
  if (settings.tls) {
    auto tls = detail::make_tls_layer(*settings.tls);
    if (!tls) return tls.error();
    impl->tls = std::move(tls.value());
  }
  if (auto made = ensure_private_directory(settings.inbox); !made) return made.error();
  if (!dcmDataDict.isDictionaryLoaded()) {
    return Error{ErrorKind::io, "", "", "", "the DICOM data dictionary is not loaded (check DCMDICTPATH)"};
  }
  if (auto configured = configure(impl->config, impl->settings); !configured) return configured.error();
  impl->shared_config = std::make_unique<DcmSharedSCPConfig>(impl->config);
  dcmDisableGethostbyaddr.set(OFTrue);  // DCMTK's own setting: never a reverse DNS lookup per connection

  auto socket = detail::open_listening_socket(impl->settings.bind_address, impl->settings.port);
  if (!socket) return socket.error();
  detail::AssociationContext context;
  context.settings = &impl->settings;
  context.allow_list = &impl->allow_list;
  context.log = &log;
  context.scp_config = impl->shared_config.get();
  context.tls = impl->tls.get();
  context.watch = &impl->watch;
  impl->listener = std::make_unique<detail::ConnectionListener>(std::move(socket.value()), context,
                                                                impl->settings.max_associations);
  if (!impl->listener->start()) return Error{ErrorKind::io, "", "", "", "cannot start the receiver's thread"};

  std::string senders;
  for (const auto& entry : impl->allow_list.entries())
    senders += (senders.empty() ? "" : ", ") + entry.text();
  log.line("receiving as AE \"" + impl->settings.ae_title + "\" on " + impl->settings.bind_address +
           " port " + std::to_string(impl->settings.port) + (impl->tls ? " (TLS)" : "") + " from " + senders +
           " into " + impl->settings.inbox.string());
  return std::unique_ptr<StorageReceiver>{new StorageReceiver(std::move(impl))};
}

}  // namespace countersign::service
