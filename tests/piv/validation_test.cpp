// The normalised median test (Westerweel & Scarano 2005, Exp. Fluids 39),
// published-checks section 7, and repair of a frame over valid neighbours.
#include "stages/piv/validation.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <random>

#include "tests/piv/piv_fields.hpp"

namespace stallscope::piv {
namespace {

const std::vector<double> kNeighbours = {1.0, 1.1, 0.9, 1.0, 1.05, 0.95, 1.0, 1.2};  // px, section 7

TEST(NormalisedMedianTest, ReproducesThePublishedExample) {
  // Published-checks section 7 [C]: U_m = 1.0, r_m = 0.05, eps = 0.1 px.
  EXPECT_DOUBLE_EQ(median_of(kNeighbours), 1.0);
  EXPECT_NEAR(normalised_median_residual(3.0, kNeighbours, 0.1), 13.33, 0.005);  // outlier
  EXPECT_NEAR(normalised_median_residual(1.08, kNeighbours, 0.1), 0.533, 0.0005);  // valid
  EXPECT_GT(normalised_median_residual(3.0, kNeighbours, 0.1), MedianTestOptions{}.threshold);
  EXPECT_LT(normalised_median_residual(1.08, kNeighbours, 0.1), MedianTestOptions{}.threshold);
}

TEST(NormalisedMedianTest, MedianOfAnEvenCountIsTheMeanOfTheMiddleTwo) {
  EXPECT_DOUBLE_EQ(median_of({4, 1, 3, 2}), 2.5);
  EXPECT_DOUBLE_EQ(median_of({5, 1, 3}), 3.0);
}

TEST(NormalisedMedianTest, UpToEightNeighboursTakeASortsMiddleToTheBit) {
  // A neighbourhood (1 to 8 values) goes through a sorting network: it must
  // give what sorting gives, ties and repeated values included.
  std::mt19937 rng(4);
  std::normal_distribution<double> normal(0.0, 1.0);
  std::uniform_int_distribution<int> few(0, 2);
  for (int trial = 0; trial < 40000; ++trial) {
    std::vector<double> v(static_cast<std::size_t>(1 + trial % 9));  // 1 to 9 values: 9 takes the selection
    for (double& x : v) x = trial % 3 == 0 ? few(rng) : 10.0 + normal(rng);
    std::vector<double> sorted = v;
    std::sort(sorted.begin(), sorted.end());
    const std::size_t n = v.size();
    const double want = n % 2 ? sorted[n / 2] : 0.5 * (sorted[n / 2 - 1] + sorted[n / 2]);
    ASSERT_EQ(median_of(v), want) << "trial " << trial << ", " << n << " values";
  }
}

Frame frame_from(const Grid& g, double value) {
  Frame f;
  f.u.assign(g.size(), static_cast<float>(value));
  f.v.assign(g.size(), 0.0f);
  f.valid.assign(g.size(), 1);
  // Small variations, as a real field has.
  for (std::size_t p = 0; p < g.size(); ++p) f.u[p] += 0.01f * static_cast<float>((p * 7) % 5);
  return f;
}

TEST(ValidateFrame, ReplacesAnOutlierByTheLocalMedianAndCountsIt) {
  const Grid g = testing::uniform_grid(0, 6, 0, 6, 1.0);
  Frame f = frame_from(g, 1.0);
  const std::size_t centre = 3 * g.nx() + 3;
  f.u[centre] = 3.0f;
  std::vector<std::uint8_t> replaced;
  const ValidationCounts c = validate_frame(g, f, {}, MedianTestOptions{2.0, 0.1, 3}, replaced);
  EXPECT_EQ(c.vectors, g.size());
  EXPECT_EQ(c.outliers, 1u);
  EXPECT_EQ(c.replaced, 1u);
  EXPECT_EQ(replaced[centre], 1);
  EXPECT_NEAR(f.u[centre], 1.02, 0.021);  // the median of the neighbours, in 1.00..1.04
  EXPECT_EQ(f.valid[centre], 1);
}

TEST(ValidateFrame, IgnoresInvalidNeighboursAndFillsMissingVectors) {
  const Grid g = testing::uniform_grid(0, 6, 0, 6, 1.0);
  Frame f = frame_from(g, 1.0);
  const std::size_t p = 3 * g.nx() + 3, q = 3 * g.nx() + 4;
  f.u[q] = 1e6f;  // wild, but flagged invalid by the PIV software: never a neighbour
  f.valid[q] = 0;
  f.u[2 * g.nx() + 2] = std::nanf("");  // a missing vector
  std::vector<std::uint8_t> replaced;
  const ValidationCounts c = validate_frame(g, f, {}, MedianTestOptions{}, replaced);
  EXPECT_EQ(c.outliers, 0u);
  EXPECT_EQ(c.missing, 2u);
  EXPECT_EQ(c.replaced, 2u);
  EXPECT_EQ(replaced[p], 0);
  EXPECT_NEAR(f.u[q], 1.02, 0.021);
  EXPECT_TRUE(std::isfinite(f.u[2 * g.nx() + 2]));
}

TEST(ValidateFrame, EmptiesMaskedPointsAndLeavesIsolatedGapsEmpty) {
  const Grid g = testing::uniform_grid(0, 6, 0, 6, 1.0);
  Frame f = frame_from(g, 1.0);
  std::vector<std::uint8_t> mask(g.size(), 0);
  for (std::size_t j = 0; j < g.ny(); ++j)
    for (std::size_t i = 0; i < 3; ++i) mask[j * g.nx() + i] = 1;  // the left half is solid
  // A missing vector at the mask edge, with only 2 flow neighbours above and below... and
  // its row neighbour: (j, 3) has valid neighbours at i = 4 only.
  for (std::size_t j = 0; j < g.ny(); ++j) f.valid[j * g.nx() + 4] = 0;
  f.valid[3 * g.nx() + 3] = 0;
  std::vector<std::uint8_t> replaced;
  const ValidationCounts c = validate_frame(g, f, mask, MedianTestOptions{2.0, 0.1, 3}, replaced);
  EXPECT_EQ(c.vectors, g.size() - 3 * g.ny());
  EXPECT_TRUE(std::isnan(f.u[0]));
  EXPECT_EQ(f.valid[0], 0);
  EXPECT_EQ(f.valid[3 * g.nx() + 3], 0);  // neighbours: (2,3) and (4,3) valid, column 4 empty: too few
  EXPECT_GE(c.unrecoverable, 1u);
}

TEST(ValidateFrame, AnAllNaNFrameIsAllMissingAndNothingIsInvented) {
  const Grid g = testing::uniform_grid(0, 4, 0, 4, 1.0);
  Frame f;
  f.u.assign(g.size(), std::nanf(""));
  f.v.assign(g.size(), std::nanf(""));
  f.valid.assign(g.size(), 1);
  std::vector<std::uint8_t> replaced;
  const ValidationCounts c = validate_frame(g, f, {}, MedianTestOptions{}, replaced);
  EXPECT_EQ(c.missing, g.size());
  EXPECT_EQ(c.replaced, 0u);
  EXPECT_EQ(c.unrecoverable, g.size());
}

TEST(RandomError, RecoversTheNoiseOfAVortexFlowWithOutliers) {
  // A Lamb-Oseen vortex in a uniform stream on a 120 x 80 grid, with Gaussian noise of
  // known sigma and 2 % spurious vectors: the estimate is within 4 % of sigma (9,000
  // residuals give the MAD to about 1.3 %; the core adds a little).
  const Grid g = testing::uniform_grid(0, 0.2975, 0, 0.1975, 0.0025);
  for (const double sigma : {0.05, 0.15}) {
    Frame f = testing::vortex_frame(g, {theory::LambOseenVortex{0.15, 0.1, -0.5, 0.01}}, 25.0, sigma, 11);
    for (std::size_t p = 0; p < f.u.size(); p += 50) f.u[p] += 3.0f;
    EXPECT_NEAR(random_error(g, f), sigma, 0.04 * sigma);
  }
  // Noise-free: a harmonic stream leaves no residual at all.
  const Frame clean = testing::vortex_frame(g, {}, 25.0);
  EXPECT_LT(random_error(g, clean), 1e-6);
  Frame empty = clean;
  std::fill(empty.valid.begin(), empty.valid.end(), 0);
  EXPECT_TRUE(std::isnan(random_error(g, empty)));
}

}  // namespace
}  // namespace stallscope::piv
