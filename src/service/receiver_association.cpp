#include "receiver_association.hpp"

#include "receiver_handover.hpp"
#include "receiver_store.hpp"

#include <dcmtk/dcmdata/dcuid.h>
#include <dcmtk/dcmnet/scpthrd.h>

#include <functional>
#include <string>

namespace countersign::service::detail {

namespace {

constexpr Uint32 max_pdu_bytes = 65536;  // what we ask peers to send at most per PDU

std::string accepted_classes_text() {
  std::string text = "Verification";
  for (const auto& c : accepted_storage_classes) text += std::string{", "} + c.name + " Storage";
  return text;
}

std::string connection_failure(const OFCondition& condition) {
  const std::string text = condition.text();
  if (text.find("TLS") != std::string::npos || text.find("secure transport layer") != std::string::npos)
    return "TLS handshake failed (" + text + ")";
  if (condition == DUL_PEERABORTEDASSOCIATION || condition == DUL_NETWORKCLOSED)
    return "closed before a complete association request";
  if (condition == DUL_READTIMEOUT || condition == DUL_NOASSOCIATIONREQUEST)
    return "no association request within the ACSE timeout";
  return "not a DICOM association request (" + text + ")";
}

class ReceiverScp final : public DcmThreadSCP {
 public:
  ReceiverScp(const AssociationContext& context, const PeerConnection& peer,
              std::function<void()> on_negotiated)
      : context_(context),
        address_(peer.address),
        peer_text_(peer.text()),
        on_negotiated_(std::move(on_negotiated)) {}

  // Negotiates and serves `association` (this object drops and frees it when destroyed).
  OFCondition serve(T_ASC_Association* association) {
    association_ = association;
    return run(association);
  }

 protected:
  void notifyAssociationRequest(const T_ASC_Parameters& params, DcmSCPActionType& /*action*/) override {
    calling_ae_ = trim_spaces(params.DULparams.callingAPTitle);
  }

  OFBool checkCalledAETitleAccepted(const OFString& called) override {
    const std::string title = trim_spaces(called.c_str());
    if (title == context_.settings->ae_title) return OFTrue;
    refusal_ = "called AE title \"" + title + "\" is not ours (\"" + context_.settings->ae_title + "\")";
    return OFFalse;
  }

  OFBool checkCallingAETitleAccepted(const OFString& /*calling*/) override {
    if (context_.allow_list->allows(calling_ae_, address_)) return OFTrue;
    refusal_ = context_.allow_list->refusal_reason(calling_ae_, address_);
    return OFFalse;
  }

  void refuseAssociation(const DcmRefuseReasonType reason) override {
    std::string why = refusal_;
    if (why.empty()) {
      why = reason == DCMSCP_NO_PRESENTATION_CONTEXTS
                ? "none of the proposed SOP classes is accepted (" + accepted_classes_text() + ")"
                : (reason == DCMSCP_BAD_APPLICATION_CONTEXT_NAME ? "not the DICOM application context"
                                                                 : "refused by the receiver");
    }
    context_.log->line("refused association from " + who() + ": " + why);
    DcmThreadSCP::refuseAssociation(reason);
  }

  void notifyAssociationAcknowledge() override {
    on_negotiated_();
    refused_classes_ = refused_sop_classes();
  }

  // An association that ended without a single request usually wanted a SOP class we do not take
  // (a PACS proposes every class it has, then finds no context for its object): say which.
  void notifyAssociationTermination() override {
    if (requests_ == 0 && !refused_classes_.empty()) {
      context_.log->line("association with " + who() +
                         " ended without a request; of what it proposed, these SOP "
                         "classes are not accepted here: " +
                         refused_classes_);
    }
  }

  void notifyDIMSEError(const OFCondition& condition) override {
    const std::string why = condition == DIMSE_NODATAAVAILABLE
                                ? "no data within " +
                                      std::to_string(context_.settings->dimse_timeout.count()) +
                                      " s (DIMSE timeout)"
                                : std::string{condition.text()};
    context_.log->line("association with " + who() + " aborted: " + why);
  }

