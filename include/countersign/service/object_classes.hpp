#pragma once

// The DICOM storage SOP classes the services take, and what becomes of each: an RT Plan is checked,
// a CT image or an RT Structure Set is kept in the study store for the plans made on it, and the
// other RT objects a planning system or archive sends along with a plan are logged and discarded
// (never quarantined: they are not faults). UIDs from DICOM PS3.4 Annex B.5 (Standard SOP Classes).

#include <array>
#include <optional>
#include <string_view>

namespace countersign::service {

enum class ObjectRole { plan, study, discarded };

struct StorageClass {
  const char* sop_class_uid;
  const char* name;
  const char* file_prefix;  // of the files the receiver stores it under
  ObjectRole role;
};

inline constexpr std::array storage_classes{
    StorageClass{"1.2.840.10008.5.1.4.1.1.481.5", "RT Plan", "RP", ObjectRole::plan},
    StorageClass{"1.2.840.10008.5.1.4.1.1.2", "CT Image", "CT", ObjectRole::study},
    StorageClass{"1.2.840.10008.5.1.4.1.1.481.3", "RT Structure Set", "RS", ObjectRole::study},
    StorageClass{"1.2.840.10008.5.1.4.1.1.481.2", "RT Dose", "RD", ObjectRole::discarded},
    StorageClass{"1.2.840.10008.5.1.4.1.1.481.1", "RT Image", "RI", ObjectRole::discarded},
    StorageClass{"1.2.840.10008.5.1.4.1.1.481.4", "RT Beams Treatment Record", "RT", ObjectRole::discarded},
    StorageClass{"1.2.840.10008.5.1.4.1.1.481.6", "RT Brachy Treatment Record", "RT", ObjectRole::discarded},
    StorageClass{"1.2.840.10008.5.1.4.1.1.481.7", "RT Treatment Summary Record", "RT", ObjectRole::discarded},
    StorageClass{"1.2.840.10008.5.1.4.1.1.481.9", "RT Ion Beams Treatment Record", "RT",
                 ObjectRole::discarded},
};

// The class with this UID, when the services take it.
[[nodiscard]] constexpr std::optional<StorageClass> storage_class(std::string_view sop_class_uid) {
  for (const auto& c : storage_classes) {
    if (sop_class_uid == c.sop_class_uid) return c;
  }
  return std::nullopt;
}

}  // namespace countersign::service
