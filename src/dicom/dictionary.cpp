#include <countersign/dicom/dictionary.hpp>

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcdict.h>

#include <cstdlib>
#include <system_error>

namespace countersign::dicom {

bool use_reader_dictionary(const std::filesystem::path& dictionary_file) {
  const char* set_by_user = std::getenv(DCM_DICT_ENVIRONMENT_VARIABLE);
  if (set_by_user != nullptr && *set_by_user != '\0') return false;
  std::error_code ec;
  if (!std::filesystem::is_regular_file(dictionary_file, ec)) return false;
  // DCMTK creates its global dictionary lazily, reading this variable once.
  return ::setenv(DCM_DICT_ENVIRONMENT_VARIABLE, dictionary_file.c_str(), 1) == 0;
}

}  // namespace countersign::dicom
