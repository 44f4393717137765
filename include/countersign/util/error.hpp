#pragma once

#include <optional>
#include <string>
#include <utility>
#include <variant>

namespace countersign {

// Categories of failure a caller may want to tell apart; each maps to a documented exit code.
enum class ErrorKind {
  io,                 // the file cannot be opened or read
  not_dicom,          // no DICOM preamble/meta header and not parseable as a dataset
  truncated,          // the file ends inside an element
  wrong_sop_class,    // a valid DICOM object that is not an RT Plan (RT Dose, CT, ion plan, ...)
  missing_attribute,  // a mandatory attribute or sequence is absent or empty
  bad_value,          // present but not a number, not finite, out of range or of the wrong form
  inconsistent,       // values that contradict each other (counts, references, duplicates)
  bad_beamdata,       // the beam-data library cannot be used
  bad_configuration,  // a configuration file (tolerance policy, ...) cannot be used
  usage,              // the command line is wrong
  internal,           // a broken invariant of this program: a defect to report, not the input's fault
};

// An expected failure: what went wrong, in which file, at which attribute (DICOM keyword and tag).
struct Error {
  ErrorKind kind = ErrorKind::io;
  std::string file;       // path as the user gave it; empty when not about a file
  std::string attribute;  // DICOM keyword or beam-data key, e.g. "BeamSequence" or "sad_cm"
  std::string tag;        // "(300A,00B0)" for DICOM attributes, empty otherwise
  std::string detail;     // one sentence, no trailing period needed

  // One line: "<file>: <attribute> <tag>: <detail>".
  [[nodiscard]] std::string message() const;
};

// The result of an operation that can fail in an expected way: a value or an error (an Error unless
// a module names its own kind of failure, as the engine does for what keeps it from a dose).
template <class T, class E = Error>
class Expected {
 public:
  Expected(T value) : state_(std::move(value)) {}       // NOLINT(google-explicit-constructor)
  Expected(E error) : state_(std::move(error)) {}       // NOLINT(google-explicit-constructor)

  [[nodiscard]] bool has_value() const { return std::holds_alternative<T>(state_); }
  explicit operator bool() const { return has_value(); }

  [[nodiscard]] const T& value() const& { return std::get<T>(state_); }
  [[nodiscard]] T& value() & { return std::get<T>(state_); }
  [[nodiscard]] T&& value() && { return std::get<T>(std::move(state_)); }
  [[nodiscard]] const E& error() const& { return std::get<E>(state_); }
  [[nodiscard]] E&& error() && { return std::get<E>(std::move(state_)); }

  const T& operator*() const& { return value(); }
  T& operator*() & { return value(); }
  const T* operator->() const { return &value(); }
  T* operator->() { return &value(); }

 private:
  std::variant<T, E> state_;
};

// Success with nothing to return, or an error.
template <class E>
class Expected<void, E> {
 public:
  Expected() = default;
  Expected(E error) : error_(std::move(error)) {}  // NOLINT(google-explicit-constructor)

  [[nodiscard]] bool has_value() const { return !error_.has_value(); }
  explicit operator bool() const { return has_value(); }

  [[nodiscard]] const E& error() const& { return error_.value(); }
  [[nodiscard]] E&& error() && { return std::move(error_).value(); }

 private:
  std::optional<E> error_;
};

}  // namespace countersign

// Early return on failure, as in ccache: TRY(expr) returns expr's error from the calling function
// when expr failed; TRY_ASSIGN(target, expr) does the same and otherwise moves expr's value into
// `target`. The calling function returns an Expected with the same error type.
#define TRY(expr_)                                           \
  do {                                                       \
    auto&& try_result_ = (expr_);                            \
    if (!try_result_) return std::move(try_result_).error(); \
  } while (false)

#define TRY_ASSIGN(target_, expr_)                           \
  do {                                                       \
    auto&& try_result_ = (expr_);                            \
    if (!try_result_) return std::move(try_result_).error(); \
    (target_) = std::move(try_result_).value();              \
  } while (false)
