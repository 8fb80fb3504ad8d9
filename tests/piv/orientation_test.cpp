// A mirrored PIV field is told from the flow itself: the free stream runs
// downstream, and the bound circulation of a lifting section (clockwise, Kutta-
// Joukowski: Gamma = U c Cl / 2) speeds the flow over the suction side.
#include "stages/piv/orientation.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

#include "tests/piv/piv_fields.hpp"

namespace stallscope::piv {
namespace {

constexpr double kU = 20.0, kChord = 0.1;

// Attached flow at alpha: the stream and the bound vortex at the quarter chord
// (Cl = 2 pi alpha, thin-airfoil theory); vectors inside the section invalid.
Frame attached(const Grid& g, const AirfoilPlacement& place, double alpha_deg) {
  double x = 0, y = 0;
  to_lab_frame(place, alpha_deg, {0.25, 0.0}, x, y);
  const double cl = 2 * std::numbers::pi * alpha_deg * std::numbers::pi / 180;
  Frame f = testing::vortex_frame(g, {{x, y, -0.5 * kU * kChord * cl, 0.02 * kChord}}, kU, 0.2);
  const auto inside = airfoil_mask(g, place, theory::parse_naca4("0012"), alpha_deg, 0.0);
  for (std::size_t p = 0; p < inside.size(); ++p)
    if (inside[p]) f.valid[p] = 0, f.u[p] = f.v[p] = NAN;
  return f;
}

// The same frame as an exporter that flips an image axis writes it.
Frame mirrored(const Grid& g, const Frame& f, bool left_right) {
  Frame m = f;
  const std::size_t nx = g.nx(), ny = g.ny();
  for (std::size_t j = 0; j < ny; ++j)
    for (std::size_t i = 0; i < nx; ++i) {
      const std::size_t from = left_right ? j * nx + (nx - 1 - i) : (ny - 1 - j) * nx + i, to = j * nx + i;
      m.u[to] = left_right ? -f.u[from] : f.u[from];
      m.v[to] = left_right ? f.v[from] : -f.v[from];
      m.valid[to] = f.valid[from];
    }
  return m;
}

TEST(Orientation, TellsALabFrameFieldFromOnesMirroredEitherWay) {
  const Grid g = testing::uniform_grid(-0.05, 0.15, -0.08, 0.08, 0.0025);  // symmetric about the pitch axis
  const AirfoilPlacement place{kChord, 0.25, 0.0, 0.0, 0.0};
  std::vector<Frame> frames, flipped_y, flipped_x;
  for (double alpha : {-4.0, 0.0, 3.0, 6.0, 9.0, 11.0, 15.0}) frames.push_back(attached(g, place, alpha));
  for (const Frame& f : frames) flipped_y.push_back(mirrored(g, f, false)), flipped_x.push_back(mirrored(g, f, true));
  auto check = [&](const std::vector<Frame>& set) {
    std::vector<OrientationSample> s;
    const double alphas[] = {-4.0, 0.0, 3.0, 6.0, 9.0, 11.0, 15.0};
    for (std::size_t k = 0; k < set.size(); ++k) s.push_back({&set[k], alphas[k]});
    return check_orientation(g, s, place, 1.0, kU);
  };
  const Orientation sound = check(frames);
  EXPECT_EQ(sound.verdict, "as expected");
  EXPECT_NEAR(sound.streamwise, 1.0, 0.05);
  EXPECT_EQ(sound.frames_used, 5u);  // -4, 3, 6, 9 and 11 deg
  EXPECT_GT(sound.suction_excess, 0.05);
  EXPECT_FALSE(sound.x_reversed || sound.y_reversed);

  const Orientation upside_down = check(flipped_y);
  EXPECT_TRUE(upside_down.y_reversed);
  EXPECT_FALSE(upside_down.x_reversed);
  EXPECT_NEAR(upside_down.suction_excess, -sound.suction_excess, 0.02);
  EXPECT_NE(upside_down.verdict.find("top to bottom"), std::string::npos);

  const Orientation backwards = check(flipped_x);
  EXPECT_TRUE(backwards.x_reversed);
  EXPECT_NEAR(backwards.streamwise, -1.0, 0.05);
  EXPECT_NE(backwards.verdict.find("left to right"), std::string::npos);

  // Frames only where the flow may be stalled: the sides are not compared, nothing is claimed.
  std::vector<Frame> deep = {attached(g, place, 18.0), attached(g, place, 22.0)};
  std::vector<OrientationSample> s = {{&deep[0], 18.0}, {&deep[1], 22.0}};
  const Orientation untold = check_orientation(g, s, place, 1.0, kU);
  EXPECT_EQ(untold.frames_used, 0u);
  EXPECT_FALSE(untold.y_reversed);
  EXPECT_NE(untold.verdict.find("not compared"), std::string::npos);
}

}  // namespace
}  // namespace stallscope::piv
