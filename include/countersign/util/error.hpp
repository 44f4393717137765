#pragma once

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

// The result of an operation that can fail in an expected way: a value or an Error.
template <class T>
class Expected {
 public:
  Expected(T value) : state_(std::move(value)) {}       // NOLINT(google-explicit-constructor)
  Expected(Error error) : state_(std::move(error)) {}   // NOLINT(google-explicit-constructor)

  [[nodiscard]] bool has_value() const { return std::holds_alternative<T>(state_); }
  explicit operator bool() const { return has_value(); }

  [[nodiscard]] const T& value() const& { return std::get<T>(state_); }
  [[nodiscard]] T& value() & { return std::get<T>(state_); }
  [[nodiscard]] T&& value() && { return std::get<T>(std::move(state_)); }
  [[nodiscard]] const Error& error() const { return std::get<Error>(state_); }

  const T& operator*() const& { return value(); }
  T& operator*() & { return value(); }
  const T* operator->() const { return &value(); }
  T* operator->() { return &value(); }

 private:
  std::variant<T, Error> state_;
};

}  // namespace countersign
