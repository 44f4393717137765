#include "receiver_tls.hpp"

#include <filesystem>
#include <mutex>

namespace countersign::service::detail {

namespace {

Error tls_error(const char* option, const std::filesystem::path& file, const std::string& detail) {
  return Error{ErrorKind::usage, file.string(), option, "", detail};
}

}  // namespace

Expected<std::shared_ptr<DcmTLSTransportLayer>> make_tls_layer(const ReceiverTls& tls) {
  static std::once_flag openssl_ready;
  std::call_once(openssl_ready, [] { DcmTLSTransportLayer::initializeOpenSSL(); });
  for (const auto& [option, file] :
       {std::pair{"--tls-cert", tls.certificate}, std::pair{"--tls-key", tls.private_key},
        std::pair{"--tls-ca", tls.trusted_ca}}) {
    std::error_code ec;
    if (!std::filesystem::is_regular_file(file, ec)) return tls_error(option, file, "no such file");
  }
  auto layer = std::make_shared<DcmTLSTransportLayer>(NET_ACCEPTOR, nullptr, OFFalse);
  if (layer->setTLSProfile(TSP_Profile_BCP195_ND).bad() || layer->activateCipherSuites().bad()) {
    return tls_error("--tls-cert", tls.certificate, "cannot set up the TLS profile (BCP 195)");
  }
  if (const OFCondition c = layer->setPrivateKeyFile(tls.private_key.c_str(), DCF_Filetype_PEM); c.bad()) {
    return tls_error("--tls-key", tls.private_key,
                     std::string{"cannot load the private key (PEM): "} + c.text());
  }
  if (const OFCondition c = layer->setCertificateFile(tls.certificate.c_str(), DCF_Filetype_PEM); c.bad()) {
    return tls_error("--tls-cert", tls.certificate,
                     std::string{"cannot load the certificate (PEM): "} + c.text());
  }
  if (!layer->checkPrivateKeyMatchesCertificate()) {
    return tls_error("--tls-key", tls.private_key,
                     "the private key does not match the certificate (--tls-cert)");
  }
  if (const OFCondition c = layer->addTrustedCertificateFile(tls.trusted_ca.c_str(), DCF_Filetype_PEM);
      c.bad()) {
    return tls_error("--tls-ca", tls.trusted_ca,
                     std::string{"cannot load the CA certificate (PEM): "} + c.text());
  }
  layer->setCertificateVerification(DCV_requireCertificate);
  return layer;
}

}  // namespace countersign::service::detail
