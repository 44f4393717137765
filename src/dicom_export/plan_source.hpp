#pragma once

// The checked plan file, read again for what the exported objects copy from it (internal to
// dicom_export): the Patient and General Study modules, the plan's identity and its beam names.
// Text is converted to UTF-8 where DCMTK can convert the plan's character set; otherwise the plan's
// Specific Character Set is kept and our own text is written in ASCII only.

#include <countersign/util/error.hpp>

#include <dcmtk/config/osconfig.h>  // must come first among DCMTK headers

#include <dcmtk/dcmdata/dcfilefo.h>

#include <filesystem>
#include <map>
#include <memory>
#include <string>
#include <string_view>

namespace countersign::dicom_export::detail {

class PlanSource {
 public:
  // Errors (kind io or missing_attribute) name the plan file and the attribute.
  [[nodiscard]] static Expected<PlanSource> load(const std::filesystem::path& plan_file);

  // Specific Character Set, the Patient module, the General Study module and the Patient Study
  // module's attributes as the plan has them; type 2 attributes the plan lacks are written empty.
  void copy_patient_and_study(DcmItem& target) const;

  [[nodiscard]] const std::string& study_instance_uid() const { return study_uid_; }
  [[nodiscard]] const std::string& series_instance_uid() const { return series_uid_; }
  [[nodiscard]] const std::string& sop_class_uid() const { return sop_class_uid_; }
  [[nodiscard]] const std::string& sop_instance_uid() const { return sop_instance_uid_; }
  [[nodiscard]] const std::string& institution_name() const { return institution_; }
  // Beam Name (300A,00C2) of a beam as the plan spells it, or "".
  [[nodiscard]] std::string beam_name(int beam_number) const;
  // Our own text as it may be written into the object (unchanged in UTF-8, else ASCII only).
  [[nodiscard]] std::string own_text(std::string_view text) const;

 private:
  std::shared_ptr<DcmFileFormat> file_;
  bool utf8_ = false;
  std::string study_uid_;
  std::string series_uid_;
  std::string sop_class_uid_;
  std::string sop_instance_uid_;
  std::string institution_;
  std::map<int, std::string> beam_names_;
};

}  // namespace countersign::dicom_export::detail
