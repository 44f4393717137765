#pragma once

// The receiver's TLS layer (internal to service): DCMTK's OpenSSL layer as acceptor with our
// certificate and key, the CA that signs the senders' certificates, peers required to present a
// certificate that verifies, and the non-downgrading BCP 195 profile (DCMTK's default for its tools).

#include <countersign/service/storage_receiver.hpp>
#include <countersign/util/error.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmtls/tlslayer.h>

#include <memory>

namespace countersign::service::detail {

// Errors (kind usage) name the option (--tls-cert, --tls-key, --tls-ca) and the file.
[[nodiscard]] Expected<std::shared_ptr<DcmTLSTransportLayer>> make_tls_layer(const ReceiverTls& tls);

}  // namespace countersign::service::detail
