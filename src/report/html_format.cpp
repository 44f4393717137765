// Words, numbers and the style sheet of the HTML record.

#include "html_parts.hpp"

#include <fmt/format.h>

#include <cmath>

namespace countersign::report::html {

std::string_view style_sheet() {
  // Black on white, borders and words (not colour) carry every distinction, so the record reads the
  // same on a monochrome printer. Sizes in mm/pt for print.
  return R"css(
@page { size: A4 portrait; margin: 13mm 14mm 14mm 14mm; }
* { box-sizing: border-box; }
html { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
body { margin: 0; color: #000; background: #fff; font: 9pt/1.35 "DejaVu Sans", "Liberation Sans", Arial, sans-serif; }
@media screen { body { width: 182mm; margin: 8mm auto; } }
h1 { font-size: 15pt; margin: 0; letter-spacing: 0.01em; }
h2 { font-size: 11pt; margin: 5mm 0 1.5mm; padding-bottom: 0.6mm; border-bottom: 0.4mm solid #000; }
h3 { font-size: 9.5pt; margin: 3mm 0 1mm; }
p { margin: 1mm 0; }
.masthead { display: flex; justify-content: space-between; align-items: flex-end; border-bottom: 0.8mm solid #000; padding-bottom: 1.5mm; }
.masthead .sub { font-size: 9pt; }
.masthead .stamp { text-align: right; font-size: 8pt; }
table { border-collapse: collapse; width: 100%; margin: 1mm 0 2mm; }
th, td { border: 0.25mm solid #000; padding: 0.7mm 1.4mm; text-align: left; vertical-align: top; }
th { background: #e8e8e8; font-weight: bold; }
thead { display: table-header-group; }
tr { break-inside: avoid; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
table.identity th { width: 34mm; background: #f2f2f2; font-weight: normal; }
table.identity td { font-weight: bold; }
.mono { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 8pt; word-break: break-all; font-weight: normal; }
.outcome { margin: 3mm 0; padding: 2mm 3mm; border: 0.4mm solid #000; break-inside: avoid; }
.outcome .word { font-size: 13pt; font-weight: bold; letter-spacing: 0.03em; }
.outcome.outside { background: #000; color: #fff; border: 0.6mm solid #000; }
.outcome.not-checked { border: 0.9mm dashed #000; }
.outcome.skipped { border: 0.4mm dotted #000; }
td.word { font-weight: bold; white-space: nowrap; }
tr.outside td { font-weight: bold; border-top-width: 0.6mm; border-bottom-width: 0.6mm; }
tr.outside td.word { background: #000; color: #fff; }
tr.not-checked td.word { text-decoration: underline; }
tr.total td { font-weight: bold; border-top: 0.5mm solid #000; }
.beam { break-before: page; }
.running { display: flex; justify-content: space-between; font-size: 7.5pt; border-bottom: 0.25mm solid #000; padding-bottom: 0.8mm; margin-bottom: 2mm; }
.beam h2 { margin-top: 0; }
.figure-row { display: flex; gap: 4mm; align-items: flex-start; break-inside: avoid; }
.figure-row figure { margin: 0; flex: none; }
.figure-row figcaption { font-size: 7.5pt; margin-top: 0.8mm; width: 120mm; }
.facts { flex: 1; }
.facts table { margin: 0; }
.facts th { background: #f2f2f2; font-weight: normal; width: 44%; }
.facts td, .facts th { padding: 0.5mm 1.2mm; font-size: 8pt; }
table.factors td, table.factors th { font-size: 8pt; }
table.factors td.lookup { font-size: 7.5pt; }
.flag { font-weight: bold; text-decoration: underline; }
ul.notes { margin: 1mm 0 2mm 4mm; padding: 0; font-size: 8pt; }
.signoff { display: grid; grid-template-columns: 1fr 1fr 0.7fr; gap: 3mm; margin-top: 2mm; break-inside: avoid; }
.signoff div { border: 0.3mm solid #000; height: 17mm; padding: 1mm 1.5mm; font-size: 8pt; }
.signoff div.wide { grid-column: 1 / 4; height: 15mm; }
.caution { margin-top: 3mm; padding: 1.5mm 2.5mm; border-left: 1.2mm solid #000; font-size: 8.5pt; break-inside: avoid; }
.small { font-size: 7.5pt; }
)css";
}

std::string_view status_words(check::Status status) {
  switch (status) {
    case check::Status::within_tolerance:
      return "Within tolerance";
    case check::Status::outside_tolerance:
      return "Outside tolerance";
    case check::Status::not_checked:
      return "Not checked";
    case check::Status::skipped:
      return "Skipped";
  }
  return "Not checked";
}

std::string_view status_class(check::Status status) {
  switch (status) {
    case check::Status::within_tolerance:
      return "within";
    case check::Status::outside_tolerance:
      return "outside";
    case check::Status::not_checked:
      return "not-checked";
    case check::Status::skipped:
      return "skipped";
  }
  return "not-checked";
}

std::string_view category_words(check::FieldCategory category) {
  switch (category) {
    case check::FieldCategory::simple:
      return "simple field";
    case check::FieldCategory::complex:
      return "complex field";
    case check::FieldCategory::modulated:
      return "modulated field";
  }
  return "";
}

namespace {
// A value that rounds to zero is printed as zero, never "-0.0".
double without_negative_zero(double value, int decimals) {
  return std::abs(value) < 0.5 * std::pow(10.0, -decimals) ? 0.0 : value;
}
}  // namespace

std::string fixed(const std::optional<double>& value, int decimals) {
  return value ? fmt::format("{:.{}f}", without_negative_zero(*value, decimals), decimals)
               : std::string{"\u2013"};
}

std::string signed_fixed(const std::optional<double>& value, int decimals) {
  return value ? fmt::format("{:+.{}f}", without_negative_zero(*value, decimals), decimals)
               : std::string{"\u2013"};
}

std::string person_name(const std::string& dicom_name) {
  if (dicom_name.empty()) return "\u2013";
  std::string out;
  std::size_t start = 0;
  int component = 0;
  while (start <= dicom_name.size() && component < 3) {
    const std::size_t caret = dicom_name.find('^', start);
    const std::string part =
        dicom_name.substr(start, caret == std::string::npos ? std::string::npos : caret - start);
    if (!part.empty()) out += (out.empty() ? "" : (component == 1 ? ", " : " ")) + part;
    if (caret == std::string::npos) break;
    start = caret + 1;
    ++component;
  }
  return out.empty() ? dicom_name : out;
}

std::string or_dash(const std::string& text) { return text.empty() ? std::string{"\u2013"} : text; }

std::string verdict_sentence(const check::BeamCheck& beam) {
  const std::string category =
      beam.category
          ? fmt::format(" for a {}{}", category_words(*beam.category),
                        beam.medium == check::Medium::heterogeneous ? " in heterogeneous tissue" : "")
          : std::string{};
  switch (beam.status) {
    case check::Status::within_tolerance: {
      std::string text = fmt::format(
          "The independent dose differs from the planned dose by {} %, inside the \u00B1{} % "
          "allowed{}.",
          signed_fixed(beam.deviation_percent, 1), fixed(beam.tolerance_percent, 1), category);
      if (beam.reason.reason == check::Reason::deviation_within_tolerance_of_point_total) {
        text += fmt::format(" Judged against the dose point's total: {}.", beam.reason.sentence);
      }
      return text;
    }
    case check::Status::outside_tolerance:
      return fmt::format(
          "The independent dose differs from the planned dose by {} %, beyond the \u00B1{} % "
          "allowed{}. Investigate before treatment.",
          signed_fixed(beam.deviation_percent, 1), fixed(beam.tolerance_percent, 1), category);
    case check::Status::not_checked:
      return fmt::format("This beam was not checked: {}.", beam.reason.sentence);
    case check::Status::skipped:
      return fmt::format("Listed and skipped: {}.", beam.reason.sentence);
  }
  return beam.reason.sentence;
}

}  // namespace countersign::report::html
