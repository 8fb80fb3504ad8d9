// Closed-test-section wall corrections against the worked example of
// published-checks 8 (Barlow, Rae & Pope form; Allen & Vincenti 1944).
#include "stages/wall.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "tests/pressure/pressure_fixture.hpp"

namespace stallscope {
namespace {

// The example prints 5 significant digits: half a unit of the last one.
constexpr double kFiveDigits = 0.5;

wall::Geometry example() {
  wall::Geometry g;
  g.chord_m = 0.30;
  g.height_m = 1.50;
  g.width_m = 1.00;
  g.thickness_over_c = 0.12;
  return g;
}

TEST(Wall, StreamlineCurvatureFactorMatchesTheTable) {
  // sigma = (pi^2/48)(c/h)^2 for c/h = 0.1, 0.2, 0.25, 0.5 [C].
  for (auto [c_over_h, sigma] : {std::pair{0.1, 0.00205617}, {0.2, 0.00822467}, {0.25, 0.0128510}, {0.5, 0.0514042}}) {
    wall::Geometry g = example();
    g.chord_m = c_over_h * g.height_m;
    EXPECT_NEAR(wall::factors(g, 0).sigma / sigma, 1.0, 5e-6) << c_over_h;  // 6 significant digits printed
  }
}

TEST(Wall, ReproducesTheWorkedExample) {
  const wall::Geometry g = example();
  const wall::Factors f = wall::factors(g, 0.0120);
  EXPECT_NEAR(f.sigma, 0.00822467, 5e-9);
  EXPECT_NEAR(f.solid_blockage, 0.0030452, 5e-8);
  EXPECT_NEAR(f.wake_blockage, 0.00060, 5e-9);
  EXPECT_NEAR(f.blockage, 0.0036452, 5e-8);
  const wall::Coefficients c = wall::correct(g, {8.000, 0.900, 0.0120, -0.0100});
  EXPECT_NEAR(c.alpha_deg, 8.0645, kFiveDigits * 1e-4);
  EXPECT_NEAR(c.cl, 0.88604, kFiveDigits * 1e-5);
  EXPECT_NEAR(c.cm_quarter_chord, -0.0081053, kFiveDigits * 1e-7);
  EXPECT_NEAR(c.cd, 0.011876, kFiveDigits * 1e-6);
  EXPECT_NEAR(1 + 2 * f.blockage, 1.00729, kFiveDigits * 1e-5);  // q / q_u
}

TEST(Wall, HalfHeightWakeFormGivesThePrintingsOtherNumbers) {
  wall::Geometry g = example();
  g.wake_over_2h = true;
  EXPECT_NEAR(wall::factors(g, 0.0120).wake_blockage, 0.0012, 5e-9);
  const wall::Coefficients c = wall::correct(g, {8.000, 0.900, 0.0120, -0.0100});
  EXPECT_NEAR(c.cl, 0.88496, kFiveDigits * 1e-5);
  EXPECT_NEAR(c.cm_quarter_chord, -0.0080955, kFiveDigits * 1e-7);
  EXPECT_NEAR(c.cd, 0.011862, kFiveDigits * 1e-6);
}

TEST(Wall, StageCorrectsAttachedSamplesOnlyAndKeepsTheUncorrectedLoads) {
  testing::PressureRun run;
  run.write();
  const Eigen::Index n = 5;
  Eigen::VectorXd alpha(n), cl(n), cd(n), cm(n), cn(n), cc(n);
  alpha << 2, 6, 8, 14, 20;
  cl << 0.2, 0.6, 0.9, 1.3, 1.0;
  cd << 0.01, 0.011, 0.012, 0.05, 0.3;
  cm << -0.002, -0.005, -0.01, -0.05, -0.15;
  for (Eigen::Index i = 0; i < n; ++i) {
    const double a = alpha[i] * std::numbers::pi / 180;
    cn[i] = cl[i] * std::cos(a) + cd[i] * std::sin(a);
    cc[i] = cd[i] * std::cos(a) - cl[i] * std::sin(a);
  }
  run.store.put("run/chord_m", Scalar{0.30, "m"});
  run.store.put("run/airfoil", Text{"NACA 0012"});
  run.store.put("loads/alpha_deg", Series{alpha, "deg"});
  run.store.put("loads/cn", Series{cn, "1"});
  run.store.put("loads/cc", Series{cc, "1"});
  run.store.put("loads/cl", Series{cl, "1"});
  run.store.put("loads/cd_p", Series{cd, "1"});
  run.store.put("loads/cm", Series{cm, "1"});
  run.store.put("loads/cm_pivot", Series{cm, "1"});
  run.run_stage<WallStage>("[wall]\ntunnel_height_m = 1.5\nattached_alpha_max_deg = 12.0\n");
  const Eigen::VectorXd& cl_c = run.store.get<Series>("loads/cl").values;
  EXPECT_NEAR(cl_c[2], 0.88604, 5e-6);                                   // the worked example, sample 3
  EXPECT_NEAR(run.store.get<Series>("loads/cm").values[2], -0.0081053, 5e-8);
  EXPECT_NEAR(run.store.get<Series>("loads/cd_p").values[2], 0.011876, 5e-7);
  EXPECT_NEAR(run.store.get<Series>("loads/wall/alpha_deg").values[2], 8.0645, 5e-5);
  EXPECT_EQ(cl_c[3], 1.3);  // separated: left as measured
  EXPECT_EQ(run.store.get<Series>("loads/wall/attached").values[4], 0.0);
  EXPECT_EQ(run.store.get<Series>("loads/uncorrected/cl").values[2], 0.9);
  EXPECT_EQ(run.store.get<Series>("loads/alpha_deg").values[2], 8.0);  // the motion angle is never corrected
  const double a = 8.0645 * std::numbers::pi / 180;
  EXPECT_NEAR(run.store.get<Series>("loads/cn").values[2], 0.88604 * std::cos(a) + 0.011876 * std::sin(a), 1e-5);
}

}  // namespace
}  // namespace stallscope
