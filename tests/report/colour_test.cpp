#include "pipeline/report/colour.hpp"

#include <gtest/gtest.h>

#include <cmath>

namespace stallscope::report {
namespace {

// The W3C web-platform-tests for CSS Color 4 state their reference colours to
// five significant digits (and convert through XYZ, not the direct sRGB
// matrices used here): agreement to 5e-4 is all they can show.
constexpr double kW3cDigits = 5e-4;
// The matrices are published to ten digits, so the forward and inverse pair
// agree to a few 1e-7 per component.
constexpr double kMatrixDigits = 1e-6;
// The arms differ in chroma, so equal arc length along each puts equal
// lightness at equal distance from the centre only to within 0.002 (a tenth
// of a just-noticeable difference, about 0.02 in OKLab: common practice).
constexpr double kArmSymmetry = 2e-3;
// Palette entries are linear interpolations on a path sampled at 2049 points:
// equal arc length holds to well under a percent of a step.
constexpr double kStepUniformity = 0.01;

TEST(Oklab, SrgbGreenMatchesTheW3cColourTestValue) {
  // css/css-color/oklab-001.html: #008000 is oklab(51.975% -0.1403 0.10768).
  const Oklab c = to_oklab({0, 128.0 / 255.0, 0});
  EXPECT_NEAR(c.L, 0.51975, kW3cDigits);
  EXPECT_NEAR(c.a, -0.1403, kW3cDigits);
  EXPECT_NEAR(c.b, 0.10768, kW3cDigits);
}

TEST(Oklab, OklchColoursConvertToTheW3cSrgbReferences) {
  // css/css-color/oklch-004.html: oklch(50% 0.2 0) is rgb(70.492% 2.351% 37.073%).
  Rgb x = to_rgb(from_lch(0.5, 0.2, 0));
  EXPECT_NEAR(x.r, 0.70492, kW3cDigits);
  EXPECT_NEAR(x.g, 0.02351, kW3cDigits);
  EXPECT_NEAR(x.b, 0.37073, kW3cDigits);
  // css/css-color/oklch-006.html: oklch(80% 0.15 160) is rgb(32.022% 85.805% 61.147%).
  x = to_rgb(from_lch(0.8, 0.15, 160));
  EXPECT_NEAR(x.r, 0.32022, kW3cDigits);
  EXPECT_NEAR(x.g, 0.85805, kW3cDigits);
  EXPECT_NEAR(x.b, 0.61147, kW3cDigits);
}

TEST(Oklab, WhiteIsLightnessOneWithoutColourAndConversionsRoundTrip) {
  const Oklab w = to_oklab({1, 1, 1});
  EXPECT_NEAR(w.L, 1.0, 1e-6);
  EXPECT_NEAR(w.a, 0.0, 1e-6);
  EXPECT_NEAR(w.b, 0.0, 1e-6);
  for (const Rgb c : {Rgb{0.2, 0.4, 0.6}, Rgb{0.9, 0.1, 0.05}, Rgb{0.0, 0.0, 0.0}}) {
    const Rgb back = to_rgb(to_oklab(c));
    EXPECT_NEAR(back.r, c.r, kMatrixDigits);
    EXPECT_NEAR(back.g, c.g, kMatrixDigits);
    EXPECT_NEAR(back.b, c.b, kMatrixDigits);
  }
}

TEST(Oklab, IntoGamutKeepsLightnessAndHueAndLandsOnTheSrgbGamut) {
  const Oklab vivid = from_lch(0.7, 0.4, 250);  // far outside sRGB
  ASSERT_FALSE(in_srgb_gamut(vivid));
  const Oklab in = into_gamut(vivid);
  EXPECT_TRUE(in_srgb_gamut(in));
  EXPECT_DOUBLE_EQ(in.L, vivid.L);
  EXPECT_NEAR(std::atan2(in.b, in.a), std::atan2(vivid.b, vivid.a), 1e-12);
  EXPECT_FALSE(in_srgb_gamut({in.L, in.a * 1.01, in.b * 1.01}));  // as much chroma as fits
}

TEST(Palette, SequentialIsMonotonicInLightnessAndEvenlySpacedInOklab) {
  const auto& e = Palette::sequential().entries();
  ASSERT_EQ(e.size(), 256u);
  std::vector<double> steps;
  for (std::size_t i = 1; i < e.size(); ++i) {
    EXPECT_GT(e[i].L, e[i - 1].L) << i;
    EXPECT_TRUE(in_srgb_gamut(e[i]));
    steps.push_back(oklab_distance(e[i - 1], e[i]));
  }
  const auto [lo, hi] = std::minmax_element(steps.begin(), steps.end());
  EXPECT_LT(*hi / *lo - 1, kStepUniformity);
  EXPECT_NEAR(e.front().L, 0.22, 1e-9);
  EXPECT_NEAR(e.back().L, 0.96, 1e-9);
}

TEST(Palette, DivergingIsNeutralAtTheCentreWithArmsOfEqualLightness) {
  const auto& e = Palette::diverging().entries();
  ASSERT_EQ(e.size(), 255u);
  const std::size_t centre = 127;
  EXPECT_LT(std::hypot(e[centre].a, e[centre].b), 1e-12);
  for (std::size_t k = 1; k <= centre; ++k) {
    EXPECT_LT(e[centre - k].L, e[centre - k + 1].L);
    EXPECT_NEAR(e[centre - k].L, e[centre + k].L, kArmSymmetry) << k;  // same lightness at the same distance from 0
  }
  // Cold below, warm above.
  EXPECT_LT(e.front().b, 0);
  EXPECT_GT(e.back().a, 0);
}

TEST(Palette, AtInterpolatesAndClampsAndGivesWhiteForNoValue) {
  const Palette& p = Palette::sequential();
  const Rgb first = to_rgb(p.entries().front());
  const Rgb below = p.at(-3);
  EXPECT_NEAR(below.r, first.r, 1e-12);
  const Rgb none = p.at(NAN);
  EXPECT_EQ(none.r + none.g + none.b, 3.0);
  EXPECT_EQ(hex({1, 0.5, 0}), "#ff8000");
}

TEST(CategoryColour, TheFirstEightAreClearlyDistinct) {
  // Three just-noticeable differences apart at least (JND about 0.02 in OKLab, common practice);
  // markers differ in shape as well.
  for (std::size_t i = 0; i < 8; ++i)
    for (std::size_t j = i + 1; j < 8; ++j)
      EXPECT_GT(oklab_distance(to_oklab(category_colour(i)), to_oklab(category_colour(j))), 0.06) << i << " " << j;
}

}  // namespace
}  // namespace stallscope::report
