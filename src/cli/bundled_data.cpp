#include "bundled_data.hpp"

#include <countersign/dicom/dictionary.hpp>

#include <system_error>

namespace countersign::cli {

namespace fs = std::filesystem;

fs::path bundled_data_folder() {
  std::error_code ec;
  const fs::path program = fs::read_symlink("/proc/self/exe", ec);
  // Without /proc (not Linux), relative to the working folder: share/countersign.
  const fs::path bin = ec ? fs::path{"bin"} : program.parent_path();
  return (bin.parent_path() / "share" / "countersign").lexically_normal();
}

fs::path bundled_beamdata() { return bundled_data_folder() / "beamdata"; }

fs::path bundled_demo_plans() { return bundled_data_folder() / "demo-plans"; }

void use_bundled_reader_dictionary() {
  (void)dicom::use_reader_dictionary(bundled_data_folder() / "dicom" / "reader.dic");
}

}  // namespace countersign::cli
