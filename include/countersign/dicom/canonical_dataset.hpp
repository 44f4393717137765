#pragma once

// The content of a DICOM object in one fixed encoding, so that the same dataset sent again in
// another transfer syntax (implicit or explicit VR, little or big endian, deflated) is recognised
// as the same: its hash, not the hash of the file's bytes, says whether a plan was seen before.

#include <countersign/util/error.hpp>

#include <cstddef>
#include <span>
#include <string>

namespace countersign::dicom {

// The dataset of a DICOM object (Part 10 bytes, or a bare dataset in implicit VR little endian)
// re-encoded as Implicit VR Little Endian with explicit lengths for every sequence and item, without
// group lengths, without trailing padding and without the meta header. Implicit VR carries no VR,
// so an attribute that one encoding names with its VR and another leaves as UN (a private attribute
// sent in implicit VR) encodes alike; the meta header is left out because it describes the transfer
// (transfer syntax, sending AE title, implementation), not the content. Errors (kind not_dicom or
// truncated) name `display_name`.
[[nodiscard]] Expected<std::string> canonical_dataset_bytes(std::span<const std::byte> bytes,
                                                            const std::string& display_name);

}  // namespace countersign::dicom
