// The zero-phase low-pass filter against scipy.signal.filtfilt(butter(2, ...))
// and against the closed form of its response.
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <random>
#include <sstream>

#include "stages/events/lowpass.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::events {
namespace {

constexpr double kPi = std::numbers::pi;
// Both run the same recursion in double precision over a few thousand samples.
constexpr double kScipyTolerance = 1e-10;

TEST(ZeroPhaseLowpass, MatchesScipyFiltfiltOnANoisySignal) {
  // scipy.signal.butter(2, fc / (fs / 2)) and scipy.signal.filtfilt with its default padding, /usr/bin/python3.
  const double fs = 1000, fc = 37;
  std::mt19937 gen(5);
  std::normal_distribution<double> noise(0, 0.2);
  Eigen::VectorXd x(1500);
  for (Eigen::Index i = 0; i < x.size(); ++i)
    x[i] = 0.3 + std::sin(2 * kPi * 3 * i / fs) + 0.5 * std::sin(2 * kPi * 120 * i / fs) + noise(gen);
  testing::ScratchDir dir;
  std::ostringstream text;
  text.precision(17);
  for (double v : x) text << v << "\n";
  const auto file = dir.write("x.txt", text.str());
  const auto r = testing::run_python(testing::kSourceDir / "tests/events/scipy_reference.py",
                                     "filtfilt " + file.string() + " 37 1000");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  std::istringstream in(r.out);
  const Eigen::VectorXd y = ZeroPhaseLowpass(fc, fs).apply(x);
  Eigen::Index n = 0;
  double v, worst = 0;
  while (in >> v) {
    ASSERT_LT(n, y.size());
    worst = std::max(worst, std::abs(v - y[n]));
    ++n;
  }
  EXPECT_EQ(n, x.size());
  EXPECT_LT(worst, kScipyTolerance);
}

TEST(ZeroPhaseLowpass, ShiftsNoPhaseAndHalvesTheAmplitudeAtTheCutOff) {
  // Forward-backward: response |H|^2, real, so no delay; Butterworth |H(fc)|^2 = 1/2 (bilinear with pre-warping).
  const double fs = 2000, fc = 50;
  const ZeroPhaseLowpass f(fc, fs);
  for (double freq : {5.0, 50.0}) {
    Eigen::VectorXd x(20000);
    for (Eigen::Index i = 0; i < x.size(); ++i) x[i] = std::sin(2 * kPi * freq * i / fs);
    const Eigen::VectorXd y = f.apply(x);
    // Project the middle of the record on sin and cos.
    double s = 0, c = 0;
    const Eigen::Index a = 5000, b = 15000;
    for (Eigen::Index i = a; i < b; ++i) {
      s += y[i] * std::sin(2 * kPi * freq * i / fs);
      c += y[i] * std::cos(2 * kPi * freq * i / fs);
    }
    s *= 2.0 / (b - a);
    c *= 2.0 / (b - a);
    const double gain = std::hypot(s, c), lag = std::atan2(-c, s);
    const double expected = freq == fc ? 0.5 : 1 / (1 + std::pow(std::tan(kPi * freq / fs) / std::tan(kPi * fc / fs), 4));
    EXPECT_NEAR(gain, expected, 1e-6) << freq << " Hz";
    EXPECT_NEAR(lag, 0.0, 1e-6) << freq << " Hz";
  }
}

TEST(ZeroPhaseLowpass, WhiteNoiseGainMatchesFilteredNoise) {
  const double fs = 1000, fc = 40;
  const ZeroPhaseLowpass f(fc, fs);
  std::mt19937 gen(9);
  std::normal_distribution<double> noise(0, 1);
  Eigen::VectorXd x(200000);
  for (double& v : x) v = noise(gen);
  const Eigen::VectorXd y = f.apply(x);
  const double measured = std::sqrt(y.squaredNorm() / static_cast<double>(y.size()));
  // Sampling error of a standard deviation from ~2e5 correlated samples: well under 2 %.
  EXPECT_NEAR(measured / f.white_noise_gain(), 1.0, 0.02);
}

TEST(ZeroPhaseLowpass, RejectsACutOffAtOrAboveNyquistAndTooShortSignals) {
  EXPECT_THROW(ZeroPhaseLowpass(500, 1000), std::invalid_argument);
  EXPECT_THROW(ZeroPhaseLowpass(0, 1000), std::invalid_argument);
  EXPECT_THROW(ZeroPhaseLowpass(10, 1000).apply(Eigen::VectorXd::Zero(9)), std::invalid_argument);
}

}  // namespace
}  // namespace stallscope::events
