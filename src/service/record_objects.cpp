#include <countersign/service/record_objects.hpp>

#include <countersign/dicom_export/export_objects.hpp>
#include <countersign/report/html_pdf.hpp>
#include <countersign/service/private_files.hpp>
#include <countersign/util/sha256.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>

#include <unistd.h>

#include <fstream>

namespace countersign::service {

namespace fs = std::filesystem;

namespace {

std::string sop_instance_uid_of(const fs::path& file) {
  DcmFileFormat format;
  // Only the first elements are needed; large values (the PDF) are not read into memory.
  if (format.loadFile(file.c_str(), EXS_Unknown, EGL_noChange, 4096).bad()) return {};
  OFString uid;
  format.getDataset()->findAndGetOFString(DCM_SOPInstanceUID, uid);
  return uid.c_str();
}

Error refused(const store::CheckRecord& check, const std::string& detail) {
  return Error{ErrorKind::io, "", "", "", "check #" + std::to_string(check.id) + ": " + detail};
}

// The record kept, made into an Encapsulated PDF now (Chromium prints it; the plan file kept with
// the check gives the study).
Expected<fs::path> made_pdf(const store::CheckRecord& check, const fs::path& results,
                            const fs::path& chromium, const fs::path& work) {
  const fs::path html = results / check.files.record_html;
  const auto html_hash = sha256_of_file(html);
  if (!html_hash) return refused(check, "its record " + html.string() + " cannot be read");
  if (*html_hash != check.hashes.record_sha256) {
    return refused(check, "its record " + html.string() + " differs from the one recorded: not sent");
  }
  const fs::path pdf = work / ("record-" + std::to_string(check.id) + ".pdf");
  auto printed = report::print_pdf(html, pdf, chromium, std::chrono::seconds{90});
  if (!printed) return printed.error();
  const fs::path object = work / ("record-" + std::to_string(check.id) + ".pdf.dcm");
  auto wrapped = dicom_export::write_record_pdf(check.plan_label, results / check.files.plan, pdf, object);
  if (!wrapped) return wrapped.error();
  std::error_code ec;
  fs::remove(pdf, ec);
  return object;
}

}  // namespace

std::optional<std::string> sha256_of_file(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) return std::nullopt;
  util::Sha256 hash;
  std::string buffer(1 << 16, '\0');
  while (in) {
    in.read(buffer.data(), static_cast<std::streamsize>(buffer.size()));
    hash.update(std::string_view{buffer.data(), static_cast<std::size_t>(in.gcount())});
  }
  return hash.hex_digest();
}

Expected<RecordObjects> record_objects(const store::CheckRecord& check, const fs::path& results,
                                       const std::optional<fs::path>& chromium, const fs::path& work,
                                       KeepPdf keep) {
  RecordObjects found;
  const std::string of = " of check #" + std::to_string(check.id) + " (plan " + check.sop_instance_uid + ")";
  if (check.files.result_sr.empty()) {
    return refused(check,
                   "no structured result (SR) was kept with it (made before results were kept, or "
                   "the SR could not be made: see the service's log of that check)");
  }
  const fs::path sr = results / check.files.result_sr;
  const auto sr_hash = sha256_of_file(sr);
  if (!sr_hash) return refused(check, "its structured result " + sr.string() + " cannot be read");
  if (*sr_hash != check.hashes.sr_sha256) {
    return refused(check,
                   "its structured result " + sr.string() + " differs from the one recorded: not sent");
  }
  found.objects.push_back(RecordObject{sr, "sr", sop_instance_uid_of(sr), "structured result (SR)" + of});

  // The PDF made earlier is sent again as it is (same instance); else it is made now.
  const fs::path kept = results / check.sop_instance_uid / (std::to_string(check.id) + ".pdf.dcm");
  std::error_code ec;
  if (fs::exists(kept, ec)) {
    found.objects.push_back(RecordObject{kept, "pdf", sop_instance_uid_of(kept), "record (PDF)" + of});
    return found;
  }
  if (check.files.record_html.empty()) {
    found.notes.push_back("no printable record was kept with check #" + std::to_string(check.id) +
                          ": the structured result (SR) alone is sent");
    return found;
  }
  if (!chromium) {
    found.notes.push_back("no Chromium found: the structured result (SR) of check #" +
                          std::to_string(check.id) +
                          " is sent alone; the PDF record needs Chromium (Debian package chromium, or set "
                          "COUNTERSIGN_CHROMIUM)");
    return found;
  }
  auto pdf = made_pdf(check, results, *chromium, work);
  if (!pdf) {
    found.notes.push_back("the PDF record of check #" + std::to_string(check.id) +
                          " could not be made (the SR is sent alone): " + pdf.error().message());
    return found;
  }
  fs::path object = pdf.value();
  // Kept beside the record, never over a file already there (link() refuses an existing name).
  if (keep == KeepPdf::yes && ::link(object.c_str(), kept.c_str()) == 0) {
    ::unlink(object.c_str());
    object = kept;
    [[maybe_unused]] const auto synced = sync_directory(kept.parent_path());
  }
  found.objects.push_back(RecordObject{object, "pdf", sop_instance_uid_of(object), "record (PDF)" + of});
  return found;
}

}  // namespace countersign::service
