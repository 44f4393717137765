#include "manifest_reader.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

namespace countersign::beamdata::detail {

namespace {
std::optional<double> as_number(const toml::node& node) {
  if (const auto* f = node.as_floating_point()) return f->get();
  if (const auto* i = node.as_integer()) return static_cast<double>(i->get());
  return std::nullopt;
}
}  // namespace

std::string indexed_path(const std::string& parent, std::string_view key, std::size_t index) {
  return parent + std::string{key} + "[" + std::to_string(index + 1) + "].";
}

void ManifestReader::problem(const toml::node* where, std::string key, std::string message, Severity severity,
                             std::string rule) {
  std::optional<std::size_t> line;
  if (where != nullptr && where->source().begin.line > 0) line = where->source().begin.line;
  problems_.push_back(Problem{file_, line, std::nullopt, std::nullopt, std::move(key), std::move(message),
                              severity, std::move(rule)});
}

std::optional<double> ManifestReader::checked_number(const toml::node& node, const std::string& name,
                                                     double min_value, double max_value) {
  const std::optional<double> value = as_number(node);
  if (!value) {
    problem(&node, name, "not a number");
    return std::nullopt;
  }
  if (std::isnan(*value)) {
    problem(&node, name, "nan: " + std::string{not_filled_in_rule}, Severity::error,
            std::string{not_filled_in_rule});
    return std::nullopt;
  }
  if (!std::isfinite(*value) || *value < min_value || *value > max_value) {
    std::ostringstream message;
    message << *value << " is outside the plausible range [" << min_value << ", " << max_value << "]";
    problem(&node, name, message.str());
    return std::nullopt;
  }
  return value;
}

std::optional<double> ManifestReader::number(const toml::table& table, std::string_view key,
                                             const std::string& path, double min_value, double max_value,
                                             Presence presence) {
  const toml::node* node = table.get(key);
  const std::string name = path + std::string{key};
  if (node == nullptr) {
    if (presence == Presence::required) problem(&table, name, "missing");
    return std::nullopt;
  }
  return checked_number(*node, name, min_value, max_value);
}

std::optional<std::string> ManifestReader::text(const toml::table& table, std::string_view key,
                                                const std::string& path, Presence presence) {
  const toml::node* node = table.get(key);
  const std::string name = path + std::string{key};
  if (node == nullptr) {
    if (presence == Presence::required) problem(&table, name, "missing");
    return std::nullopt;
  }
  const auto* s = node->as_string();
  if (s == nullptr || s->get().empty()) {
    problem(node, name, "not a non-empty string");
    return std::nullopt;
  }
  if (s->get() == text_placeholder) {
    problem(node, name, "\"?\": " + std::string{not_filled_in_rule}, Severity::error,
            std::string{not_filled_in_rule});
    return std::nullopt;
  }
  return s->get();
}

std::optional<std::string> ManifestReader::choice(const toml::table& table, std::string_view key,
                                                  const std::string& path,
                                                  std::initializer_list<std::string_view> allowed,
                                                  Presence presence) {
  auto value = text(table, key, path, presence);
  if (!value || std::find(allowed.begin(), allowed.end(), *value) != allowed.end()) return value;
  std::string list;
  for (const auto a : allowed) list += (list.empty() ? "\"" : ", \"") + std::string{a} + "\"";
  problem(table.get(key), path + std::string{key}, "\"" + *value + "\" is not one of " + list);
  return std::nullopt;
}

std::vector<std::string> ManifestReader::text_list(const toml::table& table, std::string_view key,
                                                   const std::string& path) {
  std::vector<std::string> result;
  const toml::node* node = table.get(key);
  if (node == nullptr) return result;
  const auto* array = node->as_array();
  if (array == nullptr) {
    problem(node, path + std::string{key}, "not an array of strings");
    return result;
  }
  for (const auto& element : *array) {
    const auto* s = element.as_string();
    if (s == nullptr || s->get().empty()) {
      problem(&element, path + std::string{key}, "element is not a non-empty string");
      continue;
    }
    result.push_back(s->get());
  }
  return result;
}

std::optional<std::pair<double, double>> ManifestReader::number_pair(const toml::table& table,
                                                                     std::string_view key,
                                                                     const std::string& path,
                                                                     double min_value, double max_value) {
  const toml::node* node = table.get(key);
  if (node == nullptr) return std::nullopt;
  const std::string name = path + std::string{key};
  const auto* array = node->as_array();
  if (array == nullptr || array->size() != 2) {
    problem(node, name, "not an array of two numbers [low, high]");
    return std::nullopt;
  }
  const auto low = checked_number(*array->get(0), name, min_value, max_value);
  const auto high = checked_number(*array->get(1), name, min_value, max_value);
  if (!low || !high) return std::nullopt;
  if (!(*low < *high)) {
    std::ostringstream message;
    message << "[" << *low << ", " << *high << "]: the first value must be below the second";
    problem(node, name, message.str());
    return std::nullopt;
  }
  return std::pair{*low, *high};
}

const toml::table* ManifestReader::sub_table(const toml::table& table, std::string_view key,
                                             const std::string& path) {
  const toml::node* node = table.get(key);
  if (node == nullptr || node->as_table() == nullptr) {
    problem(node != nullptr ? node : &table, path + std::string{key}, node ? "not a table" : "missing table");
    return nullptr;
  }
  return node->as_table();
}

std::vector<const toml::table*> ManifestReader::table_array(const toml::table& table, std::string_view key,
                                                            const std::string& path) {
  std::vector<const toml::table*> result;
  const toml::node* node = table.get(key);
  if (node == nullptr) return result;
  const auto* array = node->as_array();
  if (array == nullptr) {
    problem(node, path + std::string{key}, "not an array of tables");
    return result;
  }
  for (const auto& element : *array) {
    if (const auto* t = element.as_table()) {
      result.push_back(t);
    } else {
      problem(&element, path + std::string{key}, "element is not a table");
    }
  }
  return result;
}

void ManifestReader::unknown_keys(const toml::table& table, std::initializer_list<std::string_view> known,
                                  const std::string& path) {
  for (const auto& [key, node] : table) {
    if (std::find(known.begin(), known.end(), key.str()) == known.end()) {
      problem(&node, path + std::string{key.str()}, "unknown key, ignored (misspelt?)", Severity::warning);
    }
  }
}

}  // namespace countersign::beamdata::detail
