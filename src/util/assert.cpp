#include <countersign/util/assert.hpp>

#include <string>
#include <string_view>

namespace countersign::util {

namespace {

Error internal_error(const char* condition, const CheckedAt& where) {
  std::string_view file = where.file;  // only the file's name: no path of the build machine
  file.remove_prefix(file.rfind('/') == std::string_view::npos ? 0 : file.rfind('/') + 1);
  Error error;
  error.kind = ErrorKind::internal;
  error.detail = std::string{"internal error: invariant \""} + condition + "\" broken in " +
                 where.function + " (" + std::string{file} + ":" + std::to_string(where.line) +
                 "); please report this with the input that caused it";
  return error;
}

}  // namespace

InternalError::InternalError(Error error) : std::logic_error(error.message()), error_(std::move(error)) {}

void invariant_failed(const char* condition, const CheckedAt& where) {
  throw InternalError(internal_error(condition, where));
}

}  // namespace countersign::util
