#pragma once

// Checked invariants. A broken invariant is a defect of this program, not a fault of the input: it
// throws InternalError (ErrorKind::internal), which the command line reports with its own exit code
// (5) and a service records for the file, instead of reading an empty optional or a null pointer.

#include <countersign/util/error.hpp>

#include <source_location>
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

// Throws InternalError naming the condition and where it was checked.
[[noreturn]] void invariant_failed(const char* condition, std::source_location where);

// The value of an optional that the caller's logic guarantees is present (checked).
template <class Optional>
[[nodiscard]] decltype(auto) checked(Optional&& optional,
                                     std::source_location where = std::source_location::current()) {
  if (!optional.has_value()) invariant_failed("value present", where);
  return *std::forward<Optional>(optional);
}

// The object a pointer that the caller's logic guarantees is set points to (checked).
template <class T>
[[nodiscard]] T& checked(T* pointer, std::source_location where = std::source_location::current()) {
  if (pointer == nullptr) invariant_failed("pointer set", where);
  return *pointer;
}

}  // namespace countersign::util

// Checks an invariant; see InternalError.
#define COUNTERSIGN_ASSERT(condition_) \
  ((condition_) ? static_cast<void>(0) \
                : ::countersign::util::invariant_failed(#condition_, std::source_location::current()))
