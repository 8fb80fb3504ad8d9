// One frame's reduction, shared by [piv] and the onset map of [vortex]: the
// archived recipe reads back to the same settings, the signed swirl map turns
// with the vortex, and flagged frames say why.
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

#include "pipeline/errors.hpp"
#include "stages/piv/frame_reduction.hpp"
#include "tests/piv/piv_fields.hpp"

namespace stallscope::piv {
namespace {

TEST(FrameRecipe, ReadsBackFromItsArchiveTable) {
  RecipeRecord record;
  FrameRecipe& r = record.recipe;
  r.to_m_s = 0.4166;
  r.median = {2.5, 0.07, 4};
  r.max_replaced_fraction = 0.15;
  r.scheme = GradientScheme::kLeastSquares;
  r.placement = {0.15, 0.25, 0.012, -0.004, 1.5};
  r.section = mask_section("NACA 0012", "run/airfoil");
  r.mask_offset_over_c = 0.02;
  record.file = "/campaign/run1/piv.h5";
  record.text_units = "px/frame";
  const Table t = recipe_table(record);
  EXPECT_EQ(t.rows(), 1u);
  EXPECT_EQ(t.find("median_epsilon_m_s")->units, "m/s");
  const RecipeRecord back = recipe_from_table(t, r.section);
  EXPECT_EQ(back.file, record.file);
  EXPECT_EQ(back.text_units, "px/frame");
  EXPECT_EQ(back.recipe.to_m_s, r.to_m_s);
  EXPECT_EQ(back.recipe.median.threshold, 2.5);
  EXPECT_EQ(back.recipe.median.epsilon, 0.07);
  EXPECT_EQ(back.recipe.median.min_neighbours, 4);
  EXPECT_EQ(back.recipe.max_replaced_fraction, 0.15);
  EXPECT_EQ(back.recipe.scheme, GradientScheme::kLeastSquares);
  EXPECT_EQ(back.recipe.placement.pivot_x_m, 0.012);
  EXPECT_EQ(back.recipe.placement.pivot_y_m, -0.004);
  EXPECT_EQ(back.recipe.placement.chord_angle_offset_deg, 1.5);
  EXPECT_EQ(back.recipe.mask_offset_over_c, 0.02);
  EXPECT_TRUE(back.recipe.section.has_value());
  r.section.reset();
  EXPECT_FALSE(recipe_from_table(recipe_table(record), mask_section("NACA 0012", "x")).recipe.section.has_value());
}

TEST(FrameRecipe, TheMaskNeedsAFourDigitSectionAndSaysWhere) {
  const theory::Naca4Section s = mask_section("naca 2412", "run/airfoil");
  EXPECT_DOUBLE_EQ(s.max_camber, 0.02);
  EXPECT_DOUBLE_EQ(s.camber_position, 0.4);
  EXPECT_DOUBLE_EQ(s.thickness, 0.12);
  try {
    mask_section("Clark Y", "run.toml:4:11");
    ADD_FAILURE() << "no error";
  } catch (const InputError& e) {
    const std::string what = e.what();
    EXPECT_NE(what.find("run.toml:4:11"), std::string::npos) << what;
    EXPECT_NE(what.find("mask_airfoil = false"), std::string::npos) << what;
  }
}

TEST(SignedSwirl, IsNegativeForAClockwiseCoreAndMatchesItsSolidBodyRotation) {
  // A vortex centred on a grid point, h = r_c / 10.
  const double rc = 0.01, h = rc / 10;
  const Grid g = testing::uniform_grid(-0.05, 0.05, -0.05, 0.05, h);
  for (const double gamma : {-0.2, 0.3}) {
    Frame f = testing::vortex_frame(g, {theory::LambOseenVortex{0.0, 0.0, gamma, rc}});
    const ReducedFrame r = reduce_frame(g, FrameRecipe{}, f, 0.0);
    ASSERT_TRUE(r.flag.empty()) << r.flag;
    const double scale = 0.15 / 25.0;  // c / U
    const Eigen::MatrixXd m = signed_swirl(g, r.field, scale);
    const auto centre = static_cast<Eigen::Index>(g.nx() / 2);
    // Lamb (1932): the core turns as a solid body, Omega0 = Gamma / (2 pi r_c^2);
    // second-order differences at h = r_c/10 are within 1 %.
    const double omega0 = gamma / (2 * std::numbers::pi * rc * rc);
    EXPECT_NEAR(m(centre, centre), omega0 * scale, 0.01 * std::abs(omega0 * scale)) << gamma;
    // Beyond the velocity peak (1.12 r_c) the flow strains but does not swirl.
    EXPECT_EQ(m(centre, centre + 20), 0.0);
  }
}

TEST(ReduceFrame, FlagsAnEmptyFrameAndOneMostlyRepaired) {
  const Grid g = testing::uniform_grid(0, 0.02, 0, 0.02, 0.001);
  Frame empty = testing::vortex_frame(g, {}, 10.0);
  std::fill(empty.valid.begin(), empty.valid.end(), 0);
  EXPECT_EQ(reduce_frame(g, FrameRecipe{}, empty, 0.0).flag, "no valid vectors");
  Frame holes = testing::vortex_frame(g, {}, 10.0);
  for (std::size_t p = 0; p < holes.valid.size(); p += 3) holes.valid[p] = 0;  // a third missing
  const ReducedFrame r = reduce_frame(g, FrameRecipe{}, holes, 0.0);
  EXPECT_EQ(r.flag, "too many replaced vectors");
  EXPECT_TRUE(r.field.swirl.empty());
  FrameRecipe lenient;
  lenient.max_replaced_fraction = 0.5;
  Frame again = testing::vortex_frame(g, {}, 10.0);
  for (std::size_t p = 0; p < again.valid.size(); p += 3) again.valid[p] = 0;
  EXPECT_TRUE(reduce_frame(g, lenient, again, 0.0).flag.empty());
}

}  // namespace
}  // namespace stallscope::piv
