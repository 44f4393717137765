// Independent cross-check of the CT volume: pydicom (Debian's python3-pydicom, not DCMTK) reads the
// same files through tests/dicom/pydicom_ct_geometry.py, placing every pixel from Image Position,
// Image Orientation and Pixel Spacing and applying the rescale; grid, HU sum and HU-weighted
// position moments must equal ours.

#include "study_fixture.hpp"

#include <fmt/format.h>
#include <cmath>
#include <map>
#include <sstream>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;

std::map<std::string, std::vector<std::string>> pydicom_view(const fs::path& folder) {
  const auto python = python_with_pydicom();
  if (!python)
    throw std::runtime_error(
        "python3-pydicom is needed for the cross-check (apt-get install python3-pydicom)");
  const auto script = source_dir() / "tests/dicom/pydicom_ct_geometry.py";
  const auto result = run_command(*python + " " + quote(script.string()) + " " + quote(folder.string()));
  if (result.exit_code != 0) throw std::runtime_error("pydicom_ct_geometry.py: " + result.err);
  std::map<std::string, std::vector<std::string>> lines;
  std::istringstream in(result.out);
  for (std::string line; std::getline(in, line);) {
    std::istringstream words(line);
    std::string key;
    words >> key;
    for (std::string word; words >> word;) lines[key].push_back(word);
  }
  return lines;
}

void expect_same_as_pydicom(const study::Study& study, const fs::path& folder) {
  auto theirs = pydicom_view(folder);
  const auto& ct = study.ct;
  const auto& g = ct.grid;
  for (int a = 0; a < 3; ++a) {
    EXPECT_EQ(std::to_string(g.size[a]), theirs["size"].at(a));
    EXPECT_NEAR(g.origin_mm[a], std::stod(theirs["origin"].at(a)), 1e-9) << "axis " << a;
    EXPECT_NEAR(g.spacing_mm[a], std::stod(theirs["spacing"].at(a)), 1e-9) << "axis " << a;
  }
  double sum = 0.0;
  std::array<double, 3> moments{};
  for (std::size_t k = 0; k < g.size[2]; ++k) {
    for (std::size_t j = 0; j < g.size[1]; ++j) {
      for (std::size_t i = 0; i < g.size[0]; ++i) {
        const double hu = ct.hu_at(i, j, k);
        sum += hu;
        moments[0] += hu * g.centre_mm(0, i);
        moments[1] += hu * g.centre_mm(1, j);
        moments[2] += hu * g.centre_mm(2, k);
      }
    }
  }
  EXPECT_EQ(sum, std::stod(theirs["hu_sum"].at(0)));
  for (int a = 0; a < 3; ++a) {
    const double expected = std::stod(theirs["hu_moments"].at(a));
    EXPECT_NEAR(moments[a], expected, 1e-9 * std::max(1.0, std::abs(expected))) << "axis " << a;
  }
  EXPECT_EQ(ct.frame_of_reference_uid, theirs["frame"].at(0));
  EXPECT_EQ(ct.series_instance_uid, theirs["series"].at(0));
  EXPECT_EQ(ct.station_name, theirs["station"].at(0));
  EXPECT_EQ(ct.slice_sop_instance_uids, theirs["slices"]);
}

class CtMatchesPydicom : public ::testing::TestWithParam<std::string> {};

TEST_P(CtMatchesPydicom, GridAndValues) {
  const auto study = load_demo_study(GetParam());
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  expect_same_as_pydicom(*study, demo_study(GetParam()));
}

INSTANTIATE_TEST_SUITE_P(Demo, CtMatchesPydicom,
                         ::testing::Values("fern_lung_slab", "fern_breast", "fern_oblique"));

// Rows running towards -x and columns towards -y (as a prone scan stores them): the reader must
// reorder the pixels so that its indices increase along +x and +y, and land where pydicom puts them.
TEST(CtMatchesPydicomMirrored, RowsAndColumnsReversed) {
  const StudyCopy copy("fern_lung_slab");
  for (int k = 1; k <= 20; ++k) {
    const double z = -47.5 + 5.0 * (k - 1);
    copy.modify(
        fmt::format("CT{:03d}.dcm", k),
        fmt::format("-m \"(0020,0037)=-1\\\\0\\\\0\\\\0\\\\-1\\\\0\" -m \"(0020,0032)=157.5\\\\157.5\\\\{}\"",
                    z));
  }
  const auto study = copy.load();
  ASSERT_TRUE(study.has_value()) << study.problem().message();
  EXPECT_EQ(study->ct.grid.origin_mm, (std::array<double, 3>{-157.5, -157.5, -47.5}));
  expect_same_as_pydicom(*study, copy.dir());
}

}  // namespace
}  // namespace countersign::test
