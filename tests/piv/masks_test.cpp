// Masks besides the airfoil's own: the user's regions (in the lab or moving
// with the model, for some frames), glare in the wall band, and patches of bad
// vectors left empty rather than filled by a median.
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <random>

#include "stages/piv/airfoil_frame.hpp"
#include "stages/piv/masks.hpp"
#include "stages/piv/validation.hpp"
#include "stages/theory/naca4.hpp"
#include "tests/piv/piv_fields.hpp"

namespace stallscope::piv {
namespace {

std::size_t count(const std::vector<std::uint8_t>& m, std::uint8_t value) {
  return static_cast<std::size_t>(std::count(m.begin(), m.end(), value));
}

TEST(MaskRegions, ALabPolygonCoversItsShoelaceAreaOnAFineGrid) {
  // A non-convex hexagon (an L), 0.03 x 0.04 m less a 0.015 x 0.025 m notch.
  MaskRegion r{"sting_shadow", false, {-0.01, 0.02, 0.02, 0.005, 0.005, -0.01}, {-0.02, -0.02, -0.005, -0.005, 0.02, 0.02}};
  double area = 0, perimeter = 0;  // shoelace (Gauss's area formula)
  for (std::size_t k = 0; k < r.x.size(); ++k) {
    const std::size_t l = (k + 1) % r.x.size();
    area += 0.5 * (r.x[k] * r.y[l] - r.x[l] * r.y[k]);
    perimeter += std::hypot(r.x[l] - r.x[k], r.y[l] - r.y[k]);
  }
  ASSERT_NEAR(area, 0.03 * 0.04 - 0.015 * 0.025, 1e-15);
  const double h = 2.5e-4;
  const Grid g = testing::uniform_grid(-0.05, 0.05, -0.05, 0.05, h);
  std::vector<std::uint8_t> mask;
  const std::size_t marked = mark_regions(g, AirfoilPlacement{}, 0.0, 0, {r}, mask);
  EXPECT_EQ(marked, count(mask, 1));
  // Each cell the boundary crosses is in or out: the error is within the perimeter times a spacing.
  EXPECT_NEAR(static_cast<double>(marked) * h * h, area, perimeter * h);
  // A point already masked (inside the airfoil) is not counted again.
  const std::size_t again = mark_regions(g, AirfoilPlacement{}, 0.0, 0, {r}, mask);
  EXPECT_EQ(again, 0u);
}

TEST(MaskRegions, CoverOnlyTheFramesTheyName) {
  const Grid g = testing::uniform_grid(0, 0.01, 0, 0.01, 0.001);
  MaskRegion r{"bubble", false, {-1, 1, 1, -1}, {-1, -1, 1, 1}, 3, 5};
  for (std::size_t frame : {2u, 3u, 5u, 6u}) {
    std::vector<std::uint8_t> mask;
    const std::size_t marked = mark_regions(g, AirfoilPlacement{}, 0.0, frame, {r}, mask);
    EXPECT_EQ(marked, frame >= 3 && frame <= 5 ? g.size() : 0u) << frame;
  }
}

TEST(MaskRegions, AnAirfoilFrameRegionTurnsWithTheModel) {
  const AirfoilPlacement place{0.15, 0.25, 0.0, 0.0, 0.0};
  const double h = 0.001;
  const Grid g = testing::uniform_grid(-0.1, 0.2, -0.1, 0.1, h);
  // A box round the trailing edge, x/c 0.95 to 1.05, |y/c| < 0.03.
  MaskRegion r{"te_glare", true, {0.95, 1.05, 1.05, 0.95}, {-0.03, -0.03, 0.03, 0.03}};
  auto masked_at = [&](const std::vector<std::uint8_t>& mask, double x, double y) {
    const auto i = static_cast<std::size_t>(std::lround((x - g.x_m.front()) / h));
    const auto j = static_cast<std::size_t>(std::lround((y - g.y_m.front()) / h));
    return mask[j * g.nx() + i] == 1;
  };
  double x0, y0, x20, y20;
  to_lab_frame(place, 0.0, {1.0, 0.0}, x0, y0);
  to_lab_frame(place, 20.0, {1.0, 0.0}, x20, y20);
  std::vector<std::uint8_t> at0, at20;
  mark_regions(g, place, 0.0, 0, {r}, at0);
  mark_regions(g, place, 20.0, 0, {r}, at20);
  EXPECT_TRUE(masked_at(at0, x0, y0));
  EXPECT_FALSE(masked_at(at0, x20, y20));
  EXPECT_TRUE(masked_at(at20, x20, y20));
  EXPECT_FALSE(masked_at(at20, x0, y0));
  // Nose-up: the trailing edge goes down in the lab.
  EXPECT_LT(y20, y0 - 0.02);
  // Same area at either angle (0.1 c by 0.06 c), to a boundary's worth of cells.
  const double area = 0.1 * 0.06 * 0.15 * 0.15;
  EXPECT_NEAR(static_cast<double>(count(at0, 1)) * h * h, area, 0.32 * 0.15 * h);
  EXPECT_NEAR(static_cast<double>(count(at20, 1)) * h * h, area, 0.32 * 0.15 * h);
}

TEST(MaskRegions, ReadBackFromTheirText) {
  const std::vector<MaskRegion> in = {
      {"a", false, {0.1, 0.2 / 3, -1e-9}, {1.0 / 7, 2, 3}},
      {"te_band", true, {0.9, 1.1, 1.1, 0.9}, {-0.05, -0.05, 0.05, 0.05}, 12, 40}};
  const std::vector<MaskRegion> out = regions_from_text(regions_text(in));
  ASSERT_EQ(out.size(), 2u);
  for (std::size_t k = 0; k < 2; ++k) {
    EXPECT_EQ(out[k].name, in[k].name);
    EXPECT_EQ(out[k].moves_with_model, in[k].moves_with_model);
    EXPECT_EQ(out[k].x, in[k].x);
    EXPECT_EQ(out[k].y, in[k].y);
    EXPECT_EQ(out[k].first_frame, in[k].first_frame);
    EXPECT_EQ(out[k].last_frame, in[k].last_frame);
  }
  EXPECT_EQ(out[0].last_frame, std::numeric_limits<std::size_t>::max());
  EXPECT_TRUE(regions_from_text("").empty());
}

TEST(Reflections, SlowVectorsInTheWallBandAreGlareFastOnesFlowMissingOnesLeftToTheMedianTest) {
  const AirfoilPlacement place{0.15, 0.25, 0.0, 0.0, 0.0};
  const Grid g = testing::uniform_grid(-0.06, 0.14, -0.03, 0.03, 0.001);
  const theory::Naca4Section s = theory::parse_naca4("0012");
  std::vector<std::uint8_t> mask = airfoil_mask(g, place, s, 5.0, 0.01, 0.02);
  const std::vector<std::uint8_t> plain = airfoil_mask(g, place, s, 5.0, 0.01);
  const std::vector<std::uint8_t> wide = airfoil_mask(g, place, s, 5.0, 0.03);
  // The band is what the wider mask adds to the plain one.
  for (std::size_t p = 0; p < g.size(); ++p) {
    ASSERT_EQ(mask[p] == 1, plain[p] == 1) << p;
    ASSERT_EQ(mask[p] == 2, wide[p] == 1 && plain[p] == 0) << p;
  }
  Frame f = testing::vortex_frame(g, {}, 20.0);
  std::size_t slow = 0, band = 0;
  for (std::size_t p = 0; p < g.size(); ++p) {
    if (mask[p] != 2) continue;
    ++band;
    if (band % 3 == 0) f.u[p] = 1.0f, f.v[p] = -1.2f, ++slow;  // 1.56 m/s
    if (band % 3 == 1) f.u[p] = 0.5f, f.valid[p] = 0;          // missing: not glare
  }
  ASSERT_GT(band, 100u);
  std::vector<std::uint8_t> marked = mask;
  EXPECT_EQ(mark_reflections(g, f, 2.0, marked), slow);
  EXPECT_EQ(count(marked, 2), 0u);
  EXPECT_EQ(count(marked, 1), count(mask, 1) + slow);
}

TEST(Reflections, GlareAmidFlowIsFoundWhileASlowLayerIsLeftAlone) {
  // A NACA 0012 at 8 deg, c = 0.15 m, on a 0.004 c grid; the flow slows
  // linearly to rest at the wall over `layer` (0.02 c attached, 0.1 c a slow
  // separated layer), and glare of a few percent of U may be planted at half
  // the points within 0.015 c of the suction side.
  const AirfoilPlacement place{0.15, 0.25, 0.0, 0.0, 0.0};
  const double c = 0.15, h = 0.004 * c, u_inf = 20.0, alpha = 8.0;
  const Grid g = testing::uniform_grid(-0.2 * c, 1.1 * c, -0.3 * c, 0.3 * c, h);
  const theory::Naca4Section s = theory::parse_naca4("0012");
  const std::vector<std::uint8_t> mask = airfoil_mask(g, place, s, alpha, 0.01, 0.02);
  std::vector<std::uint8_t> glare(g.size(), 0);
  auto field = [&](double layer, bool plant) {
    Frame f = testing::vortex_frame(g, {}, 0.0);
    std::mt19937 rng(3);
    std::normal_distribution<double> n(0.0, 1.0);
    for (std::size_t j = 0; j < g.ny(); ++j)
      for (std::size_t i = 0; i < g.nx(); ++i) {
        const std::size_t p = j * g.nx() + i;
        const AirfoilPoint a = to_airfoil_frame(place, alpha, g.x_m[i], g.y_m[j]);
        const double x = std::clamp(a.x_over_c, 0.0, 1.0);
        const double wall = (a.y_over_c >= 0 ? 1 : -1) * theory::naca4_half_thickness(s, x);
        const double d = std::abs(a.y_over_c - wall);
        f.u[p] = static_cast<float>(u_inf * std::min(1.0, d / layer)), f.v[p] = 0.0f;
        const double r1 = n(rng), r2 = n(rng), r3 = n(rng);
        if (plant && mask[p] == 2 && a.y_over_c > 0 && d < 0.015 && r1 > 0) {
          f.u[p] = static_cast<float>(0.03 * u_inf * r2), f.v[p] = static_cast<float>(0.03 * u_inf * r3);
          glare[p] = 1;
        }
      }
    return f;
  };
  std::vector<std::uint8_t> m = mask;
  EXPECT_EQ(mark_reflections(g, field(0.1, false), 0.1 * u_inf, m), 0u);  // a slow layer is flow
  m = mask;
  EXPECT_EQ(mark_reflections(g, field(0.02, false), 0.1 * u_inf, m), 0u);
  m = mask;
  const std::size_t found = mark_reflections(g, field(0.02, true), 0.1 * u_inf, m);
  std::size_t hits = 0, planted = 0;
  for (std::size_t p = 0; p < g.size(); ++p) hits += glare[p] && m[p] == 1, planted += glare[p];
  ASSERT_GT(planted, 20u);
  EXPECT_EQ(found, hits);  // nothing but glare
  // Nearly all planted glare is slower than 0.1 U (a 3 % U Rayleigh speed: 99.6 %);
  // what is missed has glare or the layer's slowest points for most neighbours.
  EXPECT_GT(static_cast<double>(hits), 0.8 * static_cast<double>(planted)) << hits << " of " << planted;
}

TEST(Patches, OnlySolidPatchesOfTheSizeAreMarkedNotScatteredOutliers) {
  const Grid g = testing::uniform_grid(0, 0.039, 0, 0.039, 0.001);  // 40 x 40
  std::vector<std::uint8_t> bad(g.size(), 0);
  auto set = [&](std::size_t j, std::size_t i) { bad[j * g.nx() + i] = 1; };
  set(1, 1);                                                                   // alone
  for (std::size_t j = 3; j < 7; ++j)
    for (std::size_t i = 3; i < 7; ++i) set(j, i);                             // 4 x 4 = 16
  for (std::size_t k = 0; k < 20; ++k) set(10 + k, 10 + k), set(10 + k, 11 + k);  // a band 2 wide
  for (std::size_t j = 20; j < 23; ++j)
    for (std::size_t i = 1; i < 6; ++i) set(j, i);                             // 3 x 5 = 15
  for (std::size_t j = 36; j < 40; ++j)
    for (std::size_t i = 34; i < 40; ++i) set(j, i);                           // 4 x 6 in a corner
  std::vector<std::uint8_t> patch;
  EXPECT_EQ(mark_patches(g, bad, 16, patch), 40u);
  EXPECT_EQ(patch[3 * g.nx() + 3], 1);
  EXPECT_EQ(patch[39 * g.nx() + 39], 1);
  EXPECT_EQ(patch[15 * g.nx() + 15], 0);
  EXPECT_EQ(patch[21 * g.nx() + 3], 0);
  EXPECT_EQ(patch[1 * g.nx() + 1], 0);
  EXPECT_EQ(mark_patches(g, bad, 15, patch), 55u);
  // A fifth of the vectors bad at random, as in noisy data under a tight test: no patch.
  std::mt19937 rng(7);
  std::bernoulli_distribution fifth(0.2);
  for (auto& b : bad) b = fifth(rng) ? 1 : 0;
  EXPECT_EQ(mark_patches(g, bad, 16, patch), 0u);
}

TEST(Patches, ADropoutIsLeftEmptyWhileIsolatedOutliersAreStillFilled) {
  const double h = 0.001;
  const Grid g = testing::uniform_grid(-0.02, 0.02, -0.02, 0.02, h);
  const Frame clean = testing::vortex_frame(g, {theory::LambOseenVortex{0.0, 0.0, 0.05, 0.004}}, 10.0);
  Frame f = clean;
  // A 6 x 6 dropout (the processor gave no vectors there) and two spurious vectors.
  for (std::size_t j = 2; j < 8; ++j)
    for (std::size_t i = 2; i < 8; ++i) f.valid[j * g.nx() + i] = 0;
  const std::size_t a = 30 * g.nx() + 30, b = 20 * g.nx() + 33;
  f.u[a] = 40.0f, f.v[b] = -25.0f;
  MedianTestOptions o;
  o.patch_min_cells = 16;
  std::vector<std::uint8_t> replaced;
  Frame masked = f;
  const ValidationCounts c = validate_frame(g, masked, {}, o, replaced);
  EXPECT_EQ(c.missing, 36u);
  EXPECT_EQ(c.patches, 36u);
  EXPECT_EQ(c.replaced, 2u);
  EXPECT_EQ(c.unrecoverable, 0u);
  for (std::size_t j = 2; j < 8; ++j)
    for (std::size_t i = 2; i < 8; ++i) {
      EXPECT_EQ(masked.valid[j * g.nx() + i], 0);
      EXPECT_TRUE(std::isnan(masked.u[j * g.nx() + i]));
    }
  EXPECT_NEAR(masked.u[a], clean.u[a], 0.05);
  EXPECT_NEAR(masked.v[b], clean.v[b], 0.05);
  // Without patches the dropout's rim is filled from outside, its inside left empty.
  o.patch_min_cells = 0;
  const ValidationCounts filled = validate_frame(g, f, {}, o, replaced);
  EXPECT_EQ(filled.patches, 0u);
  EXPECT_GT(filled.replaced, 2u);
}

}  // namespace
}  // namespace stallscope::piv
