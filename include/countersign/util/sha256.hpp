#pragma once

// SHA-256 (FIPS 180-4): fingerprints of beam-data libraries and of received plan files, so a result
// can name the exact data it was computed from and a plan is checked once per content.

#include <array>
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

namespace countersign::util {

class Sha256 {
 public:
  Sha256();
  void update(std::string_view bytes);
  // The digest as 64 lower-case hex digits; the object must not be updated afterwards.
  [[nodiscard]] std::string hex_digest();

 private:
  void compress(const std::uint8_t* block);
  std::array<std::uint32_t, 8> state_;
  std::array<std::uint8_t, 64> buffer_{};
  std::size_t buffered_ = 0;
  std::uint64_t total_bytes_ = 0;
};

[[nodiscard]] std::string sha256_hex(std::string_view bytes);

}  // namespace countersign::util
