#pragma once

// The INVENTED RT Plans made on the demo phantoms, written with make_demo_plans' plan writer, and
// the geometry of each beam as the generator knows it from the phantom's polygons (not from the CT):
// the central axis's entry into the body, SSD, depth and radiological depth of the dose point.

#include "phantom.hpp"

#include <filesystem>
#include <string>
#include <vector>

namespace make_demo_studies {

struct BeamGeometry {
  std::string plan_file;
  int beam_number = 0;
  std::string beam_name;
  double gantry_deg = 0.0;
  std::array<double, 3> isocenter_mm{};
  std::array<double, 3> entry_mm{};    // where the central axis enters the body
  double ssd_mm = 0.0;                 // source to entry
  double depth_mm = 0.0;               // entry to the dose point (the isocentre)
  double radiological_depth_mm = 0.0;  // with demo_density()
};

// Writes the phantom's plans into dir and returns the geometry of every beam.
std::vector<BeamGeometry> write_study_plans(const PhantomSpec& phantom, const std::filesystem::path& dir);

}  // namespace make_demo_studies
