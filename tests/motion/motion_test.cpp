#include "stages/motion.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "pipeline/errors.hpp"
#include "pipeline/scheduler.hpp"
#include "tests/motion/harness.hpp"

namespace stallscope {
namespace {

using testing::Harness;
using testing::kPi;
using testing::SineRun;

double attribute(const RunStore& s, const std::string& key, const std::string& name) {
  return std::get<double>(s.entry(key).attributes.at(name));
}

TEST(MotionStage, FitsASinusoidalPitchAndGivesTheReducedFrequency) {
  Harness h;
  SineRun r;
  r.noise_deg = 0.05;
  testing::put_sine_run(h.store, r);
  MotionStage stage;
  h.run(stage);
  const RunStore& s = h.store;
  EXPECT_EQ(s.get<Text>("run/motion").value, "sine");
  EXPECT_NEAR(s.get<Scalar>("run/freq_hz").value, r.freq_hz, 1e-4);
  EXPECT_NEAR(s.get<Scalar>("run/alpha_mean_deg").value, r.mean_deg, 5e-3);
  EXPECT_NEAR(s.get<Scalar>("run/alpha_amp_deg").value, r.amp_deg, 5e-3);
  // k = omega c / (2U) = pi f c / U (published-checks conventions).
  EXPECT_NEAR(s.get<Scalar>("run/k").value, kPi * s.get<Scalar>("run/freq_hz").value * r.chord_m / r.speed_m_s,
              1e-12);
  EXPECT_NEAR(attribute(s, "motion/fit", "residual_deg"), r.noise_deg, 0.005);
  EXPECT_LT(attribute(s, "motion/fit", "harmonic_distortion"), 1e-3);
  // published-checks section 10 [C]: the peak non-dimensional pitch rate is alpha1 k.
  EXPECT_NEAR(attribute(s, "motion/fit", "max_pitch_rate_nondim"),
              s.get<Scalar>("run/alpha_amp_deg").value * kPi / 180 * s.get<Scalar>("run/k").value, 1e-12);
}

TEST(MotionStage, PutsPhaseZeroAtTheMinimumAngleAndNumbersCompleteCycles) {
  Harness h;
  SineRun r;  // 2 Hz for 5 s: alpha = 10 + 8 sin(4 pi t + 0.3)
  testing::put_sine_run(h.store, r);
  MotionStage stage;
  h.run(stage);
  const MotionFit m = MotionFit::from_store(h.store, "test");
  // The first minimum: 4 pi t + 0.3 = 3 pi / 2 -> t = (1.5 pi - 0.3) / (4 pi).
  const double first_min = (1.5 * kPi - 0.3) / (4 * kPi);
  EXPECT_NEAR(m.cycle_origin_s, first_min, 1e-9);
  // From 0.351 s to the end (4.999 s) there are 9 whole cycles; the partial ones are -1.
  EXPECT_EQ(m.cycles, 9);
  const Series& cycle = h.store.get<Series>("motion/cycle");
  const Series& phase = h.store.get<Series>("motion/phase_deg");
  EXPECT_EQ(cycle.values[0], -1);
  EXPECT_EQ(cycle.values[cycle.values.size() - 1], -1);
  EXPECT_EQ(cycle.values.maxCoeff(), 8);
  const Eigen::VectorXd& t = h.store.get<Series>("signals/time_s").values;
  for (Eigen::Index i = 0; i < t.size(); i += 37) {
    // phase = theta + 90 deg; the fitted angle there is mean - amp cos(phase).
    const double expected = std::fmod((4 * kPi * t[i] + 0.3) * 180 / kPi + 90.0, 360.0);
    EXPECT_NEAR(std::remainder(phase.values[i] - expected, 360.0), 0.0, 1e-7) << "t = " << t[i];
  }
  EXPECT_NEAR(m.alpha_deg(first_min), r.mean_deg - r.amp_deg, 1e-9);
  EXPECT_NEAR(m.phase_deg(first_min + 0.25 * m.period_s()), 90.0, 1e-7);
}

TEST(MotionStage, TakesThePitchRateFromTheFitNotFromDifferencing) {
  Harness h;
  SineRun r;
  r.noise_deg = 0.2;  // differencing this at 1 kHz would give rate noise of ~280 deg/s
  testing::put_sine_run(h.store, r);
  MotionStage stage;
  h.run(stage, "harmonics = 1\n");
  const Eigen::VectorXd& t = h.store.get<Series>("signals/time_s").values;
  const Eigen::VectorXd& rate = h.store.get<Series>("motion/alpha_rate_deg_s").values;
  double worst = 0;
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const double exact = r.amp_deg * 2 * kPi * r.freq_hz * std::cos(2 * kPi * r.freq_hz * t[i] + r.phase_rad);
    worst = std::max(worst, std::abs(rate[i] - exact));
  }
  // The amplitude's error (~0.004 deg) times omega and the phase error: well under 1 deg/s.
  EXPECT_LT(worst, 1.0);
}

Eigen::VectorXd staircase(const Eigen::VectorXd& t, const std::vector<double>& levels, double hold, double move) {
  Eigen::VectorXd a(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const double period = hold + move;
    const auto j = std::min(static_cast<std::size_t>(t[i] / period), levels.size() - 1);
    const double in = t[i] - static_cast<double>(j) * period;
    a[i] = (in < hold || j + 1 >= levels.size()) ? levels[j] : levels[j] + (levels[j + 1] - levels[j]) * (in - hold) / move;
  }
  return a;
}

TEST(MotionStage, RecognisesAStaircaseOfSteadyAnglesInBothSweepDirections) {
  Harness h;
  testing::put_conditions(h.store, 0.3, 20);
  const Eigen::VectorXd t = testing::time_base(0, 200, 7 * 3.0);
  const std::vector<double> levels{0, 4, 8, 12, 8, 4, 0};
  h.store.put("signals/time_s", Series{t, "s"});
  h.store.put("signals/alpha_deg", Series{staircase(t, levels, 2.5, 0.5), "deg"});
  MotionStage stage;
  h.run(stage, "plateau_settle_s = 0.2\n");
  EXPECT_EQ(h.store.get<Text>("run/motion").value, "staircase");
  const Table& p = h.store.get<Table>("motion/plateaus");
  ASSERT_EQ(p.rows(), levels.size());
  const std::vector<std::string> direction{"up", "up", "up", "up", "down", "down", "down"};
  for (std::size_t j = 0; j < levels.size(); ++j) {
    EXPECT_NEAR(p.numbers("alpha_deg")[j], levels[j], 1e-12);
    EXPECT_EQ(p.texts("direction")[j], direction[j]) << "plateau " << j;
    EXPECT_GE(p.numbers("t_average_start_s")[j], p.numbers("t_start_s")[j] + 0.2 - 1e-9);
  }
  EXPECT_FALSE(h.store.contains("motion/fit"));
  EXPECT_EQ(h.store.get<Scalar>("run/k").value, 0.0);
  // Between plateaus the fitted angle runs straight from one level to the next.
  const Eigen::VectorXd& fitted = h.store.get<Series>("motion/alpha_deg").values;
  EXPECT_NEAR(fitted[static_cast<Eigen::Index>(2.75 * 200)], 2.0, 0.3);
}

TEST(MotionStage, MeasuresAConstantRateRamp) {
  Harness h;
  testing::put_conditions(h.store, 0.3, 20);
  const Eigen::VectorXd t = testing::time_base(0, 1000, 3.0);
  Eigen::VectorXd a(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) a[i] = t[i] < 1 ? 0.0 : t[i] < 1.5 ? 60.0 * (t[i] - 1) : 30.0;
  h.store.put("signals/time_s", Series{t, "s"});
  h.store.put("signals/alpha_deg", Series{a, "deg"});
  MotionStage stage;
  h.run(stage);
  EXPECT_EQ(h.store.get<Text>("run/motion").value, "ramp");
  EXPECT_NEAR(h.store.get<Scalar>("motion/ramp_rate_deg_s").value, 60.0, 1e-6);
  EXPECT_NEAR(h.store.get<Scalar>("motion/ramp_start_s").value, 1.0, 1e-6);
  EXPECT_NEAR(h.store.get<Scalar>("motion/ramp_end_s").value, 1.5, 1e-6);
  // r = alpha_dot c / (2U) = (60 pi/180) 0.3 / 40.
  EXPECT_NEAR(h.store.get<Scalar>("motion/ramp_rate_nondim").value, 60 * kPi / 180 * 0.3 / 40, 1e-9);
}

TEST(MotionStage, RecognisesOneSteadyAngle) {
  Harness h;
  SineRun r;
  r.amp_deg = 0.0;
  r.noise_deg = 0.03;
  testing::put_sine_run(h.store, r);
  MotionStage stage;
  h.run(stage);
  EXPECT_EQ(h.store.get<Text>("run/motion").value, "static");
  EXPECT_NEAR(h.store.get<Scalar>("run/alpha_mean_deg").value, r.mean_deg, 0.003);
  EXPECT_EQ(h.store.get<Table>("motion/plateaus").rows(), 1u);
}

TEST(MotionStage, RefusesAConstantAngleUnlessTheRunIsDeclaredStatic) {
  Harness h;
  SineRun r;
  r.amp_deg = 0.0;
  testing::put_sine_run(h.store, r);
  MotionStage stage;
  try {
    h.run(stage);
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("signals/alpha_deg"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("constant"), std::string::npos) << e.what();
  }
  MotionStage forced;
  h.run(forced, "type = \"static\"\n");
  EXPECT_EQ(h.store.get<Text>("run/motion").value, "static");
}

TEST(MotionStage, SaysWhichForcedTypeDoesNotFitAndWhy) {
  Harness h;
  testing::put_conditions(h.store, 0.3, 20);
  const Eigen::VectorXd t = testing::time_base(0, 200, 12.0);
  h.store.put("signals/time_s", Series{t, "s"});
  h.store.put("signals/alpha_deg", Series{staircase(t, {0, 5, 10, 15}, 2.5, 0.5), "deg"});
  MotionStage stage;
  try {
    h.run(stage, "type = \"sine\"\n");
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    const std::string what = e.what();
    EXPECT_NE(what.find("run.toml:2"), std::string::npos) << what;  // the type key's line
    EXPECT_NE(what.find("type = \"sine\" does not fit"), std::string::npos) << what;
    EXPECT_NE(what.find("sine"), std::string::npos) << what;
  }
}

// A pitch drive whose frequency drifts 6 % over the record (2.0 to 2.12 Hz):
// alpha = 10 + 8 sin(2 pi (f0 t + beta t^2 / 2) + 0.3), minima in closed form.
// The phase measured at each mean crossing keeps every cycle start on its
// minimum; one fitted frequency puts them up to 12 deg of phase off.
TEST(MotionStage, FollowsADriftingPitchFrequencyCycleByCycle) {
  const double f0 = 2.0, beta = 0.024, phi = 0.3;
  auto true_phase = [&](double t) { return 2 * kPi * (f0 * t + 0.5 * beta * t * t) + phi; };
  auto true_minimum = [&](int m) {  // the m-th minimum after t = 0
    const double c = (1.5 * kPi - phi) / (2 * kPi) + m;
    return (-f0 + std::sqrt(f0 * f0 + 2 * beta * c)) / beta;
  };
  Harness h;
  testing::put_conditions(h.store, 0.3, 20);
  const Eigen::VectorXd t = testing::time_base(0, 1000, 5.0);
  std::mt19937 gen(9);
  std::normal_distribution<double> noise(0.0, 0.05);
  Eigen::VectorXd a(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) a[i] = 10 + 8 * std::sin(true_phase(t[i])) + noise(gen);
  h.store.put("signals/time_s", Series{t, "s"});
  h.store.put("signals/alpha_deg", Series{a, "deg"});
  MotionStage stage;
  h.run(stage);
  ASSERT_EQ(h.store.get<Text>("run/motion").value, "sine");
  ASSERT_TRUE(h.store.contains("motion/phase_nodes"));
  const MotionFit m = MotionFit::from_store(h.store, "test");
  ASSERT_GE(m.cycles, 9);
  double worst_start = 0, worst_phase = 0;
  for (std::int64_t c = 0; c <= m.cycles; ++c) {
    worst_start = std::max(worst_start, std::abs(m.cycle_start_s(c) - true_minimum(static_cast<int>(c))));
    const double tc = m.cycle_start_s(c) + 0.3 / f0;  // somewhere inside the cycle
    if (c == m.cycles) break;
    double truth = std::fmod((true_phase(tc) - true_phase(true_minimum(0))) / (2 * kPi), 1.0) * 360;
    double e = std::remainder(m.phase_deg(tc) - truth, 360.0);
    worst_phase = std::max(worst_phase, std::abs(e));
  }
  EXPECT_LT(worst_start, 1e-3);  // s, 0.7 deg of phase at 2 Hz (measured 0.13 ms)
  EXPECT_LT(worst_phase, 1.0);   // deg (measured 0.38)
  // Each cycle's own period shows the drift: later cycles are shorter.
  EXPECT_GT(m.cycle_start_s(1) - m.cycle_start_s(0), m.cycle_start_s(m.cycles) - m.cycle_start_s(m.cycles - 1));
  // The whole record placed at once walks the nodes: the same cycle and phase
  // as sample by sample, also for times that go back or lie off the record.
  std::vector<double> times(t.data(), t.data() + t.size());
  times.insert(times.end(), {3.3, 0.2, -1.0, 40.0, 3.3});
  const std::vector<MotionFit::CyclePhase> placed = m.at(times);
  ASSERT_EQ(placed.size(), times.size());
  for (std::size_t i = 0; i < times.size(); ++i) {
    const MotionFit::CyclePhase one = m.at(times[i]);
    ASSERT_EQ(placed[i].cycle, one.cycle) << "t " << times[i];
    ASSERT_EQ(placed[i].phase_deg, one.phase_deg) << "t " << times[i];
  }

  // One fitted frequency cannot follow it.
  Harness fitted;
  testing::put_conditions(fitted.store, 0.3, 20);
  fitted.store.put("signals/time_s", Series{t, "s"});
  fitted.store.put("signals/alpha_deg", Series{a, "deg"});
  MotionStage one_frequency;
  fitted.run(one_frequency, "phase = \"fitted\"\nmax_residual_fraction = 0.5\n");
  const MotionFit g = MotionFit::from_store(fitted.store, "test");
  double worst_fitted = 0;
  for (std::int64_t c = 0; c <= g.cycles; ++c)
    for (int m2 = 0; m2 < 12; ++m2)
      if (std::abs(g.cycle_start_s(c) - true_minimum(m2)) < 0.25)
        worst_fitted = std::max(worst_fitted, std::abs(g.cycle_start_s(c) - true_minimum(m2)));
  EXPECT_GT(worst_fitted, 5 * worst_start);  // measured 17 ms, 12 deg of phase
}

// Random angles, 4 s at 500 Hz: no motion of any kind.
void put_random_angles(Harness& h, unsigned seed) {
  testing::put_conditions(h.store, 0.3, 20);
  const Eigen::VectorXd t = testing::time_base(0, 500, 4.0);
  std::mt19937 gen(seed);
  std::uniform_real_distribution<double> jump(0, 15);
  Eigen::VectorXd a(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) a[i] = jump(gen);
  h.store.put("signals/time_s", Series{t, "s"});
  h.store.put("signals/alpha_deg", Series{a, "deg"});
}

TEST(MotionStage, SaysWhyAForcedRampDoesNotFitAndNothingIsWritten) {
  Harness h;
  put_random_angles(h, 11);
  MotionStage stage;
  try {
    h.run(stage, "type = \"ramp\"\n");
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    const std::string what = e.what();
    EXPECT_NE(what.find("run.toml:2"), std::string::npos) << what;
    EXPECT_NE(what.find("type = \"ramp\" does not fit the angle"), std::string::npos) << what;
    EXPECT_NE(what.find("no ramp fits"), std::string::npos) << what;  // and why: each attempt's reason
  }
  EXPECT_FALSE(h.store.contains("motion/alpha_deg"));
  EXPECT_FALSE(h.store.contains("run/motion"));
}

TEST(MotionStage, ExplainsAMotionThatIsNoneOfTheKnownKinds) {
  Harness h;
  put_random_angles(h, 5);
  MotionStage stage;
  try {
    h.run(stage);
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    const std::string what = e.what();
    EXPECT_NE(what.find("none of sine, ramp, static angle or staircase"), std::string::npos) << what;
    EXPECT_NE(what.find("[motion] type"), std::string::npos) << what;
  }
}

TEST(MotionStage, NeedsTheAngleSignal) {
  std::vector<std::unique_ptr<Stage>> stages;
  stages.push_back(std::make_unique<MotionStage>());
  try {
    schedule(stages, "run.toml", {"signals/time_s", "run/chord_m", "run/U_inf_m_s"});
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("signals/alpha_deg"), std::string::npos) << e.what();
  }
}

