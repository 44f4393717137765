#pragma once

// Hands one TCP connection, accepted by the receiver's own listening thread, to DCMTK for the
// association negotiation on the connection's thread (internal to the DICOM receiver).
//
// Why: DCMTK 3.6.7 reads an association request only from a T_ASC_Network, which either accepts a
// connection itself (so a slow peer would hold up the accepting thread) or takes a socket through
// its process-wide dcmExternalSocketHandle (meant for inetd). This uses the latter safely across
// threads: a process-wide lock is held from setting the handle until DCMTK has taken the socket
// (the moment it asks the transport layer to wrap it, before it reads anything), then released;
// the reading happens without the lock.

#include "receiver_peer.hpp"

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmnet/assoc.h>
#include <dcmtk/dcmnet/dcmlayer.h>

#include <chrono>
#include <memory>

namespace countersign::service::detail {

// The network and the association received on one connection; dropped and freed on destruction.
class ReceivedAssociation {
 public:
  ReceivedAssociation() = default;
  ReceivedAssociation(const ReceivedAssociation&) = delete;
  ReceivedAssociation& operator=(const ReceivedAssociation&) = delete;
  ~ReceivedAssociation();

  // Takes `peer.socket` (DCMTK closes it from now on), performs the TLS handshake when `tls` is
  // given, and reads the association request within `acse_timeout`.
  OFCondition receive(PeerConnection& peer, DcmTransportLayer* tls, std::chrono::seconds acse_timeout,
                      Uint32 max_pdu_bytes);

  [[nodiscard]] T_ASC_Association* association() const { return association_; }
  // Gives the association to a DcmSCP, which drops and frees it itself.
  T_ASC_Association* release_association();

 private:
  std::unique_ptr<DcmTransportLayer> layer_;
  T_ASC_Network* network_ = nullptr;
  T_ASC_Association* association_ = nullptr;
};

}  // namespace countersign::service::detail
