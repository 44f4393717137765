#include <countersign/service/private_files.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <sys/stat.h>

#include <fstream>
#include <sstream>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;

unsigned mode_of(const fs::path& path) {
  struct stat info {};
  return ::stat(path.c_str(), &info) == 0 ? (info.st_mode & 0777) : 0U;
}

std::string slurp(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

TEST(PrivateFiles, DirectoriesAre0750AndFiles0640WhateverTheUmask) {
  const fs::path dir = test::make_temp_dir("countersign-files");
  const mode_t old_umask = ::umask(0);  // the most permissive umask must not leak into the modes
  const auto made = ensure_private_directory(dir / "a" / "b");
  const auto written = write_file_atomically(dir / "a" / "b" / "result.json", "{}\n");
  ::umask(old_umask);
  ASSERT_TRUE(made) << made.error().message();
  ASSERT_TRUE(written) << written.error().message();
  EXPECT_EQ(mode_of(dir / "a"), 0750U);
  EXPECT_EQ(mode_of(dir / "a" / "b"), 0750U);
  EXPECT_EQ(mode_of(dir / "a" / "b" / "result.json"), 0640U);
  EXPECT_EQ(slurp(dir / "a" / "b" / "result.json"), "{}\n");
  fs::remove_all(dir);
}

TEST(PrivateFiles, AtomicWriteReplacesAndLeavesNoTemporaryFile) {
  const fs::path dir = test::make_temp_dir("countersign-files");
  ASSERT_TRUE(write_file_atomically(dir / "r.json", "first"));
  ASSERT_TRUE(write_file_atomically(dir / "r.json", "second"));
  EXPECT_EQ(slurp(dir / "r.json"), "second");
  std::size_t entries = 0;
  for ([[maybe_unused]] const auto& entry : fs::directory_iterator{dir}) ++entries;
  EXPECT_EQ(entries, 1U);
  EXPECT_FALSE(write_file_atomically(dir / "missing-folder" / "r.json", "x"));
  fs::remove_all(dir);
}

TEST(PrivateFiles, MoveKeepsAnExistingFileUnderAFreeName) {
  const fs::path dir = test::make_temp_dir("countersign-files");
  ASSERT_TRUE(write_file_atomically(dir / "one", "1"));
  ASSERT_TRUE(write_file_atomically(dir / "two", "2"));
  ASSERT_TRUE(write_file_atomically(dir / "target", "0"));
  const auto first = move_file_durably(dir / "one", dir / "target", OnExisting::pick_free_name);
  const auto second = move_file_durably(dir / "two", dir / "target", OnExisting::pick_free_name);
  ASSERT_TRUE(first);
  ASSERT_TRUE(second);
  EXPECT_EQ(first->filename(), "target.2");
  EXPECT_EQ(second->filename(), "target.3");
  EXPECT_EQ(slurp(dir / "target"), "0");
  EXPECT_EQ(slurp(dir / "target.3"), "2");
  EXPECT_FALSE(fs::exists(dir / "one"));
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::service
