// Reading and writing single CSV tables (beamdata/FORMAT.md "CSV tables").
#include <countersign/beamdata/csv.hpp>

#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

#include <sstream>

namespace countersign::beamdata {
namespace {

using testing::TempDir;

TEST(Csv, ReadsCommentsBlankLinesBomAndSpaces) {
  const TempDir dir;
  const auto file = dir.path() / "pdd.csv";
  testing::write_text(
      file, "\xEF\xBB\xBF# comment\n\n  # indented comment\ndepth_cm, 5 ,10\n1.5,100,100\n\n10,62.5,+66.7\n");
  const auto table = read_table2d(file, "pdd", "depth_cm", "field_cm");
  ASSERT_TRUE(table) << table.error().message();
  EXPECT_EQ(table->columns(), (std::vector<double>{5.0, 10.0}));
  EXPECT_EQ(table->rows(), (std::vector<double>{1.5, 10.0}));
  EXPECT_DOUBLE_EQ(table->cell(1, 1), 66.7);
  EXPECT_EQ(table->quantity(), "pdd");
}

TEST(Csv, WriteThenReadGivesTheSameTable) {
  const Table2D original{"t.csv",
                         "tmr",
                         "depth_cm",
                         {0.0, 1.5, 10.0},
                         "field_cm",
                         {4.0, 10.0},
                         {0.5, 0.55, 1.0, 1.0, 0.7123, 0.7747}};
  const TempDir dir;
  std::ostringstream text;
  write_table(text, original, {"INVENTED test data"}, 4);
  EXPECT_EQ(text.str(),
            "# INVENTED test data\ndepth_cm,4,10\n0,0.5000,0.5500\n1.5,1.0000,1.0000\n10,0.7123,0.7747\n");
  testing::write_text(dir.path() / "t.csv", text.str());
  const auto back = read_table2d(dir.path() / "t.csv", "tmr", "depth_cm", "field_cm");
  ASSERT_TRUE(back);
  EXPECT_EQ(back->rows(), original.rows());
  EXPECT_EQ(back->columns(), original.columns());
  for (std::size_t r = 0; r < 3; ++r)
    for (std::size_t c = 0; c < 2; ++c) EXPECT_DOUBLE_EQ(back->cell(r, c), original.cell(r, c));

  const Table1D sc{"sc.csv", "sc", "field_cm", {4.0, 10.0}, {0.95, 1.0}};
  std::ostringstream one;
  write_table(one, sc, {}, 3);
  EXPECT_EQ(one.str(), "field_cm,sc\n4,0.950\n10,1.000\n");
}

struct BadCase {
  const char* name;
  const char* text;
  const char* expected;  // substring of the message
};

TEST(Csv, EveryFormatRuleNamesRowAndColumn) {
  const BadCase cases[] = {
      {"missing", "depth_cm,5,10\n1.5,100,\n", "row 2, column 3: pdd: missing value"},
      {"text", "depth_cm,5,10\n1.5,100,abc\n", "row 2, column 3: pdd: 'abc' is not a number"},
      {"nan", "depth_cm,5,10\n1.5,nan,100\n", "row 2, column 2: pdd: 'nan' is not a finite number"},
      {"inf", "depth_cm,5,10\n1.5,100,inf\n", "row 2, column 3: pdd: 'inf' is not a finite number"},
      {"short row", "# c\ndepth_cm,5,10\n1.5,100\n", "row 3: pdd: 2 cells, the header has 3"},
      {"long row", "depth_cm,5,10\n1.5,100,100,100\n", "row 2: pdd: 4 cells, the header has 3"},
      {"rows not increasing", "depth_cm,5,10\n2,90,90\n1.5,100,100\n",
       "row 3, column 1: pdd: depth_cm not strictly increasing (1.5 after 2)"},
      {"repeated row", "depth_cm,5,10\n2,90,90\n2,90,90\n",
       "row 3, column 1: pdd: depth_cm not strictly increasing"},
      {"columns not increasing", "depth_cm,10,5\n1.5,100,100\n",
       "row 1, column 3: pdd: field_cm not strictly increasing (5 after 10)"},
      {"bad header", "field_cm,5,10\n1.5,100,100\n",
       "row 1, column 1: pdd: first header cell is 'field_cm', expected 'depth_cm'"},
      {"header only", "depth_cm,5,10\n", "header only, no data rows"},
      {"empty", "# nothing\n", "no header row and no data"},
  };
  const TempDir dir;
  for (const auto& c : cases) {
    const auto file = dir.path() / "pdd.csv";
    testing::write_text(file, c.text);
    const auto table = read_table2d(file, "pdd", "depth_cm", "field_cm");
    ASSERT_FALSE(table) << c.name;
    EXPECT_EQ(table.error().kind, ErrorKind::bad_beamdata) << c.name;
    EXPECT_NE(table.error().message().find(c.expected), std::string::npos)
        << c.name << ": " << table.error().message();
    EXPECT_EQ(table.error().file, file.string()) << c.name;
  }
}

TEST(Csv, OneAxisHeaderMustNameTheQuantity) {
  const TempDir dir;
  testing::write_text(dir.path() / "sc.csv", "field_cm,sp\n10,1.0\n");
  const auto swapped = read_table1d(dir.path() / "sc.csv", "sc");
  ASSERT_FALSE(swapped);
  EXPECT_NE(swapped.error().message().find("header must be 'field_cm,sc'"), std::string::npos);
  testing::write_text(dir.path() / "sc.csv", "field_cm,sc\n10,1.0\n5\n");
  EXPECT_NE(
      read_table1d(dir.path() / "sc.csv", "sc").error().message().find("row 3: sc: 1 cells, expected 2"),
      std::string::npos);
}

TEST(Csv, UnreadableFileIsAnIoError) {
  const TempDir dir;
  const auto table = read_table1d(dir.path() / "absent.csv", "sc");
  ASSERT_FALSE(table);
  EXPECT_EQ(table.error().kind, ErrorKind::io);
}

}  // namespace
}  // namespace countersign::beamdata
