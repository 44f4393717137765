#pragma once

// Strict access to the attributes of one DICOM item (internal to the dicom module).
// The first failure is recorded in a shared ErrorSink; later reads return empty values so a parser
// can read a whole item and check the sink once. No DCMTK type leaves src/dicom.

#include "text_decoder.hpp"

#include <countersign/plan/defined_terms.hpp>
#include <countersign/util/error.hpp>

#include <dcmtk/config/osconfig.h>
#include <dcmtk/dcmdata/dcitem.h>
#include <dcmtk/dcmdata/dctagkey.h>

#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace countersign::dicom::detail {

enum class Need { required, optional };

// Keeps the first error of a parse (later errors are usually consequences of the first) and every
// distinct warning (text that could not be decoded), in the order found.
class ErrorSink {
 public:
  void fail(Error error) {
    if (!first_) first_ = std::move(error);
  }
  void warn(std::string warning);
  [[nodiscard]] bool failed() const { return first_.has_value(); }
  [[nodiscard]] const Error& error() const { return *first_; }
  [[nodiscard]] const std::vector<std::string>& warnings() const { return warnings_; }

 private:
  std::optional<Error> first_;
  std::vector<std::string> warnings_;
};

// "(300A,00B0)"
[[nodiscard]] std::string tag_text(const DcmTagKey& tag);
// DCMTK dictionary keyword, e.g. "BeamSequence" (retired ones without the RETIRED_ prefix).
[[nodiscard]] std::string keyword(const DcmTagKey& tag);
// Makes text from a file safe to print on one line: at most 64 bytes, control characters and bytes
// that are not UTF-8 escaped.
[[nodiscard]] std::string printable(const std::string& text);
// Parses a DICOM decimal string (DS) or integer string (IS) value strictly; nullopt if malformed
// or not finite.
[[nodiscard]] std::optional<double> parse_decimal(const std::string& text);
[[nodiscard]] std::optional<long long> parse_integer(const std::string& text);

class ItemReader {
 public:
  // `where` says which item this is, e.g. "BeamSequence item 2 (beam 2) > ControlPointSequence item 1".
  // Text is decoded from the item's Specific Character Set (0008,0005).
  ItemReader(DcmItem& item, const std::string& file, std::string where, ErrorSink& sink);

  // Present with a non-empty value.
  [[nodiscard]] bool has(const DcmTagKey& tag) const;
  // Present at all (possibly empty).
  [[nodiscard]] bool present(const DcmTagKey& tag) const;

  // Text value as UTF-8 with leading/trailing spaces removed; empty when absent (and an error if
  // required). Bytes that cannot be decoded are shown as U+FFFD and a warning names the attribute.
  [[nodiscard]] std::string text(const DcmTagKey& tag, Need need) const;
  // A code string with defined terms, parsed once here (the plan's text is kept beside the term).
  template <class Term>
  [[nodiscard]] plan::Coded<Term> term(const DcmTagKey& tag, Need need) const {
    return plan::parse_term<Term>(text(tag, need));
  }
  // One number (DS, IS, FL, FD, US, SS, UL, SL as stored), finite.
  [[nodiscard]] std::optional<double> number(const DcmTagKey& tag, Need need) const;
  // One integer (IS or binary integer VR).
  [[nodiscard]] std::optional<int> integer(const DcmTagKey& tag, Need need) const;
  // All values of a multi-valued numeric attribute; `count` 0 means any number of values.
  [[nodiscard]] std::optional<std::vector<double>> numbers(const DcmTagKey& tag, Need need,
                                                           std::size_t count) const;
  // The items of a sequence; a required sequence must be present with at least one item.
  [[nodiscard]] std::vector<ItemReader> sequence(const DcmTagKey& tag, Need need) const;
  // The same item described with extra words, e.g. " (beam 2)", once its identity is known.
  [[nodiscard]] ItemReader described(const std::string& suffix) const;

  // A value in [low, high]; records a bad_value error otherwise and returns nullopt.
  std::optional<double> within(const DcmTagKey& tag, std::optional<double> value, double low, double high,
                               const char* unit) const;

  void fail(ErrorKind kind, const DcmTagKey& tag, const std::string& detail) const;
  [[nodiscard]] bool failed() const { return sink_->failed(); }
  [[nodiscard]] const std::string& where() const { return where_; }
  [[nodiscard]] const std::string& file() const { return *file_; }
  [[nodiscard]] ErrorSink& sink() const { return *sink_; }
  // The Specific Character Set in force for this item, as declared.
  [[nodiscard]] const std::string& character_set() const { return decoder_->declared(); }

 private:
  ItemReader(DcmItem& item, const std::string& file, std::string where, ErrorSink& sink,
             std::shared_ptr<TextDecoder> decoder);
  [[nodiscard]] DcmElement* element(const DcmTagKey& tag) const;
  void warn_replaced(const DcmTagKey& tag, std::size_t replaced_bytes) const;
  [[nodiscard]] std::optional<std::vector<double>> all_numbers(const DcmTagKey& tag, Need need) const;

  DcmItem* item_;
  const std::string* file_;
  std::string where_;
  ErrorSink* sink_;
  std::shared_ptr<TextDecoder> decoder_;  // shared with the items that inherit its character set
};

}  // namespace countersign::dicom::detail
