#pragma once

// Strict RT Plan reader: a DICOM RT Plan (file or in-memory bytes) becomes a plan::Plan value.
// Every attribute the dose depends on is checked; any problem is an Error naming the file, the
// DICOM keyword and its tag. Nothing is defaulted: an absent optional attribute stays std::nullopt.
// Reads implicit VR little endian, explicit VR little and big endian and deflated files.

#include <countersign/plan/plan.hpp>
#include <countersign/util/error.hpp>

#include <cstddef>
#include <filesystem>
#include <span>
#include <string>

namespace countersign::dicom {

// SOP Class UID of RT Plan Storage, the only SOP class this reader accepts.
inline constexpr const char* rt_plan_storage_uid = "1.2.840.10008.5.1.4.1.1.481.5";

// Reads a DICOM file (Part 10 file with meta header, or a bare dataset in implicit VR LE).
[[nodiscard]] Expected<plan::Plan> read_plan_file(const std::filesystem::path& path);

// Reads a DICOM object held in memory (Part 10 bytes, or a bare dataset in implicit VR LE), e.g.
// one received over the network. display_name stands for the file name in messages and in
// Plan::source_file.
[[nodiscard]] Expected<plan::Plan> read_plan_bytes(std::span<const std::byte> bytes,
                                                   std::string display_name);

}  // namespace countersign::dicom
