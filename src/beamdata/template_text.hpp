#pragma once

// The texts of the template library: the commented manifest and the README of what to measure.

#include <countersign/beamdata/library_template.hpp>

#include <string>

namespace countersign::beamdata::detail {

[[nodiscard]] std::string template_manifest(const TemplateRequest& request);
[[nodiscard]] std::string template_readme(const TemplateRequest& request);

}  // namespace countersign::beamdata::detail
