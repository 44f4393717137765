#pragma once

// The C-STORE part of the DICOM receiver (internal to service): the dataset of one request goes
// straight from the network into a hidden file in the inbox, bit for bit as sent, with a meta header;
// past the size limit nothing more is written (the rest is read and discarded) and the request is
// refused. A complete object is checked (SOP class and instance as in the request), made durable
// and renamed into the inbox for the watcher.

#include "receiver_peer.hpp"

#include <countersign/service/service_log.hpp>
#include <countersign/service/storage_receiver.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmnet/assoc.h>
#include <dcmtk/dcmnet/dimse.h>

#include <string>

namespace countersign::service::detail {

struct StoreOutcome {
  OFCondition network;     // bad: the association cannot go on (no response can be sent)
  Uint16 status = 0xA700;  // the C-STORE response status otherwise
};

// Receives the dataset of `request` (announced on presentation context `context_id`) and stores it.
// `who` names the sender in log lines ("AE \"X\" at 10.0.0.5:4000").
[[nodiscard]] StoreOutcome receive_and_store(T_ASC_Association* association, const T_DIMSE_C_StoreRQ& request,
                                             T_ASC_PresentationContextID context_id,
                                             const ReceiverSettings& settings, ServiceLog& log,
                                             const std::string& who);

}  // namespace countersign::service::detail