TEST(MotionStage, RejectsOptionsOutOfRange) {
  MotionStage stage;
  EXPECT_THROW(Harness::configure(stage, "type = \"wobble\"\n"), InputError);
  EXPECT_THROW(Harness::configure(stage, "harmonics = 0\n"), InputError);
  EXPECT_THROW(Harness::configure(stage, "max_residual_fraction = 1.5\n"), InputError);
  EXPECT_THROW(Harness::configure(stage, "plateau_settle_s = 2\nplateau_min_duration_s = 1\n"), InputError);
}

}  // namespace
}  // namespace stallscope

namespace stallscope {
namespace {

// A tunnel record: the model rests at the minimum angle for 3 s (wind-off
// zeros, settling), pitches 6 cycles from the minimum, and rests again.
TEST(MotionStage, LeavesTheRestAtBothEndsOutOfThePeriodicFit) {
  Harness h;
  testing::put_conditions(h.store, 0.3, 20);
  const double f = 1.5, a0 = 12, a1 = 6, rest = 3.0, motion = 6 / f;
  const Eigen::VectorXd t = testing::time_base(0, 1000, 2 * rest + motion);
  Eigen::VectorXd a(t.size());
  std::mt19937 gen(2);
  std::normal_distribution<double> noise(0.0, 0.02);
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const double tau = t[i] - rest;
    a[i] = (tau < 0 || tau >= motion ? a0 - a1 : a0 - a1 * std::cos(2 * kPi * f * tau)) + noise(gen);
  }
  h.store.put("signals/time_s", Series{t, "s"});
  h.store.put("signals/alpha_deg", Series{a, "deg"});
  MotionStage stage;
  h.run(stage);
  ASSERT_EQ(h.store.get<Text>("run/motion").value, "sine");
  const MotionFit m = MotionFit::from_store(h.store, "test");
  EXPECT_NEAR(m.freq_hz, f, 1e-4);
  EXPECT_NEAR(m.alpha_amp_deg, a1, 0.01);
  // All six cycles, from the motion's start at the minimum angle.
  EXPECT_EQ(m.cycles, 6);
  EXPECT_NEAR(m.cycle_origin_s, rest, 1e-3);
  const Eigen::VectorXd& phase = h.store.get<Series>("motion/phase_deg").values;
  EXPECT_TRUE(std::isnan(phase[100]));  // at rest
  EXPECT_EQ(h.store.get<Series>("motion/alpha_rate_deg_s").values[100], 0.0);
  EXPECT_NEAR(h.store.get<Series>("motion/alpha_deg").values[100], a0 - a1, 0.01);
}

// A fast run: 6 cycles at 8 Hz take 0.75 s, shorter than the plateau test's
// 1 s, between 1.5 s rests at the same angle. The rests must not be read as
// one plateau with a short disturbance in it.
TEST(MotionStage, FindsAMotionShorterThanAPlateauBetweenTwoRests) {
  Harness h;
  testing::put_conditions(h.store, 0.15, 25);
  const double f = 8.0, a0 = 10, a1 = 8, rest = 1.5, motion = 6 / f;
  const Eigen::VectorXd t = testing::time_base(0, 2000, 2 * rest + motion);
  Eigen::VectorXd a(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const double tau = t[i] - rest;
    a[i] = tau < 0 || tau >= motion ? a0 - a1 : a0 - a1 * std::cos(2 * kPi * f * tau);
  }
  h.store.put("signals/time_s", Series{t, "s"});
  h.store.put("signals/alpha_deg", Series{a, "deg"});
  MotionStage stage;
  h.run(stage);
  ASSERT_EQ(h.store.get<Text>("run/motion").value, "sine");
  const MotionFit m = MotionFit::from_store(h.store, "test");
  EXPECT_NEAR(m.freq_hz, f, 1e-3);
  EXPECT_EQ(m.cycles, 6);
}

TEST(MotionStage, FitsASlowSineWhoseEveryShortWindowLooksSteady) {
  Harness h;
  SineRun r;
  r.freq_hz = 0.2;
  r.amp_deg = 2;
  r.duration_s = 20;
  r.rate_hz = 200;
  r.noise_deg = 0.02;
  testing::put_sine_run(h.store, r);
  MotionStage stage;
  h.run(stage);
  EXPECT_EQ(h.store.get<Text>("run/motion").value, "sine");
  EXPECT_NEAR(h.store.get<Scalar>("run/freq_hz").value, 0.2, 1e-4);
}

}  // namespace
}  // namespace stallscope

