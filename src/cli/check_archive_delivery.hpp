#pragma once

// The network program's ArchiveDelivery for `check --send-to` (check_archive_delivery.cpp).

#include <countersign/cli/archive_delivery.hpp>

namespace countersign::cli {

// An error for a destination that is not AE@HOST:PORT, a bad calling AE title or an unusable outbox.
[[nodiscard]] Expected<std::unique_ptr<ArchiveDelivery>> open_outbox_delivery(const ArchiveRequest& request,
                                                                              std::ostream& notes);

}  // namespace countersign::cli
