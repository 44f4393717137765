#include <countersign/net/store_scu.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>
#include <dcmtk/dcmdata/dcuid.h>
#include <dcmtk/dcmnet/diutil.h>
#include <dcmtk/dcmnet/scu.h>

#include <fmt/format.h>

namespace countersign::net {

namespace {

SendOutcome outcome(SendResult result, std::string detail) { return SendOutcome{result, std::move(detail)}; }

// DICOM PS3.4 Annex B.2.3: 0000 success; B000, B006, B007 warnings (stored); A7xx out of resources
// (transient); everything else a failure for this object.
SendOutcome from_status(Uint16 status) {
  const std::string text = fmt::format("status {:04X}H ({})", status, DU_cstoreStatusString(status));
  if (status == STATUS_Success) return outcome(SendResult::delivered, "stored");
  if (status == 0xB000 || status == 0xB006 || status == 0xB007)
    return outcome(SendResult::delivered, "stored with " + text);
  if ((status & 0xFF00) == 0xA700) return outcome(SendResult::retry_later, "refused for now: " + text);
  return outcome(SendResult::rejected, "rejected: " + text);
}

}  // namespace

SendOutcome send_file(const Destination& destination, const std::filesystem::path& file,
                      const ScuSettings& settings) {
  DcmFileFormat format;
  // Only the identifying attributes are needed here; DcmSCU reads the file again to send it.
  if (const OFCondition loaded = format.loadFile(file.c_str(), EXS_Unknown, EGL_noChange, 4096);
      loaded.bad()) {
    return outcome(SendResult::rejected, std::string{"cannot read the object to send: "} + loaded.text());
  }
  OFString sop_class;
  format.getDataset()->findAndGetOFString(DCM_SOPClassUID, sop_class);
  const E_TransferSyntax file_syntax = format.getDataset()->getOriginalXfer();

  DcmSCU scu;
  const auto timeout_s = static_cast<Uint32>(settings.timeout.count());
  scu.setAETitle(settings.calling_ae_title.c_str());
  scu.setPeerAETitle(destination.ae_title.c_str());
  scu.setPeerHostName(destination.host.c_str());
  scu.setPeerPort(destination.port);
  scu.setACSETimeout(timeout_s);
  scu.setDIMSEBlockingMode(DIMSE_NONBLOCKING);
  scu.setDIMSETimeout(timeout_s);
  scu.setConnectionTimeout(static_cast<Sint32>(timeout_s));
  OFList<OFString> syntaxes;
  syntaxes.push_back(DcmXfer(file_syntax).getXferID());
  if (file_syntax != EXS_LittleEndianExplicit) syntaxes.push_back(UID_LittleEndianExplicitTransferSyntax);
  if (file_syntax != EXS_LittleEndianImplicit) syntaxes.push_back(UID_LittleEndianImplicitTransferSyntax);
  scu.addPresentationContext(sop_class, syntaxes);
  if (const OFCondition ready = scu.initNetwork(); ready.bad()) {
    return outcome(SendResult::retry_later, std::string{"cannot start the network: "} + ready.text());
  }
  if (const OFCondition negotiated = scu.negotiateAssociation(); negotiated.bad()) {
    return outcome(SendResult::retry_later, std::string{"no association: "} + negotiated.text());
  }
  const T_ASC_PresentationContextID context = scu.findPresentationContextID(sop_class, "");
  if (context == 0) {
    scu.releaseAssociation();
    return outcome(SendResult::rejected,
                   std::string{"the destination does not accept SOP class "} + sop_class.c_str());
  }
  Uint16 status = 0;
  const OFCondition sent = scu.sendSTORERequest(context, OFFilename{file.c_str()}, nullptr, status);
  if (sent.bad()) {
    scu.abortAssociation();
    return outcome(SendResult::retry_later, std::string{"sending failed: "} + sent.text());
  }
  scu.releaseAssociation();
  return from_status(status);
}

}  // namespace countersign::net