  OFCondition handleIncomingCommand(T_DIMSE_Message* message,
                                    const DcmPresentationContextInfo& info) override {
    ++requests_;
    if (message == nullptr || message->CommandField != DIMSE_C_STORE_RQ) {
      // C-ECHO is answered by DcmSCP; anything else is refused there as an unsupported command.
      return DcmThreadSCP::handleIncomingCommand(message, info);
    }
    T_DIMSE_C_StoreRQ& request = message->msg.CStoreRQ;
    const StoreOutcome outcome = receive_and_store(association_, request, info.presentationContextID,
                                                   *context_.settings, *context_.log, who());
    if (outcome.network.bad()) return outcome.network;
    return sendSTOREResponse(info.presentationContextID, request, outcome.status);
  }

 private:
  [[nodiscard]] std::string who() const { return "AE \"" + calling_ae_ + "\" at " + peer_text_; }

  // The SOP classes the peer proposed that this association does not take: the first few by name.
  [[nodiscard]] std::string refused_sop_classes() const {
    constexpr std::size_t named = 3;
    std::string refused;
    std::size_t count_refused = 0;
    T_ASC_Parameters* params = association_ != nullptr ? association_->params : nullptr;
    const int count = params != nullptr ? ASC_countPresentationContexts(params) : 0;
    for (int i = 0; i < count; ++i) {
      T_ASC_PresentationContext context;
      if (ASC_getPresentationContext(params, i, &context).bad() || context.resultReason == ASC_P_ACCEPTANCE)
        continue;
      const char* name = dcmFindNameOfUID(context.abstractSyntax, nullptr);
      const std::string text = name != nullptr ? std::string{name} + " (" + context.abstractSyntax + ")"
                                               : std::string{context.abstractSyntax};
      if (refused.find(text) != std::string::npos) continue;
      if (++count_refused <= named) refused += (refused.empty() ? "" : ", ") + text;
    }
    if (count_refused > named) refused += " and " + std::to_string(count_refused - named) + " more";
    return refused;
  }

  const AssociationContext& context_;
  IpAddress address_;
  std::string peer_text_;
  std::function<void()> on_negotiated_;
  T_ASC_Association* association_ = nullptr;
  std::string calling_ae_;
  std::string refusal_;
  std::string refused_classes_;
  int requests_ = 0;
};

}  // namespace

void serve_connection(PeerConnection peer, const AssociationContext& context) {
  const std::string peer_text = peer.text();
  const auto& settings = *context.settings;
  ReceivedAssociation received;  // declared first: freed after the SCP that uses its association
  const auto token = context.watch->watch(peer.socket.get(),
                                          NegotiationWatch::Clock::now() + settings.acse_timeout, peer_text);
  const OFCondition received_condition =
      received.receive(peer, context.tls, settings.acse_timeout, max_pdu_bytes);
  if (received_condition.bad()) {
    if (!context.watch->finish(token)) {
      context.log->line("dropped connection from " + peer_text + ": " +
                        connection_failure(received_condition));
    }
    return;
  }
  ReceiverScp scp(context, peer, [&context, token] { context.watch->finish(token); });
  if (scp.setSharedConfig(*context.scp_config).bad()) {
    context.watch->finish(token);
    context.log->line("dropped connection from " + peer_text + ": the receiver is not configured");
    return;
  }
  [[maybe_unused]] const OFCondition served = scp.serve(received.release_association());
  context.watch->finish(token);  // before the SCP closes the socket
}

void refuse_over_limit(PeerConnection peer, const AssociationContext& context, std::size_t in_progress) {
  const std::string peer_text = peer.text();
  const auto& settings = *context.settings;
  ReceivedAssociation received;
  const auto token = context.watch->watch(peer.socket.get(),
                                          NegotiationWatch::Clock::now() + settings.acse_timeout, peer_text);
  const OFCondition received_condition =
      received.receive(peer, context.tls, settings.acse_timeout, max_pdu_bytes);
  const bool expired = context.watch->finish(token);
  const std::string limit = "over --max-associations (" + std::to_string(in_progress) + " in progress)";
  if (received_condition.bad()) {
    if (!expired) context.log->line("refused connection from " + peer_text + ": " + limit);
    return;
  }
  T_ASC_RejectParameters reject{ASC_RESULT_REJECTEDTRANSIENT, ASC_SOURCE_SERVICEPROVIDER_PRESENTATION_RELATED,
                                ASC_REASON_SP_PRES_LOCALLIMITEXCEEDED};
  ASC_rejectAssociation(received.association(), &reject);
  const std::string calling = trim_spaces(received.association()->params->DULparams.callingAPTitle);
  context.log->line("refused association from AE \"" + calling + "\" at " + peer_text + ": " + limit);
}

}  // namespace countersign::service::detail
