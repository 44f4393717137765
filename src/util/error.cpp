#include <countersign/util/error.hpp>

namespace countersign {

std::string Error::message() const {
  std::string line = file.empty() ? std::string{} : file + ": ";
  if (!attribute.empty()) {
    line += attribute;
    if (!tag.empty()) line += " " + tag;
    line += ": ";
  }
  line += detail;
  return line;
}

}  // namespace countersign
