// The body outline on a grid: even-odd rasterisation (holes), contour planes to slices, and the
// threshold body (largest component, enclosed cavities filled).

#include <countersign/study/body.hpp>

#include <gtest/gtest.h>

#include <algorithm>

namespace countersign::study {
namespace {

// 10 x 10 x 4 voxels of 1 mm (x, y) and 2 mm (z); centres 0.5 .. 9.5 and z = 1, 3, 5, 7.
VoxelGrid small_grid() {
  VoxelGrid grid;
  grid.size = {10, 10, 4};
  grid.origin_mm = {0.5, 0.5, 1.0};
  grid.spacing_mm = {1.0, 1.0, 2.0};
  return grid;
}

Polygon square(double lo, double hi) { return {{lo, lo}, {hi, lo}, {hi, hi}, {lo, hi}}; }

std::size_t count_slice(const VoxelGrid& grid, const BodyMask& mask, std::size_t k) {
  std::size_t count = 0;
  for (std::size_t j = 0; j < grid.size[1]; ++j)
    for (std::size_t i = 0; i < grid.size[0]; ++i) count += mask.contains(i, j, k);
  return count;
}

TEST(Grid, ContainsAndVoxelAt) {
  const auto grid = small_grid();
  EXPECT_TRUE(grid.contains({0.0, 0.0, 0.0}));  // the outer faces count as inside
  EXPECT_TRUE(grid.contains({10.0, 10.0, 8.0}));
  EXPECT_FALSE(grid.contains({10.01, 5.0, 4.0}));
  EXPECT_EQ(*grid.voxel_at({10.0, 0.2, 8.0}), (std::array<std::size_t, 3>{9, 0, 3}));
  EXPECT_EQ(*grid.voxel_at({3.7, 4.2, 2.5}), (std::array<std::size_t, 3>{3, 4, 1}));
  EXPECT_FALSE(grid.voxel_at({-1.0, 0.0, 0.0}).has_value());
}

TEST(Rasterise, SquareCoversTheCentresInsideIt) {
  const auto grid = small_grid();
  BodyMask mask(grid);
  const std::vector<Polygon> polygons{square(2.0, 7.0)};  // centres 2.5 .. 6.5: 5 x 5
  rasterise_slice(grid, 1, polygons, mask);
  EXPECT_EQ(count_slice(grid, mask, 1), 25u);
  EXPECT_EQ(count_slice(grid, mask, 0), 0u);
  EXPECT_EQ(mask.voxel_count(), 25u);
  EXPECT_TRUE(mask.contains(grid.index(2, 2, 1)));
  EXPECT_FALSE(mask.contains(grid.index(7, 2, 1)));
  ASSERT_EQ(mask.row(2, 1).size(), 1u);  // one run per row
  EXPECT_EQ(mask.row(2, 1)[0].begin, 2u);
  EXPECT_EQ(mask.row(2, 1)[0].end, 7u);
}

TEST(Rasterise, EvenOddRuleMakesHoles) {
  const auto grid = small_grid();
  BodyMask mask(grid);
  const std::vector<Polygon> ring{square(1.0, 9.0), square(3.0, 7.0)};  // 8 x 8 minus 4 x 4
  rasterise_slice(grid, 0, ring, mask);
  EXPECT_EQ(count_slice(grid, mask, 0), 64u - 16u);
  EXPECT_FALSE(mask.contains(5, 5, 0));
  EXPECT_EQ(mask.row(5, 0).size(), 2u);
  EXPECT_FALSE(inside_even_odd(ring, 5.0, 5.0));
  EXPECT_TRUE(inside_even_odd(ring, 2.0, 5.0));
  EXPECT_FALSE(inside_even_odd(ring, 9.5, 5.0));
}

TEST(Rasterise, ScanlineAndPointTestAgreeOnAConcavePolygon) {
  const auto grid = small_grid();
  const std::vector<Polygon> star{{{5.0, 0.3},
                                   {6.2, 3.9},
                                   {9.7, 4.1},
                                   {6.9, 6.2},
                                   {8.1, 9.6},
                                   {5.0, 7.4},
                                   {1.9, 9.6},
                                   {3.1, 6.2},
                                   {0.3, 4.1},
                                   {3.8, 3.9}}};
  BodyMask mask(grid);
  rasterise_slice(grid, 2, star, mask);
  for (std::size_t j = 0; j < 10; ++j)
    for (std::size_t i = 0; i < 10; ++i)
      EXPECT_EQ(mask.contains(i, j, 2), inside_even_odd(star, grid.centre_mm(0, i), grid.centre_mm(1, j)))
          << i << "," << j;
}

TEST(BodyFromContours, PlanesGoToTheNearestSliceAndWhatIsLeftOutIsStated) {
  const auto grid = small_grid();
  const std::vector<PlanarContour> contours{
      {1.0, square(2.0, 7.0)},   // slice 0
      {3.2, square(2.0, 7.0)},   // slice 1 (0.2 mm off its centre)
      {2.6, square(0.0, 10.0)},  // also nearest slice 1, but further away: left out
      {7.0, square(2.0, 7.0)},   // slice 3; slice 2 has none
      {12.0, square(2.0, 7.0)},  // beyond the CT
  };
  const auto body = body_from_contours(grid, contours, 4, "SKIN");
  ASSERT_TRUE(body.has_value());
  EXPECT_EQ(body->voxel_count, 75u);
  EXPECT_EQ(count_slice(grid, body->mask, 2), 0u);
  EXPECT_EQ(body->roi_name, "SKIN");
  ASSERT_EQ(body->slice_polygons.size(), 4u);
  EXPECT_TRUE(body->slice_polygons[2].empty());
  const auto notes = [&] {
    std::string all;
    for (const auto& n : body->notes) all += n + "\n";
    return all;
  }();
  EXPECT_NE(notes.find("1 slices between"), std::string::npos) << notes;
  EXPECT_NE(notes.find("1 contours beyond"), std::string::npos) << notes;
  EXPECT_NE(notes.find("1 contour planes shared a slice"), std::string::npos) << notes;
}

TEST(BodyFromContours, NoContourOnTheCtIsAProblem) {
  const std::vector<PlanarContour> contours{{50.0, square(2.0, 7.0)}};
  const auto body = body_from_contours(small_grid(), contours, 1, "BODY");
  ASSERT_FALSE(body.has_value());
  EXPECT_EQ(body.problem().kind, ProblemKind::body_contour_invalid);
}

CtVolume ct_of(const std::function<int(std::size_t, std::size_t, std::size_t)>& hu) {
  CtVolume ct;
  ct.grid = small_grid();
  ct.hu.resize(ct.grid.voxel_count());
  for (std::size_t k = 0; k < 4; ++k)
    for (std::size_t j = 0; j < 10; ++j)
      for (std::size_t i = 0; i < 10; ++i)
        ct.hu[ct.grid.index(i, j, k)] = static_cast<std::int16_t>(hu(i, j, k));
  return ct;
}

TEST(BodyFromThreshold, LargestComponentWithItsCavitiesFilled) {
  // A 6 x 6 block (i, j in 1..6) with a lung-like -800 HU core (3..4), and a separate 1-voxel
  // object at (9, 9): the object is dropped, the core is filled.
  const auto ct = ct_of([](std::size_t i, std::size_t j, std::size_t) {
    if (i == 9 && j == 9) return 0;
    if (i < 1 || i > 6 || j < 1 || j > 6) return -1000;
    return (i >= 3 && i <= 4 && j >= 3 && j <= 4) ? -800 : 20;
  });
  const auto body = body_from_threshold(ct);
  ASSERT_TRUE(body.has_value());
  EXPECT_EQ(body->source, BodySource::ct_threshold);
  EXPECT_EQ(body->voxel_count, 36u * 4u);
  EXPECT_TRUE(body->mask.contains(3, 3, 2));
  EXPECT_FALSE(body->mask.contains(9, 9, 2));
  EXPECT_TRUE(body->slice_polygons.empty());
  EXPECT_NE(body->notes.front().find("-350"), std::string::npos);
}

TEST(BodyFromThreshold, NothingAboveTheThresholdIsAProblem) {
  const auto body = body_from_threshold(ct_of([](std::size_t, std::size_t, std::size_t) { return -1000; }));
  ASSERT_FALSE(body.has_value());
  EXPECT_EQ(body.problem().kind, ProblemKind::body_not_found);
}

TEST(BodyMaskRows, RowsMustComeInOrderAndSkippedRowsAreEmpty) {
  const auto grid = small_grid();
  BodyMask mask(grid);
  const std::vector<VoxelRun> runs{{1, 3}, {3, 5}, {7, 8}};  // the first two touch: one run
  mask.set_row(4, 1, runs);
  EXPECT_EQ(mask.row(4, 1).size(), 2u);
  EXPECT_EQ(mask.voxel_count(), 5u);
  EXPECT_TRUE(mask.row(3, 1).empty());
  EXPECT_TRUE(mask.row(5, 1).empty());
  EXPECT_THROW(mask.set_row(0, 1, runs), std::logic_error);
  EXPECT_FALSE(mask.contains(0, 4, 1));
  EXPECT_TRUE(mask.contains(4, 4, 1));
  EXPECT_FALSE(mask.contains(6, 4, 1));
  EXPECT_TRUE(mask.contains(7, 4, 1));
}

TEST(BodySource, Codes) {
  EXPECT_EQ(code(BodySource::rtstruct_external), "rtstruct_external");
  EXPECT_EQ(code(BodySource::ct_threshold), "ct_threshold");
}

}  // namespace
}  // namespace countersign::study
