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

void test_write(const fs::path& file, const std::string& text) {
  std::ofstream{file, std::ios::binary} << text;
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

TEST(PrivateFiles, AGroupOfFilesIsWrittenAtomicallyAndTogether) {
  const fs::path dir = test::make_temp_dir("countersign-files");
  test_write(dir / "a.json", "old");
  {
    AtomicFileGroup group;
    ASSERT_TRUE(group.add(dir / "a.json", "new a"));
    ASSERT_TRUE(group.add(dir / "b.html", "new b"));
    ASSERT_TRUE(group.add(dir / "a.json", "newer a"));  // a later file of the same target wins
    // Nothing replaced before the commit: a reader still sees the old file, and no new name.
    EXPECT_EQ(slurp(dir / "a.json"), "old");
    EXPECT_FALSE(fs::exists(dir / "b.html"));
    const auto committed = group.commit();
    ASSERT_TRUE(committed) << committed.error().message();
    EXPECT_EQ(*committed, 3U);
  }
  EXPECT_EQ(slurp(dir / "a.json"), "newer a");
  EXPECT_EQ(slurp(dir / "b.html"), "new b");
  EXPECT_EQ(mode_of(dir / "b.html"), 0640U);
  std::size_t names = 0;
  for ([[maybe_unused]] const auto& entry : fs::directory_iterator{dir}) ++names;
  EXPECT_EQ(names, 2U);  // no temporary left

  {  // Dropped without a commit: the temporaries go, the targets stay as they were.
    AtomicFileGroup abandoned;
    ASSERT_TRUE(abandoned.add(dir / "a.json", "never"));
  }
  EXPECT_EQ(slurp(dir / "a.json"), "newer a");
  names = 0;
  for ([[maybe_unused]] const auto& entry : fs::directory_iterator{dir}) ++names;
  EXPECT_EQ(names, 2U);
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::service
