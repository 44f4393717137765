#pragma once

// One connection of the DICOM receiver, served on its own thread (internal to service): the
// association negotiation (TLS handshake, AE titles and hosts against the allow-list, presentation
// contexts), then C-ECHO and C-STORE until the peer releases or a timeout ends it. Every refusal
// and every dropped connection is logged with the peer's address and the reason.

#include "receiver_peer.hpp"
#include "receiver_watch.hpp"

#include <countersign/service/peer_allow_list.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/service/storage_receiver.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmnet/dcmlayer.h>
#include <dcmtk/dcmnet/scpcfg.h>

#include <cstddef>

namespace countersign::service::detail {

// What every connection of one receiver shares; all of it outlives the connections.
struct AssociationContext {
  const ReceiverSettings* settings = nullptr;  // AE title trimmed
  const PeerAllowList* allow_list = nullptr;
  ServiceLog* log = nullptr;
  const DcmSharedSCPConfig* scp_config = nullptr;
  DcmTransportLayer* tls = nullptr;  // null: plain TCP
  NegotiationWatch* watch = nullptr;
};

// Serves `peer` until the association ends.
void serve_connection(PeerConnection peer, const AssociationContext& context);

// Reads the association request of a connection beyond max_associations and rejects it (transient,
// local limit exceeded), logging who asked; `in_progress` associations were being served.
void refuse_over_limit(PeerConnection peer, const AssociationContext& context, std::size_t in_progress);

}  // namespace countersign::service::detail
