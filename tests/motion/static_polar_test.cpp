#include "stages/static_polar.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "pipeline/errors.hpp"
#include "stages/motion.hpp"
#include "tests/motion/harness.hpp"

namespace stallscope {
namespace {

using testing::Harness;

// An invented polar with a known stall: going up, Cl = 0.1 (alpha + 1) to
// 12 deg, then 1.3 - 0.05 (alpha - 12)^2; Cm = -0.01, breaking by -0.03/deg
// past 12 deg. Coming down, the flow stays stalled (Cl 0.8, Cm -0.08) until
// it reattaches below 10 deg.
double cl_of(double a, bool up) {
  if (up) return a <= 12 ? 0.1 * (a + 1) : 1.3 - 0.05 * (a - 12) * (a - 12);
  return a >= 10 ? 0.8 : 0.1 * (a + 1);
}
double cm_of(double a, bool up) {
  if (up) return a <= 12 ? -0.01 : -0.01 - 0.03 * (a - 12);
  return a >= 10 ? -0.08 : -0.01;
}

// 0, 2, .. 20, 18, .. 0 deg: 2 s holds, 0.5 s moves, 100 Hz.
void staircase_run(Harness& h) {
  testing::put_conditions(h.store, 0.3, 20);
  std::vector<double> levels;
  for (int a = 0; a <= 20; a += 2) levels.push_back(a);
  for (int a = 18; a >= 0; a -= 2) levels.push_back(a);
  const double hold = 2.0, move = 0.5, rate = 100;
  const Eigen::VectorXd t = testing::time_base(0, rate, static_cast<double>(levels.size()) * (hold + move));
  Eigen::VectorXd alpha(t.size()), cl(t.size()), cm(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const auto j = std::min(static_cast<std::size_t>(t[i] / (hold + move)), levels.size() - 1);
    const double in = t[i] - static_cast<double>(j) * (hold + move);
    const bool up = j <= 10;
    const double next = j + 1 < levels.size() ? levels[j + 1] : levels[j];
    alpha[i] = in < hold ? levels[j] : levels[j] + (next - levels[j]) * (in - hold) / move;
    cl[i] = cl_of(alpha[i], up);
    cm[i] = cm_of(alpha[i], up);
  }
  h.store.put("signals/time_s", Series{t, "s"});
  h.store.put("signals/alpha_deg", Series{alpha, "deg"});
  h.store.put("loads/time_s", Series{t, "s"});
  h.store.put("loads/cl", Series{cl, "1"});
  h.store.put("loads/cn", Series{cl, "1"});
  h.store.put("loads/cm", Series{cm, "1"});
  h.store.put("loads/cd_p", Series{Eigen::VectorXd::Constant(t.size(), 0.01), "1"});
  MotionStage motion;
  h.run(motion, "plateau_settle_s = 0.2\n");
}

double attribute(const Harness& h, const std::string& name) {
  return std::get<double>(h.store.entry("static_polar/summary").attributes.at(name));
}

TEST(StaticPolarStage, GivesSlopeZeroLiftAngleAndStallByThreeCriteriaPerDirection) {
  Harness h;
  staircase_run(h);
  StaticPolarStage stage;
  h.run(stage);
  const Table& points = h.store.get<Table>("static_polar/points");
  ASSERT_EQ(points.rows(), 21u);
  EXPECT_NEAR(points.numbers("cl")[6], 1.3, 1e-12);  // 12 deg, going up
  const Table& s = h.store.get<Table>("static_polar/summary");
  ASSERT_EQ(s.rows(), 2u);
  EXPECT_EQ(s.texts("direction")[0], "up");
  EXPECT_EQ(s.texts("direction")[1], "down");
  for (std::size_t d = 0; d < 2; ++d) {
    EXPECT_NEAR(s.numbers("lift_slope_per_deg")[d], 0.1, 1e-12);
    EXPECT_NEAR(s.numbers("zero_lift_angle_deg")[d], -1.0, 1e-10);
    EXPECT_NEAR(s.numbers("angle_offset_deg")[d], -1.0, 1e-10);  // a symmetric section's expected 0
    EXPECT_EQ(s.integers("linear_points")[d], 3);                // 0, 2, 4 deg in [-5, 5]
  }
  // Up: the maximum at 12 deg (parabola through 10, 12, 14 is symmetric), Cm break and
  // departure from linearity at the 14 deg plateau.
  EXPECT_NEAR(s.numbers("alpha_cl_max_deg")[0], 12.0, 1e-10);
  EXPECT_NEAR(s.numbers("cl_max")[0], 1.3, 1e-12);
  EXPECT_EQ(s.numbers("alpha_cm_break_deg")[0], 14.0);
  EXPECT_EQ(s.numbers("alpha_linearity_deg")[0], 14.0);
  // Down: by hand, the parabola through (6, 0.7), (8, 0.9), (10, 0.8) peaks at 8 1/3 deg, Cl 0.9041667.
  EXPECT_NEAR(s.numbers("alpha_cl_max_deg")[1], 8.0 + 1.0 / 3.0, 1e-10);
  EXPECT_NEAR(s.numbers("cl_max")[1], 0.9 + 0.025 / 3 - 0.0375 / 9, 1e-10);
  EXPECT_EQ(s.numbers("alpha_cm_break_deg")[1], 10.0);
  EXPECT_EQ(s.numbers("alpha_linearity_deg")[1], 10.0);
  EXPECT_NEAR(attribute(h, "hysteresis_cl_max_deg"), 12.0 - (8.0 + 1.0 / 3.0), 1e-10);
  EXPECT_NEAR(attribute(h, "hysteresis_cm_break_deg"), 4.0, 1e-12);
  EXPECT_NEAR(attribute(h, "static_stall_angle_deg"), 12.0, 1e-10);
}

TEST(StaticPolarStage, UsesTheChosenPrimaryCriterionAndLinearRange) {
  Harness h;
  staircase_run(h);
  StaticPolarStage stage;
  h.run(stage, "primary = \"cm_break\"\nlinear_range_deg = [0, 10]\n");
  EXPECT_EQ(attribute(h, "static_stall_angle_deg"), 14.0);
  const Table& s = h.store.get<Table>("static_polar/summary");
  EXPECT_EQ(s.integers("linear_points")[0], 6);  // 0 .. 10 deg going up
  EXPECT_NEAR(s.numbers("lift_slope_per_deg")[0], 0.1, 1e-12);
}

TEST(StaticPolarStage, RefusesARunThatIsNotAStaircase) {
  Harness h;
  testing::SineRun r;
  testing::put_sine_run(h.store, r);
  MotionStage motion;
  h.run(motion);
  StaticPolarStage stage;
  try {
    h.run(stage);
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("'sine'"), std::string::npos) << e.what();
  }
  EXPECT_THROW(Harness::configure(stage, "linear_range_deg = [5, 1]\n"), InputError);
  EXPECT_THROW(Harness::configure(stage, "primary = \"lift\"\n"), InputError);
}

}  // namespace
}  // namespace stallscope
