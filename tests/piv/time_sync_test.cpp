// Frame times onto the DAQ clock from camera trigger pulses: offset, drift,
// residual and dropped frames recovered from a synthetic TTL record.
#include "stages/piv/time_sync.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <random>
#include <sstream>

#include "pipeline/errors.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::piv {
namespace {

// A 0/5 V TTL line sampled at `rate`, pulses 1 ms long with 100 us linear edges.
void ttl(const std::vector<double>& pulses, double rate, double duration, Eigen::VectorXd& t, Eigen::VectorXd& v) {
  const auto n = static_cast<Eigen::Index>(duration * rate);
  t.resize(n);
  v.resize(n);
  constexpr double kRise = 100e-6, kWidth = 1e-3;
  std::size_t k = 0;
  for (Eigen::Index i = 0; i < n; ++i) {
    t[i] = static_cast<double>(i) / rate;
    while (k + 1 < pulses.size() && t[i] > pulses[k] + kWidth + kRise) ++k;
    const double s = t[i] - pulses[k];
    double level = 0;
    if (s > -kRise / 2 && s < kRise / 2) level = (s + kRise / 2) / kRise;
    else if (s >= kRise / 2 && s < kWidth) level = 1;
    else if (s >= kWidth && s < kWidth + kRise) level = 1 - (s - kWidth) / kRise;
    v[i] = 5.0 * level;
  }
}

TEST(RisingEdges, AreFoundAtTheMidLevelCrossing) {
  Eigen::VectorXd t, v;
  ttl({0.0105, 0.0205, 0.0305}, 100e3, 0.05, t, v);
  const auto e = rising_edges(t, v);
  ASSERT_EQ(e.size(), 3u);
  // Interpolation inside a 100 us edge sampled every 10 us is exact for a linear edge.
  for (std::size_t k = 0; k < 3; ++k) EXPECT_NEAR(e[k], 0.0105 + 0.01 * static_cast<double>(k), 1e-9);
  EXPECT_TRUE(rising_edges(t, Eigen::VectorXd::Constant(t.size(), 5.0)).empty());
}

TEST(SyncToTrigger, RecoversOffsetDriftAndDroppedFrames) {
  // Camera at 200 Hz on its own clock; the DAQ sees t = 0.0123 + (1 + 50e-6) t_camera.
  constexpr double kOffset = 0.0123, kDrift = 50e-6;
  std::vector<double> camera, pulses;
  for (int n = 0; n < 400; ++n) {
    const double c = 0.002 + n / 200.0;
    pulses.push_back(kOffset + (1 + kDrift) * c);
    if (n != 37 && n != 38 && n != 211) camera.push_back(c);  // the camera dropped three frames
  }
  Eigen::VectorXd t, v;
  ttl(pulses, 50e3, 2.1, t, v);
  const auto edges = rising_edges(t, v);
  ASSERT_EQ(edges.size(), pulses.size());
  const TimeSync s = sync_to_trigger(camera, edges, 0, "test");
  EXPECT_EQ(s.method, "camera trigger");
  EXPECT_EQ(s.matched, camera.size());
  EXPECT_EQ(s.missing_frames, 3u);
  EXPECT_EQ(s.pulse[37], 39);  // frame 37 on the camera is pulse 39
  // Tolerances: the edges are exact to round-off (linear ramps), so the fit is too.
  EXPECT_NEAR(s.offset_s, kOffset, 1e-9);
  EXPECT_NEAR(s.drift, kDrift, 1e-9);
  EXPECT_LT(s.residual_s, 1e-9);
  EXPECT_NEAR(s.daq_time_s.back(), pulses.back(), 1e-9);
}

TEST(SyncToTrigger, GivesTheFitsStandardErrorsAsScipyDoes) {
  // Edges jittered by 20 us rms (the DAQ samples the TTL coarsely).
  std::mt19937 rng(7);
  std::normal_distribution<double> jitter(0.0, 20e-6);
  std::vector<double> camera, edges;
  for (int n = 0; n < 300; ++n) {
    camera.push_back(0.5 + n / 500.0);
    edges.push_back(0.0123 + (1 + 40e-6) * camera.back() + jitter(rng));
  }
  const TimeSync s = sync_to_trigger(camera, edges, 0, "test");
  ASSERT_EQ(s.matched, camera.size());
  testing::ScratchDir dir;
  std::ostringstream xy;
  xy.precision(17);
  for (std::size_t k = 0; k < camera.size(); ++k) xy << camera[k] - camera[0] << " " << edges[k] - edges[0] << "\n";
  dir.write("xy.txt", xy.str());
  // scipy.stats.linregress (Debian python3-scipy): the slope's standard error,
  // and the intercept's moved from x = 0 to the mean x.
  const auto script = dir.write("fit.py",
                                "import sys, numpy as np\nfrom scipy import stats\n"
                                "x, y = np.loadtxt(sys.argv[1], unpack=True)\nr = stats.linregress(x, y)\n"
                                "print(repr(r.stderr), repr(np.sqrt(r.intercept_stderr**2 - (r.stderr * x.mean())**2)))\n");
  const auto py = testing::run_python(script, testing::shell_quote((dir / "xy.txt").string()));
  ASSERT_EQ(py.exit_code, 0) << py.err;
  std::istringstream in(py.out);
  double slope_se = 0, centre_se = 0;
  in >> slope_se >> centre_se;
  EXPECT_NEAR(s.drift_uncertainty, slope_se, 1e-6 * slope_se);
  EXPECT_NEAR(s.offset_uncertainty_s, centre_se, 1e-6 * centre_se);
  // About 20 us / sqrt(300) at the centre.
  EXPECT_NEAR(s.offset_uncertainty_s, 20e-6 / std::sqrt(300.0), 0.2e-6);
  EXPECT_NEAR(s.centre_s, 0.0123 + (1 + 40e-6) * (0.5 + 299 / 1000.0), 5e-6);
}

TEST(SyncToTrigger, StartsAtTheNamedPulseAndRejectsTooFewPulses) {
  std::vector<double> camera = {0.0, 0.01, 0.02, 0.03};
  std::vector<double> edges = {0.5, 0.6, 0.61, 0.62, 0.63};  // pulse 0 is a test shot before recording
  const TimeSync s = sync_to_trigger(camera, edges, 1, "test");
  EXPECT_NEAR(s.offset_s, 0.6, 1e-12);
  EXPECT_EQ(s.pulse[3], 4);
  EXPECT_THROW(sync_to_trigger(camera, {0.5}, 0, "cam.h5"), InputError);
  EXPECT_THROW(sync_to_trigger(camera, edges, 9, "cam.h5"), InputError);
}

TEST(SyncConstantDelay, AddsTheDelay) {
  const TimeSync s = sync_constant_delay({1.0, 2.0}, 0.25);
  EXPECT_EQ(s.method, "constant delay");
  EXPECT_DOUBLE_EQ(s.daq_time_s[1], 2.25);
  EXPECT_EQ(s.pulse[0], -1);
}

}  // namespace
}  // namespace stallscope::piv
