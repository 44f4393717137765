// The printable record as an Encapsulated PDF (PS3.3 A.45.1) in the plan's study, derived from the
// plan (Source Instance Sequence).

#include <countersign/dicom_export/export_objects.hpp>

#include "dataset_writing.hpp"
#include "object_header.hpp"
#include "plan_source.hpp"

#include <dcmtk/dcmdata/dcdeftag.h>

#include <fstream>
#include <iterator>
#include <vector>

namespace countersign::dicom_export {

namespace {

using namespace detail;

Expected<std::vector<Uint8>> read_pdf(const std::filesystem::path& pdf_file) {
  std::ifstream in(pdf_file, std::ios::binary);
  std::vector<Uint8> bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  if (!in.eof() && in.fail()) return Error{ErrorKind::io, pdf_file.string(), "", "", "cannot be read"};
  if (bytes.size() < 5 || std::string(bytes.begin(), bytes.begin() + 5) != "%PDF-") {
    return Error{ErrorKind::io, pdf_file.string(), "", "", "is not a PDF file"};
  }
  return bytes;
}

void write_document(DcmItem& dataset, const std::string& plan_label, const PlanSource& plan,
                    const std::vector<Uint8>& pdf, const ExportOptions& options) {
  const LocalDateTime now = local_date_time(options.created);
  put(dataset, DCM_ConversionType, "WSD");  // SC Equipment: made on a workstation
  put(dataset, DCM_ContentDate, now.date);
  put(dataset, DCM_ContentTime, now.time);
  put(dataset, DCM_AcquisitionDateTime, now.date + now.time);
  put(dataset, DCM_BurnedInAnnotation, "YES");  // the record names the patient
  put(dataset, DCM_DocumentTitle, plan.own_text("Independent dose check record: " + plan_label));
  put_code(dataset, DCM_ConceptNameCodeSequence, codes::record);
  DcmItem& source = append_item(dataset, DCM_SourceInstanceSequence);
  put(source, DCM_ReferencedSOPClassUID, plan.sop_class_uid());
  put(source, DCM_ReferencedSOPInstanceUID, plan.sop_instance_uid());
  put(dataset, DCM_MIMETypeOfEncapsulatedDocument, "application/pdf");
  // OB of even length: a trailing NUL pads an odd-sized document; the length says where it ends.
  std::vector<Uint8> value = pdf;
  if (value.size() % 2 != 0) value.push_back(0);
  if (dataset
          .putAndInsertUint8Array(DCM_EncapsulatedDocument, value.data(),
                                  static_cast<unsigned long>(value.size()))
          .bad() ||
      dataset.putAndInsertUint32(DCM_EncapsulatedDocumentLength, static_cast<Uint32>(pdf.size())).bad()) {
    throw ExportDefect("cannot write the encapsulated document");
  }
}

}  // namespace

Expected<ExportedObject> write_record_pdf(const check::PlanCheck& check,
                                          const std::filesystem::path& plan_file,
                                          const std::filesystem::path& pdf_file,
                                          const std::filesystem::path& output, const ExportOptions& options) {
  return write_record_pdf(check.plan_label, plan_file, pdf_file, output, options);
}

Expected<ExportedObject> write_record_pdf(const std::string& plan_label,
                                          const std::filesystem::path& plan_file,
                                          const std::filesystem::path& pdf_file,
                                          const std::filesystem::path& output, const ExportOptions& options) {
  auto plan = PlanSource::load(plan_file);
  if (!plan) return plan.error();
  auto pdf = read_pdf(pdf_file);
  if (!pdf) return pdf.error();
  try {
    DcmFileFormat file;
    DcmDataset& dataset = *file.getDataset();
    const ObjectIdentity identity = write_object_header(
        dataset, *plan,
        {encapsulated_pdf_sop_class, "DOC", "902", "Independent dose check record (countersign)"}, options);
    write_document(dataset, plan_label, *plan, *pdf, options);
    if (auto saved = save_object(file, output); !saved) return saved.error();
    return ExportedObject{output, encapsulated_pdf_sop_class, identity.sop_instance_uid,
                          identity.series_instance_uid, plan->study_instance_uid()};
  } catch (const ExportDefect& defect) {
    return Error{ErrorKind::io, output.string(), "", "",
                 std::string{"cannot build the encapsulated PDF: "} + defect.what()};
  }
}

}  // namespace countersign::dicom_export
