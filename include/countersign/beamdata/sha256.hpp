#pragma once

// SHA-256 lives in util (it knows nothing of beam data); these names keep older includes working.

#include <countersign/util/sha256.hpp>

namespace countersign::beamdata {

using util::Sha256;
using util::sha256_hex;

}  // namespace countersign::beamdata