namespace stallscope {
namespace {

// Ramp up at 60 deg/s from 4 to 20 deg, hold 0.3 s, ramp down, hold 0.3 s,
// five times, between 1.5 s rests at 4 deg; 2 kHz, encoder noise 0.02 deg.
TEST(MotionStage, MeasuresEveryRampOfAPeriodicRampMotion) {
  Harness h;
  testing::put_conditions(h.store, 0.3, 20);
  const double rate = 60, lo = 4, hi = 20, hold = 0.3, ramp = (hi - lo) / rate, period = 2 * (ramp + hold);
  const double rest = 1.5, cycles = 5;
  const Eigen::VectorXd t = testing::time_base(0, 2000, 2 * rest + cycles * period);
  Eigen::VectorXd a(t.size());
  std::mt19937 gen(4);
  std::normal_distribution<double> noise(0.0, 0.02);
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const double tau = t[i] - rest;
    double v = lo;
    if (tau >= 0 && tau < cycles * period) {
      const double w = std::fmod(tau, period);
      v = w < ramp ? lo + rate * w : w < ramp + hold ? hi : w < 2 * ramp + hold ? hi - rate * (w - ramp - hold) : lo;
    }
    a[i] = v + noise(gen);
  }
  h.store.put("signals/time_s", Series{t, "s"});
  h.store.put("signals/alpha_deg", Series{a, "deg"});
  MotionStage stage;
  h.run(stage);
  ASSERT_EQ(h.store.get<Text>("run/motion").value, "ramp");
  EXPECT_NEAR(h.store.get<Scalar>("run/freq_hz").value, 1 / period, 1e-4);
  EXPECT_NEAR(h.store.get<Scalar>("run/alpha_mean_deg").value, 12.0, 0.01);
  EXPECT_NEAR(h.store.get<Scalar>("run/alpha_amp_deg").value, 8.0, 0.01);
  const Table& ramps = h.store.get<Table>("motion/ramps");
  // The cycles start mid-way along the bottom hold: the first of the five begins
  // with the rest, so 4 or 5 complete cycles are cut, two ramps each.
  ASSERT_GE(ramps.rows(), 8u);
  for (std::size_t j = 0; j < ramps.rows(); ++j) {
    const bool up = ramps.texts("stroke")[j] == "up";
    // Slope of ~500 samples with 0.02 deg noise: standard error ~0.01 deg/s.
    EXPECT_NEAR(ramps.numbers("rate_deg_s")[j], up ? rate : -rate, 0.1) << "ramp " << j;
    EXPECT_NEAR(ramps.numbers("rate_nondim")[j], (up ? rate : -rate) * kPi / 180 * 0.3 / 40, 2e-4);
    // Each up ramp starts at a whole number of periods after the motion began.
    if (up) {
      const double k = std::round((ramps.numbers("t_start_s")[j] - rest) / period);
      EXPECT_NEAR(ramps.numbers("t_start_s")[j], rest + k * period, 2e-3) << "ramp " << j;
    }
  }
  EXPECT_NEAR(h.store.get<Scalar>("motion/ramp_rate_deg_s").value, rate, 0.05);
  // Inside a cycle the rate is the ramp's, not a Fourier series of it.
  const MotionFit m = MotionFit::from_store(h.store, "test");
  const double mid_up = m.cycle_start_s(1) + 0.25 * period;  // the middle of cycle 1's up ramp
  const auto i = static_cast<Eigen::Index>(std::lround(mid_up * 2000));
  EXPECT_NEAR(h.store.get<Series>("motion/alpha_rate_deg_s").values[i], rate, 0.1);
}

}  // namespace
}  // namespace stallscope
