#pragma once

// Checked invariants. A broken invariant is a defect of this program, not a fault of the input: it
// throws InternalError (ErrorKind::internal), which the command line reports with its own exit code
// (5) and a service records for the file, instead of reading an empty optional or a null pointer.

#include <countersign/util/error.hpp>

#include <stdexcept>
#include <utility>

namespace countersign::util {

class InternalError : public std::logic_error {
 public:
  explicit InternalError(Error error);
  [[nodiscard]] const Error& error() const { return error_; }

 private:
  Error error_;
};

// Where an invariant is checked (the __builtin_ forms work in GCC and clang alike, as default
// arguments they name the caller).
struct CheckedAt {
  const char* file = "";
  int line = 0;
  const char* function = "";
};

// Throws InternalError naming the condition and where it was checked.
[[noreturn]] void invariant_failed(const char* condition, const CheckedAt& where);

// The value of an optional that the caller's logic guarantees is present (checked).
template <class Optional>
[[nodiscard]] decltype(auto) checked(Optional&& optional, const char* file = __builtin_FILE(),
                                     int line = __builtin_LINE(), const char* function = __builtin_FUNCTION()) {
  if (!optional.has_value()) invariant_failed("value present", CheckedAt{file, line, function});
  return *std::forward<Optional>(optional);
}

// The object a pointer that the caller's logic guarantees is set points to (checked).
template <class T>
[[nodiscard]] T& checked(T* pointer, const char* file = __builtin_FILE(), int line = __builtin_LINE(),
                         const char* function = __builtin_FUNCTION()) {
  if (pointer == nullptr) invariant_failed("pointer set", CheckedAt{file, line, function});
  return *pointer;
}

}  // namespace countersign::util

// Checks an invariant; see InternalError.
#define COUNTERSIGN_ASSERT(condition_)                  \
  ((condition_) ? static_cast<void>(0)                   \
                : ::countersign::util::invariant_failed( \
                      #condition_, ::countersign::util::CheckedAt{__FILE__, __LINE__, __func__}))
