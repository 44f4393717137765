#pragma once

// Where `history`, `review`, `audit verify` and `send` find the history: --db (an SQLite file or a
// PostgreSQL connection URI) or --results (a results folder: its history.sqlite), else
// ./history.sqlite.

#include <countersign/store/store.hpp>
#include <countersign/util/error.hpp>

#include <CLI/CLI.hpp>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>

namespace countersign::cli {

struct StoreFlags {
  std::string db;
  std::string results;
};

void add_store_options(CLI::App& command, StoreFlags& flags);
[[nodiscard]] store::StoreLocation store_location_from(const StoreFlags& flags);
// The results folder the flags name: --results, else the folder of an SQLite --db; none for PostgreSQL.
[[nodiscard]] std::optional<std::filesystem::path> results_folder_from(const StoreFlags& flags);
[[nodiscard]] Expected<std::unique_ptr<store::Store>> open_store(const StoreFlags& flags,
                                                                 store::Access access);

// The operating-system user running this program (the reviewer of `countersign review`).
[[nodiscard]] std::string operating_system_user();

// "a1b2c3d4…": the start of a SHA-256, as people compare them.
[[nodiscard]] std::string brief_hash(const std::string& hash);
// "beam data a1b2… → c3d4…, tolerance policy …": what changed against the replaced check.
[[nodiscard]] std::string inputs_changed_text(const store::CheckRecord& check);

}  // namespace countersign::cli
