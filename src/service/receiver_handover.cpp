#include "receiver_handover.hpp"

#include <dcmtk/dcmnet/dul.h>

#include <mutex>

namespace countersign::service::detail {

namespace {

// Guards DCMTK's process-wide dcmExternalSocketHandle (one socket at a time, in every receiver).
std::mutex& handover_mutex() {
  static std::mutex mutex;
  return mutex;
}

// The transport layer DCMTK asks to wrap the socket it took: the moment to release the lock.
class HandOverLayer : public DcmTransportLayer {
 public:
  HandOverLayer(std::unique_lock<std::mutex>& lock, DcmTransportLayer* tls) : lock_(&lock), tls_(tls) {}

  // DCMTK owns the connection it gets (deleted with the association).
  DcmTransportConnection* createConnection(DcmNativeSocketType socket, OFBool /*use_secure_layer*/) override {
    taken_ = true;
    dcmExternalSocketHandle.set(DCMNET_INVALID_SOCKET);
    if (lock_ != nullptr && lock_->owns_lock()) lock_->unlock();
    if (tls_ != nullptr) return tls_->createConnection(socket, OFTrue);
    return DcmTransportLayer::createConnection(socket, OFFalse);
  }
  [[nodiscard]] bool taken() const { return taken_; }
  // The lock lives only during ReceivedAssociation::receive.
  void forget_lock() { lock_ = nullptr; }

 private:
  std::unique_lock<std::mutex>* lock_;
  DcmTransportLayer* tls_;
  bool taken_ = false;
};

}  // namespace

ReceivedAssociation::~ReceivedAssociation() {
  if (association_ != nullptr) {
    ASC_dropAssociation(association_);
    ASC_destroyAssociation(&association_);
  }
  if (network_ != nullptr) ASC_dropNetwork(&network_);
}

T_ASC_Association* ReceivedAssociation::release_association() {
  T_ASC_Association* association = association_;
  association_ = nullptr;
  return association;
}

OFCondition ReceivedAssociation::receive(PeerConnection& peer, DcmTransportLayer* tls,
                                         std::chrono::seconds acse_timeout, Uint32 max_pdu_bytes) {
  const int timeout_s = static_cast<int>(acse_timeout.count());
  std::unique_lock lock{handover_mutex()};
  dcmExternalSocketHandle.set(peer.socket.get());
  // With the external handle set, DCMTK makes no listening socket of its own.
  OFCondition result = ASC_initializeNetwork(NET_ACCEPTOR, 0, timeout_s, &network_);
  if (result.bad()) {
    dcmExternalSocketHandle.set(DCMNET_INVALID_SOCKET);
    return result;
  }
  auto layer = std::make_unique<HandOverLayer>(lock, tls);
  HandOverLayer& hand_over = *layer;
  layer_ = std::move(layer);
  result = ASC_setTransportLayer(network_, layer_.get(), 0);
  if (result.good()) {
    result = ASC_receiveAssociation(network_, &association_, max_pdu_bytes, nullptr, nullptr,
                                    tls != nullptr ? OFTrue : OFFalse, DUL_NOBLOCK, timeout_s);
  }
  hand_over.forget_lock();
  if (!hand_over.taken()) {
    // DCMTK stopped before taking the socket: it is still ours to close.
    dcmExternalSocketHandle.set(DCMNET_INVALID_SOCKET);
    if (lock.owns_lock()) lock.unlock();
  } else {
    [[maybe_unused]] const int taken = peer.socket.release();
  }
  return result;
}

}  // namespace countersign::service::detail
