#include "stages/cycles.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "pipeline/errors.hpp"
#include "stages/motion.hpp"
#include "tests/motion/harness.hpp"

namespace stallscope {
namespace {

using testing::Harness;
using testing::kPi;
using testing::SineRun;

// A 2 Hz pitch for 5 s at 1 kHz, fitted by the motion stage.
void fitted_run(Harness& h, const SineRun& r = {}) {
  testing::put_sine_run(h.store, r);
  MotionStage motion;
  h.run(motion);
}

TEST(CyclesStage, CutsTheRunAtTheMinimumAngleAndDropsPartialCycles) {
  Harness h;
  SineRun r;
  fitted_run(h, r);
  CyclesStage stage;
  h.run(stage);
  const Table& c = h.store.get<Table>("cycles");
  ASSERT_EQ(c.rows(), 9u);  // 0.351 s .. 4.851 s; the partial cycles at both ends are dropped
  const Eigen::VectorXd& t = h.store.get<Series>("signals/time_s").values;
  for (std::size_t i = 0; i < c.rows(); ++i) {
    EXPECT_EQ(c.integers("valid")[i], 1) << c.texts("reason")[i];
    EXPECT_TRUE(c.texts("reason")[i].empty());
    EXPECT_NEAR(c.numbers("t_end_s")[i] - c.numbers("t_start_s")[i], 0.5, 1e-9);
    // The angle at the cycle start is the minimum: 10 - 8 deg.
    const double start = c.numbers("t_start_s")[i];
    EXPECT_NEAR(r.mean_deg + r.amp_deg * std::sin(2 * kPi * r.freq_hz * start + r.phase_rad), 2.0, 1e-9);
    EXPECT_NEAR(c.numbers("alpha_min_deg")[i], 2.0, 1e-3);
    EXPECT_NEAR(c.numbers("alpha_max_deg")[i], 18.0, 1e-3);
    // Without a q signal U is the run's; k = pi f c / U.
    EXPECT_DOUBLE_EQ(c.numbers("U_m_s")[i], r.speed_m_s);
    EXPECT_NEAR(c.numbers("k")[i], kPi * r.freq_hz * r.chord_m / r.speed_m_s, 1e-9);
    EXPECT_EQ(c.integers("k_drift")[i], 0);
  }
  EXPECT_GE(c.numbers("t_start_s").front(), t[0]);
  EXPECT_LE(c.numbers("t_end_s").back(), t[t.size() - 1]);
}

TEST(CyclesStage, FlagsAngleDropOutsQDriftAndKDriftWithReasons) {
  Harness h;
  SineRun r;
  fitted_run(h, r);
  const MotionFit m = MotionFit::from_store(h.store, "test");
  const Eigen::VectorXd& t = h.store.get<Series>("signals/time_s").values;
  Eigen::VectorXd& alpha = h.store.get_mutable<Series>("signals/alpha_deg").values;
  Eigen::VectorXd q = Eigen::VectorXd::Constant(t.size(), 240.0);  // U = 20 m/s at rho = 1.2
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const std::int64_t c = m.cycle(t[i]);
    if (c == 3 && m.phase_deg(t[i]) > 100 && m.phase_deg(t[i]) < 102) alpha[i] = NAN;  // encoder drop-out
    if (c == 5) q[i] = 240.0 * 1.06;   // beyond the 3 % q tolerance
    if (c == 6) q[i] = 240.0 * 1.025;  // within it, but k moves by 1.2 %: flagged only
  }
  h.store.put("signals/q_pa", Series{q, "Pa"});
  CyclesStage stage;
  h.run(stage);
  const Table& c = h.store.get<Table>("cycles");
  for (std::size_t i = 0; i < c.rows(); ++i) {
    const bool bad = i == 3 || i == 5;
    EXPECT_EQ(c.integers("valid")[i], bad ? 0 : 1) << "cycle " << i << ": " << c.texts("reason")[i];
    EXPECT_EQ(c.integers("k_drift")[i], i == 5 || i == 6 ? 1 : 0) << "cycle " << i;
  }
  EXPECT_NE(c.texts("reason")[3].find("angle drop-out"), std::string::npos) << c.texts("reason")[3];
  EXPECT_NE(c.texts("reason")[5].find("q drift 6"), std::string::npos) << c.texts("reason")[5];
  EXPECT_NEAR(c.numbers("U_m_s")[0], 20.0, 1e-9);
  EXPECT_NEAR(c.numbers("U_m_s")[6], 20.0 * std::sqrt(1.025), 1e-9);
  EXPECT_NEAR(c.numbers("q_pa")[5], 254.4, 1e-9);
  EXPECT_EQ(std::get<std::int64_t>(h.store.entry("cycles").attributes.at("valid_cycles")), 7);
}

TEST(CyclesStage, FlagsCyclesWithTooManyDeadTaps) {
  Harness h;
  fitted_run(h);
  const MotionFit m = MotionFit::from_store(h.store, "test");
  const Eigen::VectorXd& t = h.store.get<Series>("signals/time_s").values;
  Eigen::MatrixXd cp(t.size(), 4);
  for (Eigen::Index i = 0; i < t.size(); ++i)
    for (Eigen::Index j = 0; j < 4; ++j) cp(i, j) = std::sin(t[i] + static_cast<double>(j));
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    if (m.cycle(t[i]) == 2) cp.row(i).head(3).setConstant(-0.5);  // three taps stuck in cycle 2
    if (m.cycle(t[i]) == 4) cp(i, 0) = -0.5;                       // one stuck in cycle 4: allowed
  }
  h.store.put("pressure/time_s", Series{t, "s"});
  h.store.put("pressure/cp", Matrix{cp, "1", {"p01", "p02", "p03", "p04"}});
  CyclesStage stage;
  h.run(stage);
  const Table& c = h.store.get<Table>("cycles");
  EXPECT_EQ(c.integers("dead_taps")[2], 3);
  EXPECT_EQ(c.integers("valid")[2], 0);
  EXPECT_NE(c.texts("reason")[2].find("3 dead taps"), std::string::npos);
  EXPECT_EQ(c.integers("dead_taps")[4], 1);
  EXPECT_EQ(c.integers("valid")[4], 1);
}

TEST(CyclesStage, RefusesARecordWithFewerThanTwoCompleteCycles) {
  Harness h;
  SineRun r;
  r.duration_s = 0.9;  // 1.8 periods: one complete cycle at most
  fitted_run(h, r);
  CyclesStage stage;
  try {
    h.run(stage);
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("min_cycles = 2"), std::string::npos) << e.what();
  }
}

TEST(CyclesStage, SaysSoWhenTheMotionIsNotPeriodic) {
  Harness h;
  SineRun r;
  r.amp_deg = 0;
  r.noise_deg = 0.01;
  fitted_run(h, r);  // a static run
  CyclesStage stage;
  try {
    h.run(stage);
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("'static'"), std::string::npos) << e.what();
  }
}

}  // namespace
}  // namespace stallscope
