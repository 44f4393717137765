// SHA-256 against the FIPS 180-2 Appendix B examples and against GNU coreutils sha256sum.
#include <countersign/util/sha256.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <string>

namespace countersign::util {
namespace {

TEST(Sha256, FipsExamples) {
  // NIST FIPS 180-2 (2002), Appendix B.1 "abc" and B.2 the 448-bit two-block message.
  EXPECT_EQ(sha256_hex("abc"), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  EXPECT_EQ(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"),
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  // FIPS 180-2 Appendix B.3: one million repetitions of 'a', fed in pieces.
  Sha256 hash;
  const std::string thousand(1000, 'a');
  for (int i = 0; i < 1000; ++i) hash.update(thousand);
  EXPECT_EQ(hash.hex_digest(), "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
}

TEST(Sha256, EmptyInput) {
  // The digest of the empty message, as printed by `sha256sum /dev/null`.
  EXPECT_EQ(sha256_hex(""), "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

TEST(Sha256, AgreesWithCoreutilsAtBlockBoundaries) {
  const std::filesystem::path dir = countersign::test::make_temp_dir("countersign-sha256");
  for (const std::size_t size : {55u, 56u, 63u, 64u, 65u, 119u, 120u, 1000u}) {
    std::string bytes;
    for (std::size_t i = 0; i < size; ++i) bytes += static_cast<char>((i * 37 + 11) % 256);
    const auto file = dir / ("blob" + std::to_string(size));
    std::ofstream(file, std::ios::binary) << bytes;
    const auto result =
        countersign::test::run_command("sha256sum " + countersign::test::quote(file.string()));
    ASSERT_EQ(result.exit_code, 0) << result.err;
    EXPECT_EQ(sha256_hex(bytes), result.out.substr(0, 64)) << size;
  }
  std::filesystem::remove_all(dir);
}

}  // namespace
}  // namespace countersign::util
