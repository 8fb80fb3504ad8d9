#include "pipeline/report/plot.hpp"

#include <gtest/gtest.h>

#include "pipeline/errors.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::report {
namespace {

using testing::ScratchDir;

TEST(Ticks, FallOnOneTwoFiveStepsInsideTheRange) {
  // Heckbert (Graphics Gems, 1990): steps are 1, 2 or 5 times a power of ten.
  Ticks t = nice_ticks({0, 1}, 6);
  EXPECT_EQ(t.values, (std::vector<double>{0, 0.2, 0.4, 0.6000000000000001, 0.8, 1.0}));
  EXPECT_EQ(t.decimals, 1);
  t = nice_ticks({-2.3, 7.9}, 6);
  EXPECT_EQ(t.values, (std::vector<double>{-2, 0, 2, 4, 6}));
  EXPECT_EQ(t.decimals, 0);
  t = nice_ticks({0, 360}, 8);
  EXPECT_EQ(t.values.front(), 0);
  EXPECT_EQ(t.values.back(), 350);  // step 50
  EXPECT_TRUE(nice_ticks({1, 1}).values.empty());
}

TEST(Ticks, NiceRangeHoldsEveryFiniteValueOnWholeSteps) {
  const Range r = nice_range({0.13, -1.72, NAN, 2.41});
  EXPECT_LE(r.lo, -1.72);
  EXPECT_GE(r.hi, 2.41);
  EXPECT_DOUBLE_EQ(r.lo, -2.0);
  EXPECT_DOUBLE_EQ(r.hi, 3.0);
  const Range empty = nice_range({NAN});
  EXPECT_EQ(empty.lo, 0);
  EXPECT_EQ(empty.hi, 1);
  const Range single = nice_range({5.0});
  EXPECT_LT(single.lo, 5.0);
  EXPECT_GT(single.hi, 5.0);
}

TEST(Ticks, LabelsUseATrueMinusAndNoNegativeZero) {
  EXPECT_EQ(tick_label(-0.5, 1), "\u22120.5");
  EXPECT_EQ(tick_label(-0.0001, 1), "0.0");
  EXPECT_EQ(tick_label(12, 0), "12");
}

TEST(Canvas, WritesAnSvgWithOnePathPerLineAndBreaksAtMissingValues) {
  ScratchDir dir;
  const auto file = dir / "plot.svg";
  {
    Canvas c(file, 200, 150);
    Axes a(c, 30, 10, 160, 110, {0, 4}, {0, 4});
    a.frame("x (m)", "C_p");
    a.line({0, 1, NAN, 3, 4}, {0, 1, 2, 3, 4}, Stroke{ink::kCycle, 1.0, ink::kCycleOpacity});
    c.finish();
  }
  const std::string svg = testing::read_text(file);
  ASSERT_EQ(svg.rfind("<?xml", 0), 0u) << svg.substr(0, 80);
  // One stroke with the cycle opacity, made of two separate runs (two move-tos).
  std::size_t count = 0, at = 0;
  while ((at = svg.find("stroke-opacity:0.35", at)) != std::string::npos) {
    ++count;
    ++at;
  }
  EXPECT_EQ(count, 1u);
  const auto style = svg.find("stroke-opacity:0.35");
  const auto open = svg.rfind("<path", style), close = svg.find("/>", style);
  const std::string element = svg.substr(open, close - open);
  const auto d = element.find(" d=\"");
  ASSERT_NE(d, std::string::npos) << element;
  const std::string dpath = element.substr(d, element.find('"', d + 4) - d);
  EXPECT_EQ(std::count(dpath.begin(), dpath.end(), 'M'), 2) << dpath;
}

TEST(Canvas, AFolderThatCannotBeWrittenIsAnInputErrorNamingTheFile) {
  try {
    Canvas c("/nonexistent-folder/plot.svg", 100, 100);
    c.finish();
    FAIL() << "expected InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("/nonexistent-folder/plot.svg"), std::string::npos) << e.what();
  }
}

}  // namespace
}  // namespace stallscope::report
