#pragma once

// Reading the keys of one machine.toml: each bad or missing key becomes a Problem with the manifest
// line and the key path ("beam[2].calibration.ssd_cm"), and reading carries on so that every
// problem of a manifest is reported in one pass.

#include <countersign/beamdata/problem.hpp>

#include <toml++/toml.h>

#include <initializer_list>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::beamdata::detail {

enum class Presence { required, optional };

// The placeholders `beamdata new` writes for values a physicist must fill in: nan for numbers,
// "?" for text. Reported as "not filled in yet", never as a value.
inline constexpr std::string_view text_placeholder = "?";
inline constexpr std::string_view not_filled_in_rule = "not filled in yet (template placeholder)";

class ManifestReader {
 public:
  ManifestReader(std::string file, std::vector<Problem>& problems)
      : file_(std::move(file)), problems_(problems) {}

  void problem(const toml::node* where, std::string key, std::string message,
               Severity severity = Severity::error, std::string rule = {});

  // A number in [min_value, max_value]; integers are accepted as numbers.
  std::optional<double> number(const toml::table& table, std::string_view key, const std::string& path,
                               double min_value, double max_value, Presence presence = Presence::required);

  // A non-empty string.
  std::optional<std::string> text(const toml::table& table, std::string_view key, const std::string& path,
                                  Presence presence = Presence::required);

  // A string that must be one of `allowed` (exact).
  std::optional<std::string> choice(const toml::table& table, std::string_view key, const std::string& path,
                                    std::initializer_list<std::string_view> allowed, Presence presence);

  // An array of non-empty strings; absent is an empty list.
  std::vector<std::string> text_list(const toml::table& table, std::string_view key, const std::string& path);

  // An array of exactly two numbers [low, high], each in [min_value, max_value], low < high.
  std::optional<std::pair<double, double>> number_pair(const toml::table& table, std::string_view key,
                                                       const std::string& path, double min_value,
                                                       double max_value);

  const toml::table* sub_table(const toml::table& table, std::string_view key, const std::string& path);

  // Tables of an array of tables ([[beam]], [[beam.wedge]]); missing is an empty list.
  std::vector<const toml::table*> table_array(const toml::table& table, std::string_view key,
                                              const std::string& path);

  // A key the format does not know is most likely a typing error in an optional key (which would
  // otherwise be silently absent); reported as a warning so newer libraries still load.
  void unknown_keys(const toml::table& table, std::initializer_list<std::string_view> known,
                    const std::string& path);

  // True when the key is present (whatever its value).
  [[nodiscard]] static bool has(const toml::table& table, std::string_view key) {
    return table.get(key) != nullptr;
  }

  [[nodiscard]] const std::string& file() const { return file_; }
  [[nodiscard]] std::vector<Problem>& problems() { return problems_; }

 private:
  std::optional<double> checked_number(const toml::node& node, const std::string& name, double min_value,
                                       double max_value);

  std::string file_;
  std::vector<Problem>& problems_;
};

// "beam[2]." style key paths.
[[nodiscard]] std::string indexed_path(const std::string& parent, std::string_view key, std::size_t index);

}  // namespace countersign::beamdata::detail
